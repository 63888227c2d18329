"""The ground beyond the surface prediction's integration area against the reflecting plane."""

import dataclasses
import math
import re

import numpy as np
import pytest
from dem_helpers import box_around, write_dem
from pyproj import Transformer

from geo.site.site_file import load_site
from geo.study.ground_beyond import ground_beyond_area, ground_beyond_finding, ground_beyond_for_study
from geo.study.site_study import run_study

CRS = "EPSG:32755"  # UTM 55S, around the test site of tests_support.BASE_SITE
CELL = 10.0
LAM = 299_792_458.0 / 332.0e6  # glide path 332.00 MHz, paired with localizer 109.30 MHz (Annex 10 Vol I 3.1.6.1)


def _rayleigh_m(grazing_deg):
    # Rayleigh criterion (Beckmann and Spizzichino 1963, ch. 1): lambda / (8 sin psi).
    return LAM / (8.0 * math.sin(math.radians(grazing_deg)))


def test_a_plane_gives_no_departure_and_a_hill_is_found_where_it_stands():
    # Ground given in the prediction's frame: the plane Z = gu u + gw w itself, then with a Gaussian hill of
    # 6 m (sigma 80 m) on the centre line (w = offset) at u = 2,600 m.
    gu, gw, setback, offset = 0.004, -0.002, 300.0, 120.0

    def plane(u, w):
        return gu * u + gw * w

    def hill(u, w):
        return plane(u, w) + 6.0 * np.exp(-((u - 2600.0) ** 2 + (w - offset) ** 2) / (2 * 80.0**2))

    area = (0.0, 1800.0, -60.0, 150.0)
    flat = ground_beyond_area(plane, area, setback, offset, gu, gw, LAM, 2.8, 5.0)
    assert abs(flat.largest_m) < 1e-9 and not flat.beyond_limit and flat.first_beyond_u_m is None
    assert flat.limit_m == pytest.approx(_rayleigh_m(2.8), rel=1e-12)
    assert flat.to_u_m == pytest.approx(setback + 18520.0, abs=5.0)  # 10 NM before the threshold
    assert ground_beyond_finding(flat).severity == "info"
    found = ground_beyond_area(hill, area, setback, offset, gu, gw, LAM, 2.8, 5.0)
    assert found.largest_m == pytest.approx(6.0, abs=0.01)
    assert found.largest_u_m == pytest.approx(2600.0, abs=5.0) and found.largest_w_m == pytest.approx(offset)
    # The hill first exceeds the limit L where 6 exp(-d^2 / 2 sigma^2) = L: d = sigma sqrt(2 ln(6 / L)).
    d = 80.0 * math.sqrt(2.0 * math.log(6.0 / _rayleigh_m(2.8)))
    assert found.first_beyond_u_m == pytest.approx(2600.0 - d, abs=5.0)
    finding = ground_beyond_finding(found)
    assert finding.severity == "warning" and "+6.00 m" in finding.message


def test_ground_beyond_the_area_on_a_dem(tmp_path, write_site, site_text):
    # A tilted planar DEM (1 % rising toward the west-north-west, the approach): the study's reflecting plane
    # is that plane, so the ground beyond the area departs from it by no more than the projection's
    # distortion (the DEM's UTM against the runway's own transverse Mercator: well under 0.1 m here). The
    # same DEM with a 6 m hill on the extended centre line 2,100 m before the threshold: a warning there.
    west, north, n, _ = box_around(CRS, -35.41, 148.92, 2600.0, CELL)
    x0, y0 = Transformer.from_crs("EPSG:4326", CRS, always_xy=True).transform(148.92, -35.41)

    def tilted(x, y):
        return 510.0 - 0.01 * (x - x0) + 0.004 * (y - y0)

    site = site_text.replace("base_elevation = 511.2\n", "") + '\n[terrain]\ndem = "plane.tif"\n'
    write_dem(tmp_path / "plane.tif", CRS, west, north, CELL, n, n, tilted)
    spec = load_site(write_site(site + "\n[prediction]\nsurface = false\n"))
    study = run_study(spec)  # the plane and the mast; the surface prediction itself is not needed here
    mast, t = study.mast, study.terrain
    area = (0.0, mast.setback_m + 1500.0, -60.0, 150.0)  # far edge 1,500 m before the threshold
    flat = ground_beyond_for_study(spec, study.runway, mast.side, mast.setback_m, mast.offset_m, t, area, LAM)
    assert flat.samples > 0 and abs(flat.largest_m) < 0.1
    assert ground_beyond_finding(flat).severity == "info"
    # The DEM, a square of 5.2 km about the threshold, stops short of 10 NM on the approach: the finding says so.
    assert 2600.0 - CELL <= flat.to_u_m - mast.setback_m <= 2600.0 * math.sqrt(2.0)
    assert "stops short of 10 NM" in ground_beyond_finding(flat).message

    lat, lon = study.runway.frame.to_geographic(-2100.0, 0.0)
    xh, yh = Transformer.from_crs("EPSG:4326", CRS, always_xy=True).transform(lon, lat)

    def with_hill(x, y):
        return tilted(x, y) + 6.0 * np.exp(-((x - xh) ** 2 + (y - yh) ** 2) / (2 * 60.0**2))

    path = write_dem(tmp_path / "hill.tif", CRS, west, north, CELL, n, n, with_hill)
    hilly = dataclasses.replace(spec, terrain=dataclasses.replace(spec.terrain, dem_path=path, dem_paths=(path,)))
    found = ground_beyond_for_study(hilly, study.runway, mast.side, mast.setback_m, mast.offset_m, t, area, LAM)
    assert found.largest_m == pytest.approx(6.0, abs=0.3)  # bilinear between 10 m posts
    assert found.largest_u_m - mast.setback_m == pytest.approx(2100.0, abs=CELL)
    assert found.offset_m - found.largest_w_m == pytest.approx(0.0)  # on the centre line
    assert found.limit_m == pytest.approx(_rayleigh_m(t.grazing_deg), rel=1e-9)
    finding = ground_beyond_finding(found, unit="ft")
    assert finding.severity == "warning"
    # Lengths in the site file's unit first: here feet, the metres beside them.
    pattern = r"\(([\d,]+) ft \(([\d,]+) m\) before the threshold, 0 ft \(0 m\) from the centre line"
    where = re.search(pattern, finding.message)
    assert where is not None, finding.message
    assert float(where.group(2).replace(",", "")) == pytest.approx(2100.0, abs=CELL)
