"""How much of the approach the clearance check covered: the DEM's reach before the threshold."""

import numpy as np
import pytest
from dem_helpers import box_around, write_dem
from pyproj import Geod, Transformer
from tests_support import NO_SURFACE

from geo.site.site_file import load_site
from geo.study.findings import check_approach_clearance
from geo.study.site_study import run_study

GEOD = Geod(ellps="WGS84")
TEN_NM_M = 10 * 1852.0  # 1 NM = 1,852 m exactly (SI brochure, non-SI units accepted); Annex 10 coverage 10 NM


def _flat(x, y):
    return np.full_like(x, 511.0)


def _site(site_text, dem_name, extra=""):
    """The test site on a DEM, the surface prediction off (the profile and its clearance do not depend on it)."""
    text = site_text.replace("base_elevation = 511.2\n", "") + f'\n[terrain]\ndem = "{dem_name}"\n{extra}'
    return text + NO_SURFACE


def _reach_m(crs, west, north, n, cell, lat=-35.41, lon=148.92, end=(-35.42, 148.95)):
    """Independent: walk the approach with pyproj.Geod from the threshold, away from the runway end,
    until the point leaves the span of the DEM's cell centres (where bilinear sampling has data)."""
    az, _, _ = GEOD.inv(lon, lat, end[1], end[0])
    to = Transformer.from_crs("EPSG:4326", crs, always_xy=True)
    dist = np.arange(0.0, 20_000.0, 1.0)
    lons, lats, _ = GEOD.fwd(np.full(dist.size, lon), np.full(dist.size, lat), np.full(dist.size, az + 180.0), dist)
    x, y = to.transform(lons, lats)
    inside = (x >= west + cell / 2) & (x <= west + (n - 0.5) * cell) & (y <= north - cell / 2)
    inside &= y >= north - (n - 0.5) * cell
    return float(dist[np.argmin(inside)]) if not inside.all() else float(dist[-1])


@pytest.mark.parametrize("required, severity", [(10.0, "warning"), (20.0, "fail")])
def test_a_dem_that_stops_short_gives_a_warning_and_says_how_far_it_reached(
    tmp_path, write_site, site_text, required, severity
):
    crs = "EPSG:32755"
    west, north, n, _ = box_around(crs, -35.41, 148.92, 3000.0, 5.0)
    write_dem(tmp_path / "flat.tif", crs, west, north, 5.0, n, n, _flat)
    result = run_study(load_site(write_site(_site(site_text, "flat.tif", f"min_clearance = {required:g}\n"))))
    covered = result.profile.approach_covered_m
    # The profile samples every 5 m: the last sample with data lies within one step (plus half a
    # cell for the bilinear edge) of where the Geod walk leaves the DEM.
    assert covered == pytest.approx(_reach_m(crs, west, north, n, 5.0), abs=8.0)
    assert covered == pytest.approx(-result.profile.along_m[0])
    found = {f.code: f for f in result.findings}["clearance"]
    # The straight path clears flat ground by 290 m x tan 3 deg = 15.2 m at least (at the threshold).
    assert found.severity == severity
    assert f"Checked over {covered:,.0f} m" in found.message and "of the 18,520 m" in found.message
    assert "unchecked" in found.message


def test_a_dem_reaching_10_nm_checks_the_whole_approach(tmp_path, write_site, site_text):
    crs = "EPSG:32755"
    west, north, n, _ = box_around(crs, -35.41, 148.92, 19_500.0, 50.0)
    write_dem(tmp_path / "wide.tif", crs, west, north, 50.0, n, n, _flat)
    result = run_study(load_site(write_site(_site(site_text, "wide.tif"))))
    assert result.profile.approach_covered_m == pytest.approx(TEN_NM_M, abs=1e-6)
    found = {f.code: f for f in result.findings}["clearance"]
    assert found.severity == "pass" and "whole 18,520 m" in found.message


def test_coverage_rule_on_plain_numbers():
    # Clearance 15 m against 10 m required (passes) over half the approach: a warning, not a pass.
    assert check_approach_clearance(15.0, -100.0, 10.0, TEN_NM_M / 2).severity == "warning"
    assert check_approach_clearance(15.0, -100.0, 10.0, TEN_NM_M).severity == "pass"
    assert check_approach_clearance(5.0, -100.0, 10.0, TEN_NM_M).severity == "fail"
    assert check_approach_clearance(5.0, -100.0, 10.0, 530.0).severity == "fail"
    assert "Checked over 530 m (1,739 ft) of the 18,520 m" in check_approach_clearance(15.0, 0.0, 10.0, 530.0).message
