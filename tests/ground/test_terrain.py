"""Terrain analysis against planes and fields with known answers, built in other CRSs.

The site files turn the surface prediction off: these tests look at the plane, the slopes, the RDH and the
profile, none of which depends on it (tests/optics/test_surface_prediction.py runs it over planar DEMs).
"""

import math

import numpy as np
import pytest
from dem_helpers import box_around, write_dem
from pyproj import CRS, Geod, Proj, Transformer
from tests_support import NO_SURFACE

from geo.errors import TerrainError
from geo.ground.roughness import roughness_limit_m, roughness_verdicts
from geo.outputs.summary import summary_dict
from geo.radio.arrays import antenna_heights_m
from geo.site.site_file import load_site
from geo.study.findings import check_clearance
from geo.study.site_study import run_study

GEOD = Geod(ellps="WGS84")


def _site(
    site_text,
    dem_name,
    lat=-35.41,
    lon=148.92,
    end=(-35.42, 148.95),
    thr_elev=512.0,
    end_elev=515.0,
    extra="",
):
    text = (
        site_text.replace(
            "lat = -35.41, lon = 148.92, elevation = 512.0",
            f"lat = {lat}, lon = {lon}, elevation = {thr_elev}",
        )
        .replace(
            "lat = -35.42, lon = 148.95, elevation = 515.0",
            f"lat = {end[0]}, lon = {end[1]}, elevation = {end_elev}",
        )
        .replace("base_elevation = 511.2\n", "")
    )
    return text + f'\n[terrain]\ndem = "{dem_name}"\n{extra}' + NO_SURFACE


def _expected_geometry(crs, lat, lon, end, setback, offset, side=1):
    """Independent construction with pyproj.Geod: mast and RPI positions, runway direction in the grid."""
    to = Transformer.from_crs("EPSG:4326", crs, always_xy=True)
    az, _, _ = GEOD.inv(lon, lat, end[1], end[0])
    lon_p, lat_p, back = GEOD.fwd(lon, lat, az, setback)
    lon_m, lat_m, _ = GEOD.fwd(lon_p, lat_p, back + 180.0 + side * 90.0, offset)
    x_t, y_t = to.transform(lon, lat)
    x_e, y_e = to.transform(end[1], end[0])
    d = np.array([x_e - x_t, y_e - y_t])
    d /= np.linalg.norm(d)
    return to.transform(lon_m, lat_m), to.transform(lon_p, lat_p), d


@pytest.mark.parametrize("bx, by", [(0.004, -0.012), (-0.015, 0.0), (0.0, 0.02)])
def test_planar_dem_in_utm_gives_slopes_plane_and_rdh(tmp_path, write_site, site_text, bx, by):
    # A plane z = 510 + bx (x - x0) + by (y - y0) in UTM 55S grid metres (EPSG:32755), 2 m cells.
    # Expected slopes from the plane's gradient along the runway direction in the same grid, times the
    # UTM point scale factor (pyproj Proj.get_factors). Requirement: 0.01 deg, plane within 1 cm.
    crs = "EPSG:32755"
    west, north, n, _ = box_around(crs, -35.41, 148.92, 2500.0, 2.0)
    x0, y0 = Transformer.from_crs("EPSG:4326", crs, always_xy=True).transform(148.92, -35.41)

    def plane(x, y):
        return 510.0 + bx * (x - x0) + by * (y - y0)

    write_dem(tmp_path / "plane.tif", crs, west, north, 2.0, n, n, plane)
    result = run_study(load_site(write_site(_site(site_text, "plane.tif"))))
    t = result.terrain
    (xm, ym), (xr, yr), d = _expected_geometry(crs, -35.41, 148.92, (-35.42, 148.95), 290.0, 130.0)
    # One ground metre is k grid metres (k: UTM point scale factor), so dz per ground metre is
    # the grid gradient times k.
    k = Proj(CRS(crs)).get_factors(148.92, -35.41).meridional_scale
    grad = np.array([bx, by])
    forward = -(grad @ d) * k
    toward_runway = (grad @ np.array([-d[1], d[0]])) * k
    assert t.forward_slope_deg == pytest.approx(math.degrees(math.atan(forward)), abs=0.01)
    assert t.lateral_slope_deg == pytest.approx(math.degrees(math.atan(toward_runway)), abs=0.01)
    assert t.plane.elevation_at_mast_m == pytest.approx(plane(xm, ym), abs=0.01)
    assert t.ground_at_mast_m == pytest.approx(plane(xm, ym), abs=0.01)
    assert t.rpi_elevation_m == pytest.approx(plane(xr, yr), abs=0.01)
    assert t.plane.rms_residual_m < 1e-3
    expected_rdh = plane(xr, yr) + 290.0 * math.tan(math.radians(3.0)) - 512.0
    assert result.rdh_m == pytest.approx(expected_rdh, abs=0.01)
    # Heights settled: they are the slope-corrected formula at the fitted slope, within 1 mm.
    lam = result.wavelength_m
    assert t.heights_m == pytest.approx(antenna_heights_m("null-reference", lam, 3.0, t.forward_slope_deg), abs=1e-3)
    # A plane has an exact fixed point: the solve settles on it, and the summary says so.
    assert t.solve_status == "settled" and t.height_spread_mm <= 0.1
    assert t.zone_heights_m == pytest.approx(t.heights_m, abs=1e-4)
    block = summary_dict(result)["terrain"]["forward_slope_solution"]
    assert block["status"] == "settled" and block["evaluations"] == t.evaluations >= 2
    assert "plane-bracket" not in {f.code for f in result.findings}


def test_planar_dem_in_us_survey_feet(tmp_path, write_site, site_text):
    # SPCS83 California zone 3 in US survey feet (EPSG:2227), heights in US survey feet
    # (1 ftUS = 1200/3937 m, NIST Handbook 44 App. C). Gradient ft/ft is the same number in m/m.
    crs = "EPSG:2227"
    lat, lon, end = 37.70, -122.20, (37.71, -122.17)
    west, north, n, _ = box_around(crs, lat, lon, 8000.0, 6.0)
    x0, y0 = Transformer.from_crs("EPSG:4326", crs, always_xy=True).transform(lon, lat)
    ftus = 1200.0 / 3937.0

    def plane_ft(x, y):
        return 60.0 + 0.01 * (x - x0) + 0.006 * (y - y0)

    write_dem(tmp_path / "ft.tif", crs, west, north, 6.0, n, n, plane_ft, unit="US survey foot")
    text = _site(site_text, "ft.tif", lat=lat, lon=lon, end=end, thr_elev=18.0, end_elev=20.0)
    result = run_study(load_site(write_site(text)))
    t = result.terrain
    (xm, ym), (xr, yr), d = _expected_geometry(crs, lat, lon, end, 290.0, 130.0)
    k = Proj(CRS(crs)).get_factors(lon, lat).meridional_scale
    grad = np.array([0.01, 0.006])
    assert t.forward_slope_deg == pytest.approx(math.degrees(math.atan(-grad @ d * k)), abs=0.01)
    assert t.lateral_slope_deg == pytest.approx(math.degrees(math.atan(grad @ np.array([-d[1], d[0]]) * k)), abs=0.01)
    assert t.plane.elevation_at_mast_m == pytest.approx(plane_ft(xm, ym) * ftus, abs=0.01)
    assert t.rpi_elevation_m == pytest.approx(plane_ft(xr, yr) * ftus, abs=0.01)
    assert result.terrain_source.vertical_unit_source.startswith("raster")


def test_geographic_dem(tmp_path, write_site, site_text):
    # A DEM in WGS 84 degrees (EPSG:4326). Heights rise 0.01 m per metre northward: the gradient per
    # degree of latitude is 0.01 times the metres per degree there (pyproj.Geod).
    cell = 1.0 / 3600.0
    lat0, lon0 = -35.41, 148.92
    m_per_deg_lat = GEOD.inv(lon0, lat0 - 0.005, lon0, lat0 + 0.005)[2] / 0.01

    def heights(lon, lat):
        return 500.0 + 0.01 * (lat - lat0) * m_per_deg_lat

    n = 300
    write_dem(tmp_path / "geo.tif", "EPSG:4326", lon0 - 0.02, lat0 + 0.02, cell, 2 * n, n, heights)
    result = run_study(load_site(write_site(_site(site_text, "geo.tif"))))
    t = result.terrain
    _, _, d = _expected_geometry("EPSG:4326", lat0, lon0, (-35.42, 148.95), 290.0, 130.0)
    az = math.radians(GEOD.inv(lon0, lat0, 148.95, -35.42)[0])
    # Rise toward the approach: the approach points along -azimuth; north component -cos(az).
    assert t.forward_slope_deg == pytest.approx(math.degrees(math.atan(-0.01 * math.cos(az))), abs=0.01)
    # Toward the runway from a right-side mast: azimuth - 90 deg; north component cos(az - 90) = sin(az).
    assert t.lateral_slope_deg == pytest.approx(math.degrees(math.atan(0.01 * math.sin(az))), abs=0.01)


def test_rough_field_of_known_rms(tmp_path, write_site, site_text):
    # Roughness of known RMS: a sum of sinusoids (wavelengths 15-40 m, random directions and phases) on
    # a level plane; the RMS of sum A_i sin(.) over a region many wavelengths wide is sqrt(sum A_i^2 / 2).
    crs = "EPSG:32755"
    rng = np.random.default_rng(42)
    amps = np.array([0.08, 0.06, 0.05, 0.04])
    waves = rng.uniform(15.0, 40.0, 4)
    dirs = rng.uniform(0, np.pi, 4)
    phases = rng.uniform(0, 2 * np.pi, 4)
    expected_rms = math.sqrt(np.sum(amps**2) / 2)
    # 2.4 km square, 1 m cells: the zone lies within 600 m of the mast (290 m past the threshold), and a
    # larger DEM gives the same plane, RMS and samples to the last bit.
    west, north, n, _ = box_around(crs, -35.41, 148.92, 1200.0, 1.0)

    def field(x, y):
        z = np.full(x.shape, 510.0)
        for a, lam, th, ph in zip(amps, waves, dirs, phases):
            z += a * np.sin(2 * np.pi * (x * np.cos(th) + y * np.sin(th)) / lam + ph)
        return z

    write_dem(tmp_path / "rough.tif", crs, west, north, 1.0, n, n, field)
    result = run_study(load_site(write_site(_site(site_text, "rough.tif"))))
    t = result.terrain
    assert t.plane.rms_residual_m == pytest.approx(expected_rms, rel=0.10)
    assert abs(t.forward_slope_deg) < 0.01 and abs(t.lateral_slope_deg) < 0.01
    assert t.plane.samples > 10_000


def test_roughness_limits_follow_their_sources():
    # Ulaby, Moore & Fung (1982) Vol. II sec. 12-2 (memory): Rayleigh s < lambda / (8 cos theta_i),
    # Fraunhofer s < lambda / (32 cos theta_i), cos theta_i = sin(grazing). IEV 705-04-15 (seen):
    # specular when h sin(psi) / lambda < 1/100.
    lam, psi = 0.903, 3.0
    s = math.sin(math.radians(psi))
    assert roughness_limit_m(lam, psi, 8) == pytest.approx(lam / (8 * s))
    assert roughness_limit_m(lam, psi, 32) == pytest.approx(lam / (32 * s))
    iev = {v.criterion: v for v in roughness_verdicts(0.99 * lam / (100 * s), lam, psi)}["iev"]
    assert iev.smooth and 0.99 * lam / (100 * s) * s / lam < 1 / 100
    iev = {v.criterion: v for v in roughness_verdicts(1.01 * lam / (100 * s), lam, psi)}["iev"]
    assert not iev.smooth and iev.margin_m < 0
    assert lam / (8 * s) / (lam / (100 * s)) > 10  # the criteria differ by more than ten times


def _flat(x, y):
    return np.full(x.shape, 511.0)


def test_nodata_hole_in_the_zone_is_an_error_with_its_size_and_place(tmp_path, write_site, site_text):
    crs = "EPSG:32755"
    west, north, n, _ = box_around(crs, -35.41, 148.92, 2500.0, 2.0)
    (xm, ym), _, d = _expected_geometry(crs, -35.41, 148.92, (-35.42, 148.95), 290.0, 130.0)
    hx, hy = xm - 150.0 * d[0], ym - 150.0 * d[1]  # 150 m in front of the mast

    def holed(x, y):
        return np.where(np.hypot(x - hx, y - hy) < 20.0, -9999.0, 511.0)

    write_dem(tmp_path / "holed.tif", crs, west, north, 2.0, n, n, holed)
    with pytest.raises(TerrainError, match=r"samples \(\d+\.\d %\) of the reflection zone.*lat -35\.4"):
        run_study(load_site(write_site(_site(site_text, "holed.tif"))))


def test_site_partly_off_the_dem(tmp_path, write_site, site_text):
    crs = "EPSG:32755"
    (xm, ym), _, d = _expected_geometry(crs, -35.41, 148.92, (-35.42, 148.95), 290.0, 130.0)
    # The raster ends 100 m in front of the mast (toward the approach).
    west, north, n, _ = box_around(crs, -35.41, 148.92, 2500.0, 2.0)
    cut = xm - 100.0 * d[0]
    write_dem(tmp_path / "part.tif", crs, cut, north, 2.0, n, n, _flat)
    with pytest.raises(TerrainError, match="off the DEM or on nodata"):
        run_study(load_site(write_site(_site(site_text, "part.tif"))))


def test_site_outside_the_dem(tmp_path, write_site, site_text):
    write_dem(tmp_path / "far.tif", "EPSG:32755", 200000.0, 6000000.0, 10.0, 50, 50, _flat)
    with pytest.raises(TerrainError, match="the mast at lat"):
        run_study(load_site(write_site(_site(site_text, "far.tif"))))


def test_profile_clearance_and_start(tmp_path, write_site, site_text):
    # Flat DEM 511 m reaching 3 km before the threshold: the profile starts there, the clearance is the
    # straight path (RPI 511 m, rising at 3 deg) minus 511 m, smallest at the threshold.
    crs = "EPSG:32755"
    west, north, n, _ = box_around(crs, -35.41, 148.92, 3000.0, 5.0)
    write_dem(tmp_path / "flat.tif", crs, west, north, 5.0, n, n, _flat)
    result = run_study(load_site(write_site(_site(site_text, "flat.tif", extra="min_clearance = 20\n"))))
    p = result.profile
    assert -3500.0 < p.along_m[0] < -2500.0
    assert np.all(np.diff(p.along_m) <= 5.0 + 1e-9)
    tan = math.tan(math.radians(3.0))
    approach = p.along_m <= 0
    np.testing.assert_allclose(p.clearance_m[approach], (290.0 - p.along_m[approach]) * tan, atol=0.01)
    assert p.min_clearance_m == pytest.approx(290.0 * tan, abs=0.02)
    by_code = {f.code: f for f in result.findings}
    assert by_code["clearance"].severity == "fail"  # 15.2 m < 20 m required


@pytest.mark.parametrize("along_m", [0.3, -0.4, 0.0, -0.0])
def test_clearance_near_the_threshold_never_prints_a_signed_zero(along_m):
    # A point a fraction of a metre from the threshold rounds to 0 m, never "-0 m".
    message = check_clearance(20.0, along_m, 10.0).message
    assert "(0 m (0 ft) before the threshold)" in message and "-0" not in message and "-1" not in message
