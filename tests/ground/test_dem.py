"""DEM sampling: bilinear exactness, windows, units, real terrain against scipy."""

import numpy as np
import pytest
import rasterio
from dem_helpers import write_dem
from matplotlib import cbook
from scipy.interpolate import RegularGridInterpolator
from tests_support import DEMO_SITE, NO_SURFACE, without_surface

from geo.airfield.frame import RunwayFrame
from geo.errors import SiteFileError, TerrainError
from geo.ground.dem import Dem, bilinear
from geo.site.site_file import load_site
from geo.study.site_study import run_study


def test_bilinear_is_exact_on_a_plane():
    # A bilinear interpolant reproduces any plane exactly (Numerical Recipes 3rd ed., sec. 3.6).
    rows, cols = np.mgrid[0:40, 0:60].astype(float)
    grid = 3.0 + 0.25 * rows - 0.7 * cols
    rng = np.random.default_rng(1)
    gi, gj = rng.uniform(0, 39, 1000), rng.uniform(0, 59, 1000)
    np.testing.assert_allclose(bilinear(grid, gi, gj), 3.0 + 0.25 * gi - 0.7 * gj, atol=1e-12)


def test_real_terrain_matches_scipy_regular_grid_interpolator(tmp_path):
    # Open dataset shipped by a registry package: matplotlib's sample DEM jacksboro_fault_dem.npz
    # (USGS-derived, 3 arc-second cells, WGS 84 geographic). Reference: scipy's
    # RegularGridInterpolator (linear) on the cell centres of the same grid.
    data = cbook.get_sample_data("jacksboro_fault_dem.npz")
    z = data["elevation"].astype(float)
    rows, cols = z.shape
    west, north, cell = float(data["xmin"]), float(data["ymin"]), float(data["dx"])
    path = tmp_path / "jacksboro.tif"
    with rasterio.open(
        path,
        "w",
        driver="GTiff",
        width=cols,
        height=rows,
        count=1,
        dtype="float64",
        crs="EPSG:4326",
        transform=rasterio.transform.from_origin(west, north, cell, cell),
        blockxsize=128,
        blockysize=128,
        tiled=True,
    ) as dst:
        dst.write(z, 1)
    lon_c = west + (np.arange(cols) + 0.5) * cell
    lat_c = north - (np.arange(rows) + 0.5) * cell
    ref = RegularGridInterpolator((lat_c[::-1], lon_c), z[::-1, :], method="linear")
    rng = np.random.default_rng(7)
    lat = rng.uniform(lat_c[-1], lat_c[0], 5000)
    lon = rng.uniform(lon_c[0], lon_c[-1], 5000)
    with Dem.open(path) as dem:
        got = dem.sample_native(lon, lat)
    np.testing.assert_allclose(got, ref(np.column_stack([lat, lon])), atol=1e-6)


def test_runway_frame_points_reach_the_dem_crs(tmp_path):
    # A plane in UTM 55S grid coordinates, sampled through the runway frame: the value at each point
    # is the plane at the point's UTM coordinates (pyproj, EPSG:4326 -> EPSG:32755).
    from pyproj import Transformer

    frame = RunwayFrame(-35.41, 148.92, -35.42, 148.95)
    to_utm = Transformer.from_crs("EPSG:4326", "EPSG:32755", always_xy=True)
    x0, y0 = to_utm.transform(148.92, -35.41)
    west, north = np.floor(x0 - 2000), np.ceil(y0 + 2000)

    def plane(x, y):
        return 500.0 + 0.01 * (x - x0) - 0.02 * (y - y0)

    path = write_dem(tmp_path / "utm.tif", "EPSG:32755", west, north, 2.0, 2000, 2000, plane)
    along = np.linspace(-500, 1500, 50)
    cross = np.linspace(-300, 300, 50)
    lat, lon = frame.to_geographic(along, cross)
    x, y = to_utm.transform(lon, lat)
    with Dem.open(path) as dem:
        got = dem.sample_frame(frame, along, cross)
    np.testing.assert_allclose(got, plane(np.asarray(x), np.asarray(y)), atol=1e-6)


def test_outside_and_nodata_give_nan(tmp_path):
    path = write_dem(
        tmp_path / "hole.tif",
        "EPSG:32755",
        600000.0,
        6100000.0,
        10.0,
        50,
        50,
        lambda x, y: np.where((np.abs(x - 600250) < 30) & (np.abs(y - 6099750) < 30), -9999.0, 100.0),
    )
    with Dem.open(path) as dem:
        got = dem.sample_native(np.array([600250.0, 600100.0, 590000.0]), np.array([6099750.0, 6099900.0, 0.0]))
    assert np.isnan(got[0]) and got[1] == pytest.approx(100.0) and np.isnan(got[2])


@pytest.mark.parametrize("unit, scale", [("metre", 1.0), ("foot", 0.3048), ("US survey foot", 1200 / 3937)])
def test_vertical_unit_from_the_raster(tmp_path, unit, scale):
    # 1 ft = 0.3048 m (1959 agreement); US survey foot = 1200/3937 m (NIST Handbook 44, App. C).
    path = write_dem(
        tmp_path / "u.tif",
        "EPSG:32755",
        600000.0,
        6100000.0,
        10.0,
        20,
        20,
        lambda x, y: np.full(x.shape, 1000.0),
        unit=unit,
    )
    with Dem.open(path, vertical_offset_m=0.5) as dem:
        assert dem.sample_native(np.array([600100.0]), np.array([6099900.0]))[0] == pytest.approx(
            1000.0 * scale + 0.5, abs=1e-9
        )


def test_unreadable_or_unreferenced_rasters(tmp_path):
    bad = tmp_path / "bad.tif"
    bad.write_text("not a raster")
    with pytest.raises(TerrainError, match="cannot read"):
        Dem.open(bad)
    plain = tmp_path / "plain.tif"
    with rasterio.open(plain, "w", driver="GTiff", width=4, height=4, count=1, dtype="float32") as dst:
        dst.write(np.zeros((4, 4), dtype="float32"), 1)
    with pytest.raises(TerrainError, match="no coordinate reference system"):
        Dem.open(plain)


# ---- Cells in the zone, coarse DEMs, errors that name the site file and the DEM's extent ---------

DEMO_DEM = DEMO_SITE.parent / "dem.tif"
_FIXED_SETBACK = ("offset = 120\n", "offset = 120\nsetback = 300\n")


def _demo_copy(folder, dem_name="dem.tif", replacements=()):
    text = DEMO_SITE.read_text(encoding="utf-8").replace('dem = "dem.tif"', f'dem = "{dem_name}"')
    for old, new in replacements:
        assert old in text
        text = text.replace(old, new)
    path = folder / "site.toml"
    path.write_text(text + NO_SURFACE, encoding="utf-8")  # the checks here do not read the surface prediction
    return path


def test_cells_in_the_zone_match_an_independent_count():
    # Independent count: every cell centre of the demo DEM near the mast, taken to WGS 84 with pyproj and
    # into the runway frame by its geodesic-free plane (RunwayFrame.to_plane), tested with shapely.
    import shapely
    from pyproj import Transformer

    result = run_study(without_surface(load_site(DEMO_SITE)))
    m, zone = result.mast, result.terrain.zone.polygon
    with rasterio.open(DEMO_DEM) as ds:
        z = ds.read(1, masked=True)
        rows, cols = np.nonzero(~np.ma.getmaskarray(z))
        x, y = rasterio.transform.xy(ds.transform, rows, cols, offset="center")
        lon, lat = Transformer.from_crs(ds.crs.to_wkt(), "EPSG:4326", always_xy=True).transform(x, y)
    along, cross = result.runway.frame.to_plane(np.asarray(lat), np.asarray(lon))
    sign = 1.0 if m.side == "right" else -1.0
    expected = int(shapely.contains_xy(zone, m.setback_m - along, m.offset_m - sign * cross).sum())
    assert result.terrain_source.cells_in_zone == expected
    assert expected > 30 and "dem-resolution" not in {f.code for f in result.findings}


def test_a_coarse_dem_gets_the_resolution_warning(tmp_path):
    # The demo DEM averaged over 6 x 6 cells: 30 m cells, wider than a third of the zone's half-width
    # (thresholds of issue 10; common practice, no source).
    with rasterio.open(DEMO_DEM) as src:
        z = src.read(1).astype(np.float64)
        profile = src.profile
    rows, cols = (z.shape[0] // 6) * 6, (z.shape[1] // 6) * 6
    coarse = z[:rows, :cols].reshape(rows // 6, 6, cols // 6, 6).mean(axis=(1, 3))
    t = profile["transform"]
    profile.update(
        width=coarse.shape[1], height=coarse.shape[0], transform=rasterio.Affine(t.a * 6, 0, t.c, 0, t.e * 6, t.f)
    )
    with rasterio.open(tmp_path / "coarse.tif", "w", **profile) as dst:
        dst.write(coarse.astype(profile["dtype"]), 1)
    result = run_study(load_site(_demo_copy(tmp_path, "coarse.tif", [_FIXED_SETBACK])))
    warning = {f.code: f for f in result.findings}["dem-resolution"]
    assert warning.severity == "warning" and "lidar DEM" in warning.message and "5 m" in warning.message
    assert result.terrain.cell_size_m == pytest.approx(30.0, abs=0.1)
    cells = result.terrain_source.cells_in_zone
    # Independent bound: the zone's area over the cell area (30 m x 30 m), within the cells the edge cuts.
    area_cells = result.terrain.zone.area_m2 / 900.0
    assert abs(cells - area_cells) < 0.5 * result.terrain.zone.polygon.length / 30.0 + 2


def test_errors_found_by_the_study_name_the_site_file(write_site, site_text, tmp_path):
    # Mast on the runway (surveyed position on the centre line) and setback past the end.
    on_runway = site_text.replace(
        'side = "right"\noffset = 130\nsetback = 290\n', "position = { lat = -35.4105, lon = 148.9215 }\n"
    )
    path = write_site(on_runway, "on_runway.toml")
    with pytest.raises(SiteFileError, match="on the runway") as info:
        run_study(load_site(path))
    assert str(info.value).startswith(f"{path}: mast.position: ")
    path = write_site(site_text.replace("setback = 290", "setback = 4000"), "past_end.toml")
    with pytest.raises(SiteFileError, match="outside the") as info:
        run_study(load_site(path))
    assert str(info.value).startswith(f"{path}: mast.setback: ")


def test_mast_off_the_dem_names_the_file_the_extent_and_the_crs(tmp_path):
    # A window of the demo DEM that holds the threshold but stops 60 m north of the centre line.
    result = run_study(without_surface(load_site(DEMO_SITE)))
    with rasterio.open(DEMO_DEM) as src:
        row, _ = src.index(*_to_crs(src, result.runway.frame.to_geographic(0.0, 60.0)))
        window = rasterio.windows.Window(0, row, src.width, src.height - row)
        profile = src.profile | {"height": window.height, "transform": src.window_transform(window)}
        with rasterio.open(tmp_path / "south.tif", "w", **profile) as dst:
            dst.write(src.read(1, window=window), 1)
    site = _demo_copy(tmp_path, "south.tif", [_FIXED_SETBACK])
    with pytest.raises(TerrainError) as info:
        run_study(load_site(site))
    text = str(info.value)
    assert text.startswith(f"{site}: terrain.dem: the mast at lat ")
    assert "the DEM covers south.tif x 327500.0 to " in text and "(EPSG:32614)" in text


def _to_crs(ds, lat_lon):
    from pyproj import Transformer

    lat, lon = lat_lon
    return Transformer.from_crs("EPSG:4326", ds.crs.to_wkt(), always_xy=True).transform(lon, lat)


def test_the_profile_carries_the_terrain_band_across_the_centre_line(tmp_path):
    # demo_airfield/make_dem.py: the demo ground is 612.0 - 0.002 along - 0.003 cross (m), plus 3 cm
    # of noise per post; 2 km before the threshold its ditch, rise and hill add nothing (their
    # Gaussians are below 1e-4 m there). So across the band of +-60 m (BAND_HALF_WIDTH_M, Annex 14's
    # inner approach half width, from memory) the ground spans 0.003 * 120 = 0.36 m, the centre line
    # inside it, and profile.csv writes both edges in metres and feet.
    import csv

    from tests_support import demo_site_without_surface

    from geo.ground.profile import BAND_HALF_WIDTH_M
    from geo.outputs.profile_csv import write_profile_csv
    from geo.site.site_file import load_site
    from geo.study.site_study import run_study

    prof = run_study(load_site(demo_site_without_surface(tmp_path))).profile
    near = np.abs(prof.along_m + 2000.0) < 100.0
    span = prof.terrain_high_m[near] - prof.terrain_low_m[near]
    assert np.median(span) == pytest.approx(0.003 * 2 * BAND_HALF_WIDTH_M, abs=0.08)
    ok = np.isfinite(prof.terrain_m)
    assert np.all(prof.terrain_low_m[ok] <= prof.terrain_m[ok] + 1e-9)
    assert np.all(prof.terrain_m[ok] <= prof.terrain_high_m[ok] + 1e-9)
    write_profile_csv(prof, tmp_path / "profile.csv")
    with (tmp_path / "profile.csv").open() as fh:
        rows = list(csv.DictReader(fh))
    assert {"terrain_lowest_across_m", "terrain_lowest_across_ft", "terrain_highest_across_m"} <= set(rows[0])
    row = next(r for r in rows if r["terrain_lowest_across_m"])
    assert float(row["terrain_lowest_across_ft"]) == pytest.approx(
        float(row["terrain_lowest_across_m"]) / 0.3048, abs=2e-3
    )
