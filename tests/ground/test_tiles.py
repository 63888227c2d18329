"""DEM tiles: a study on a DEM cut into tiles equals the study on the one file.

Independent construction: the tiles are windows of one raster, so the single file is the
reference; interpolation across a seam must give the single file's heights (Numerical Recipes
3rd ed., sec. 3.6: bilinear interpolation uses the four surrounding cell centres, wherever they
are stored). Tolerance 1 mm, as issue 10 asks. The studies skip the surface prediction: the results
compared (RDH, slopes, heights, RMS, clearance) do not depend on it.
"""

from __future__ import annotations

import math
import re
from pathlib import Path

import numpy as np
import pytest
import rasterio
from dem_helpers import write_dem
from pyproj import Transformer
from rasterio.windows import Window
from tests_support import DEMO_SITE, NO_SURFACE, without_surface

from geo.errors import SiteFileError, TerrainError
from geo.ground.dem import Dem
from geo.site.site_file import load_site
from geo.study.site_study import run_study

DEMO_DEM = DEMO_SITE.parent / "dem.tif"
_MM = 1e-3


def _cut(src: Path, folder: Path, row_cuts=(), col_cuts=(), skip_col: int | None = None) -> list[Path]:
    """Windows of ``src`` between the given cut rows and columns, each written as its own GeoTIFF.

    ``skip_col`` leaves that column out of every tile (a gap between tiles).
    """
    paths = []
    with rasterio.open(src) as ds:
        rows = [0, *row_cuts, ds.height]
        cols = [0, *col_cuts, ds.width]
        for i in range(len(rows) - 1):
            for j in range(len(cols) - 1):
                c0, c1 = cols[j], cols[j + 1]
                if skip_col is not None and c0 == skip_col:
                    c0 += 1
                window = Window(c0, rows[i], c1 - c0, rows[i + 1] - rows[i])
                profile = ds.profile | {
                    "width": window.width,
                    "height": window.height,
                    "transform": ds.window_transform(window),
                }
                path = folder / f"tile_{i}_{j}.tif"
                with rasterio.open(path, "w", **profile) as dst:
                    dst.write(ds.read(1, window=window), 1)
                    dst.set_band_unit(1, ds.units[0] or "")
                paths.append(path)
    return paths


def _site_with_dem(folder: Path, dem_value: str, extra: str = "") -> Path:
    """The demo site file, in ``folder``, with ``terrain.dem`` replaced (paths relative to it)."""
    text = DEMO_SITE.read_text(encoding="utf-8")
    text = re.sub(r'^dem = "dem.tif".*$', f"dem = {dem_value}", text, flags=re.M)
    text = text.replace("[terrain]\n", "[terrain]\n" + extra) + NO_SURFACE
    path = folder / "site.toml"
    path.write_text(text, encoding="utf-8")
    return path


def _zone_centre_cell(result, src: Path) -> tuple[int, int]:
    """Row and column of the demo DEM under the middle of the plane's zone (so that seams cross it)."""
    t, m = result.terrain, result.mast
    u, w = t.zone.polygon.centroid.x, t.zone.polygon.centroid.y
    sign = 1.0 if m.side == "right" else -1.0
    lat, lon = result.runway.frame.to_geographic(m.setback_m - u, sign * (m.offset_m - w))
    with rasterio.open(src) as ds:
        x, y = Transformer.from_crs("EPSG:4326", ds.crs.to_wkt(), always_xy=True).transform(lon, lat)
        row, col = ds.index(x, y)
    return int(row), int(col)


def _differences(a, b) -> dict:
    """Largest differences of the results issue 10 names: RDH, slopes, heights. [m] and [deg]"""
    ta, tb = a.terrain, b.terrain
    heights = max(abs(x.height_m - y.height_m) for x, y in zip(a.antennas, b.antennas))
    return {
        "rdh_m": abs(a.rdh_m - b.rdh_m),
        "rpi_m": abs(ta.rpi_elevation_m - tb.rpi_elevation_m),
        "ground_at_mast_m": abs(ta.ground_at_mast_m - tb.ground_at_mast_m),
        "heights_m": heights,
        "setback_m": abs(a.mast.setback_m - b.mast.setback_m),
        "forward_slope_deg": abs(ta.forward_slope_deg - tb.forward_slope_deg),
        "lateral_slope_deg": abs(ta.lateral_slope_deg - tb.lateral_slope_deg),
        "rms_m": abs(ta.plane.rms_residual_m - tb.plane.rms_residual_m),
        "min_clearance_m": abs(a.profile.min_clearance_m - b.profile.min_clearance_m),
    }


def _assert_same(a, b) -> dict:
    diff = _differences(a, b)
    for key, value in diff.items():
        limit = _MM if key.endswith("_m") else 1e-4  # slopes: 1e-4 deg is 0.2 mm over the 100 m zone
        assert value < limit, (key, value)
    assert a.terrain.plane.samples == b.terrain.plane.samples
    return diff


@pytest.fixture(scope="module")
def single():
    return run_study(without_surface(load_site(DEMO_SITE)))


@pytest.mark.parametrize("layout", ["two-across", "two-along", "four"])
def test_tiles_cut_through_the_zone_give_the_single_file_results(tmp_path, single, layout):
    row, col = _zone_centre_cell(single, DEMO_DEM)
    cuts = {"two-across": ((), (col,)), "two-along": ((row,), ()), "four": ((row,), (col,))}[layout]
    tiles = _cut(DEMO_DEM, tmp_path, *cuts)
    names = "[" + ", ".join(f'"{p.name}"' for p in reversed(tiles)) + "]"  # any order
    tiled = run_study(load_site(_site_with_dem(tmp_path, names)))
    diff = _assert_same(single, tiled)
    print(f"seam ({layout}): largest differences {diff}")
    assert tiled.terrain_source.dem_name.count(".tif") == len(tiles)


def test_seam_points_sample_like_the_single_file(tmp_path):
    # Points on a fine lattice straddling a four-corner seam: each one needs cells of up to four tiles.
    with rasterio.open(DEMO_DEM) as ds:
        row, col = ds.height // 2, ds.width // 2
    _assert_corner_lattice_samples_alike(DEMO_DEM, tmp_path, row, col)


def _assert_corner_lattice_samples_alike(path, tmp_path, row, col):
    """A lattice of 81 x 81 points within two cells of the corner of cell (row, col), where the file is
    cut in four: the tiles sample it as the single file does (bilinear, to 1e-9 m)."""
    with rasterio.open(path) as ds:
        x0, y0 = ds.xy(row, col, offset="ul")
        cell = ds.res[0]
    tiles = _cut(path, tmp_path, (row,), (col,))
    g = np.linspace(-2.0 * cell, 2.0 * cell, 81)
    x, y = (a.ravel() for a in np.meshgrid(x0 + g, y0 + g))
    with Dem.open(path) as one, Dem.open(tiles) as four:
        reference, got = one.sample_native(x, y), four.sample_native(x, y)
    assert np.isfinite(reference).all()
    np.testing.assert_allclose(got, reference, rtol=0, atol=1e-9)


def test_a_vrt_of_the_tiles_gives_the_single_file_results(tmp_path, single):
    row, col = _zone_centre_cell(single, DEMO_DEM)
    tiles = _cut(DEMO_DEM, tmp_path, (), (col,))
    vrt = _write_vrt(tmp_path / "mosaic.vrt", DEMO_DEM, tiles)
    tiled = run_study(load_site(_site_with_dem(tmp_path, f'"{vrt.name}"')))
    diff = _assert_same(single, tiled)
    print(f"seam (VRT of two tiles): largest differences {diff}")


def test_a_gap_between_tiles_in_the_zone_is_the_nodata_error(tmp_path, single):
    row, col = _zone_centre_cell(single, DEMO_DEM)
    tiles = _cut(DEMO_DEM, tmp_path, (), (col,), skip_col=col)
    names = "[" + ", ".join(f'"{p.name}"' for p in tiles) + "]"
    with pytest.raises(TerrainError, match="off the DEM or on nodata"):
        run_study(load_site(_site_with_dem(tmp_path, names)))


def test_tiles_in_different_crs_give_the_single_file_results(tmp_path, single):
    # Two tiles of one invented smooth surface, the western one in geographic WGS 84 and the eastern one
    # in UTM 14N, against one UTM file of the same surface. The surface is a function of WGS 84
    # position, so each file holds the same ground; different grids differ by the bilinear error only
    # (smooth ground, 5 m cells: well below 1 mm; Numerical Recipes sec. 3.6).
    row, col = _zone_centre_cell(single, DEMO_DEM)
    lat0, lon0 = 46.35, -101.2
    geod_m = 111_320.0  # metres per degree of latitude, near enough for an invented surface

    def ground(lon, lat):
        e = (lon - lon0) * geod_m * math.cos(math.radians(lat0))
        n = (lat - lat0) * geod_m
        return 610.0 - 0.004 * e + 0.006 * n + 0.3 * np.sin(e / 170.0) * np.cos(n / 230.0)

    to_ll = Transformer.from_crs("EPSG:32614", "EPSG:4326", always_xy=True)

    def utm_heights(x, y):
        return ground(*to_ll.transform(x, y))

    with rasterio.open(DEMO_DEM) as ds:
        west, north, cell = ds.bounds.left, ds.bounds.top, ds.res[0]
        cols, rows = ds.width, ds.height
        x_cut = west + col * cell
    write_dem(tmp_path / "one.tif", "EPSG:32614", west, north, cell, cols, rows, utm_heights)
    # East tile: UTM, from the cut to the eastern edge.
    write_dem(tmp_path / "east.tif", "EPSG:32614", x_cut, north, cell, cols - col, rows, utm_heights)
    # West tile: geographic, about 4 m cells, reaching a little past the cut (tiles may overlap).
    # Its box in degrees holds the UTM box west of the cut plus two cells (UTM grid north is not true north).
    lons, lats = to_ll.transform(
        np.array([west, west, x_cut + 2 * cell, x_cut + 2 * cell]), np.array([north, north - rows * cell] * 2)
    )
    lon_w, lon_e, lat_s, lat_n = lons.min(), lons.max(), lats.min(), lats.max()
    d_lat = 4.0 / geod_m
    d_lon = d_lat / math.cos(math.radians(lat0))
    n_cols = int(math.ceil((lon_e - lon_w) / d_lon))
    n_rows = int(math.ceil((lat_n - lat_s) / d_lat))
    gx, gy = np.meshgrid(lon_w + (np.arange(n_cols) + 0.5) * d_lon, lat_n - (np.arange(n_rows) + 0.5) * d_lat)
    profile = {
        "driver": "GTiff",
        "width": n_cols,
        "height": n_rows,
        "count": 1,
        "dtype": "float64",
        "crs": "EPSG:4326",
        "transform": rasterio.transform.from_origin(lon_w, lat_n, d_lon, d_lat),
        "nodata": -9999.0,
    }
    with rasterio.open(tmp_path / "west.tif", "w", **profile) as dst:
        dst.write(ground(gx, gy), 1)
    one = run_study(load_site(_site_with_dem(tmp_path, '"one.tif"')))
    both = run_study(load_site(_site_with_dem(tmp_path, '["east.tif", "west.tif"]')))
    diff = _assert_same(one, both)
    print(f"seam (geographic + UTM tiles): largest differences {diff}")


def _write_vrt(path: Path, like: Path, tiles: list[Path]) -> Path:
    """A GDAL VRT mosaic of the tiles (GDAL's VRT format, "SimpleSource" elements)."""
    with rasterio.open(like) as ref:
        t = ref.transform
        head = (
            f'<VRTDataset rasterXSize="{ref.width}" rasterYSize="{ref.height}">\n'
            f"  <SRS>{ref.crs.to_wkt()}</SRS>\n"
            f"  <GeoTransform>{t.c!r}, {t.a!r}, {t.b!r}, {t.f!r}, {t.d!r}, {t.e!r}</GeoTransform>\n"
            f'  <VRTRasterBand dataType="Float32" band="1">\n'
            f"    <NoDataValue>{ref.nodata!r}</NoDataValue>\n"
        )
    sources = []
    for tile in tiles:
        with rasterio.open(tile) as ds:
            col = round((ds.transform.c - t.c) / t.a)
            row = round((ds.transform.f - t.f) / t.e)
            sources.append(
                f'    <SimpleSource><SourceFilename relativeToVRT="1">{tile.name}</SourceFilename>'
                f"<SourceBand>1</SourceBand>"
                f'<SrcRect xOff="0" yOff="0" xSize="{ds.width}" ySize="{ds.height}"/>'
                f'<DstRect xOff="{col}" yOff="{row}" xSize="{ds.width}" ySize="{ds.height}"/></SimpleSource>\n'
            )
    path.write_text(head + "".join(sources) + "  </VRTRasterBand>\n</VRTDataset>\n", encoding="utf-8")
    return path


# ---- Real terrain ---------------------------------------------------------------------------------


@pytest.fixture(scope="module")
def real_dem(tmp_path_factory):
    """matplotlib's sample DEM jacksboro_fault_dem.npz (USGS-derived, 3 arc-second cells, WGS 84 geographic),
    its relief scaled by 0.02 about its mean to airfield-like ground. The file's ymin and ymax are swapped
    (../shared/REFERENCE.md): the sheet's top is the larger, ``ymin`` = 36.733."""
    from matplotlib import cbook

    data = cbook.get_sample_data("jacksboro_fault_dem.npz")
    z = data["elevation"].astype(float)
    north = max(float(data["ymin"]), float(data["ymax"]))
    west, cell = float(data["xmin"]), float(data["dx"])
    path = tmp_path_factory.mktemp("real") / "real.tif"
    profile = {
        "driver": "GTiff",
        "width": z.shape[1],
        "height": z.shape[0],
        "count": 1,
        "dtype": "float64",
        "crs": "EPSG:4326",
        "transform": rasterio.transform.from_origin(west, north, cell, cell),
        "nodata": -9999.0,
    }
    with rasterio.open(path, "w", **profile) as dst:
        dst.write(300.0 + 0.02 * (z - z.mean()), 1)
    return path


@pytest.mark.parametrize("row, col", [(150, 200), (200, 57), (33, 33), (301, 203)])
def test_real_geographic_tiles_sample_like_the_single_file_at_a_four_corner_seam(tmp_path, real_dem, row, col):
    # Geographic cell sizes (1/1200 deg) are not exact binary fractions: a neighbour's cell centre comes back
    # through another tile's geotransform a rounding error away, and must still count as that cell centre.
    _assert_corner_lattice_samples_alike(real_dem, tmp_path, row, col)


def test_real_terrain_studies_on_four_tiles_equal_the_single_file(tmp_path, real_dem):
    # Fictional runways at random places and headings on the real DEM; each DEM cut in four through the
    # middle of the plane's zone. Cells of about 75 x 93 m: the zone holds few, which the study says.
    from pyproj import Geod

    geod = Geod(ellps="WGS84")
    rng = np.random.default_rng(3)
    largest = {}
    compared = 0
    with rasterio.open(real_dem) as ds:
        heights = ds.read(1)
        index = ds.index
    for trial in range(8):
        lat0, lon0 = rng.uniform(36.5, 36.68), rng.uniform(-84.35, -84.15)
        lon1, lat1, _ = geod.fwd(lon0, lat0, rng.uniform(0.0, 360.0), 2500.0)
        thr, end = heights[index(lon0, lat0)], heights[index(lon1, lat1)]
        text = (
            f'units = "m"\n[site]\nname = "Real-ground strip {trial} (fictional)"\n[runway]\n'
            f"threshold = {{ lat = {lat0!r}, lon = {lon0!r}, elevation = {thr:.2f} }}\n"
            f"end = {{ lat = {lat1!r}, lon = {lon1!r}, elevation = {end:.2f} }}\nwidth = 45\n"
            '[glide_path]\nangle_deg = 3.0\nlocalizer_mhz = 110.30\narray = "null-reference"\n'
            '[mast]\nside = "right"\noffset = 120\nsetback = 300\n[terrain]\ndem = DEM\n' + NO_SURFACE
        )
        folder = tmp_path / f"site{trial}"
        folder.mkdir()
        (folder / "one.toml").write_text(text.replace("DEM", f'"{real_dem}"'), encoding="utf-8")
        one = run_study(load_site(folder / "one.toml"))
        row, col = _zone_centre_cell(one, real_dem)
        tiles = _cut(real_dem, folder, (row,), (col,))
        (folder / "four.toml").write_text(
            text.replace("DEM", "[" + ", ".join(f'"{p.name}"' for p in tiles) + "]"), encoding="utf-8"
        )
        four = run_study(load_site(folder / "four.toml"))
        diff = _assert_same(one, four)
        largest = {k: max(v, largest.get(k, 0.0)) for k, v in diff.items()}
        compared += 1
    print(f"seam (real terrain, {compared} sites, four tiles): largest differences {largest}")
    assert compared == 8


def test_the_sweep_on_tiles_equals_the_sweep_on_the_single_file(tmp_path, single):
    # The sweep opens the DEM through the same call as the study (Dem.open of the [terrain] table).
    from geo.study.sweep import SweepOptions, run_sweep

    row, col = _zone_centre_cell(single, DEMO_DEM)
    tiles = _cut(DEMO_DEM, tmp_path, (row,), (col,))
    names = "[" + ", ".join(f'"{p.name}"' for p in tiles) + "]"
    options = SweepOptions((250.0, 310.0, 370.0), (100.0, 150.0))
    one = run_sweep(load_site(DEMO_SITE), options)
    four = run_sweep(load_site(_site_with_dem(tmp_path, names)), options)
    assert one.columns.keys() == four.columns.keys() and len(one) == len(four) == 12
    for key, a in one.columns.items():
        b = four.columns[key]
        if a.dtype.kind == "f":
            np.testing.assert_allclose(b, a, rtol=0, atol=_MM, equal_nan=True, err_msg=key)
        else:
            assert (a == b).all(), key


@pytest.mark.parametrize(
    "value, field, words",
    [
        ("[]", "terrain.dem", "empty list"),
        ('["tile_0_0.tif", 3]', "terrain.dem tile 2", "file path in quotes"),
        ('["tile_0_0.tif", "missing.tif"]', "terrain.dem tile 2", "no file at"),
        ('["tile_0_0.tif", "tile_0_0.tif"]', "terrain.dem tile 2", "listed twice"),
    ],
)
def test_bad_tile_lists_name_the_entry(tmp_path, value, field, words):
    _cut(DEMO_DEM, tmp_path, (), (900,))
    with pytest.raises(SiteFileError, match=words) as info:
        load_site(_site_with_dem(tmp_path, value))
    assert info.value.field == field


def test_tile_paths_resolve_against_the_site_file_folder(tmp_path):
    sub = tmp_path / "tiles"
    sub.mkdir()
    tiles = _cut(DEMO_DEM, sub, (), (900,))
    spec = load_site(_site_with_dem(tmp_path, '["tiles/tile_0_0.tif", "tiles/tile_0_1.tif"]'))
    assert spec.terrain.dem_paths == tuple(tiles) and spec.terrain.dem_path == tiles[0]
