"""DEM tiles that disagree: overlap disagreement, seam steps, a tile in the wrong unit.

Independent construction: synthetic tiles written from known surfaces (tests/dem_helpers.py) with a
known disagreement built in. Check values:

- a plane is interpolated exactly by bilinear interpolation (Numerical Recipes 3rd ed., sec. 3.6), so
  two tiles of one plane, one raised by 5 m, disagree by exactly 5 m in their overlap;
- a quadratic surface cut into two tiles on one grid: both one-sided linear extrapolations to the
  seam err by 3/8 h^2 f'' (Taylor), which cancels, so the step is 0 (rounding); raising the second
  tile by 2 m makes it exactly 2 m;
- 1 ft = 0.3048 m exactly (NIST Handbook 44, App. C): a tile in feet written without a unit reads
  1 / 0.3048 = 3.2808 times its neighbours;
- the demo DEM (demo_airfield/make_dem.py) cut into tiles: the 5.0 m disagreement is the one added.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import numpy as np
import pytest
import rasterio
from dem_helpers import write_dem
from rasterio.windows import Window
from tests_support import DEMO_SITE, NO_SURFACE

from geo.errors import SiteFileError
from geo.ground.dem import Dem
from geo.ground.tile_agreement import measure_tiles
from geo.site.site_file import load_site
from geo.study.dem_causes import HeightKeys
from geo.study.site_study import run_study
from geo.study.tile_checks import TILE_TOLERANCE_M, check_tile_units

CRS = "EPSG:32614"
CELL = 10.0
M_PER_FT = 0.3048  # NIST Handbook 44, App. C


def _plane(x, y):
    return 600.0 + 0.01 * (x - 500_000.0) - 0.02 * (y - 5_000_000.0)


def _quadratic(x, y):
    return 600.0 + 1e-4 * (x - 500_300.0) ** 2 + 5e-5 * (y - 4_999_800.0) ** 2


def _two_tiles(tmp_path, heights, overlap_cols: int, raise_second_m: float = 0.0, second_scale: float = 1.0):
    """Two 30 x 40 cell tiles on one 10 m grid, side by side (east-west), sharing ``overlap_cols`` columns."""
    west, north = 500_000.0, 5_000_000.0
    a = write_dem(tmp_path / "a.tif", CRS, west, north, CELL, 30, 40, heights)
    b_west = west + (30 - overlap_cols) * CELL
    b = write_dem(
        tmp_path / "b.tif",
        CRS,
        b_west,
        north,
        CELL,
        30,
        40,
        lambda x, y: (heights(x, y) + raise_second_m) * second_scale,
    )
    return [a, b]


def test_overlap_of_a_plane_raised_by_5_m_disagrees_by_5_m(tmp_path):
    paths = _two_tiles(tmp_path, _plane, overlap_cols=6, raise_second_m=5.0)
    with Dem.open(paths) as dem:
        got = measure_tiles(dem.mosaic)
    assert got.overlap is not None
    assert abs(got.overlap.difference_m) == pytest.approx(5.0, abs=1e-9)  # the 5 m built in
    # 6 shared columns of 40 rows: each tile's cell centres in the other's cell-centre hull, both ways:
    # a's last 6 columns lie in b's hull from b's first centre on (6 x 40), b's first 6 likewise.
    assert got.overlap.points == 2 * 6 * 40
    assert {got.overlap.tile, got.overlap.other} == {"a.tif", "b.tif"}
    assert abs(got.seam.difference_m) == pytest.approx(5.0, abs=1e-9)  # the edge of each inside the other


def test_tiles_of_one_plane_agree(tmp_path):
    paths = _two_tiles(tmp_path, _plane, overlap_cols=6)
    with Dem.open(paths) as dem:
        got = measure_tiles(dem.mosaic)
    assert abs(got.overlap.difference_m) < 1e-9  # bilinear is exact on a plane
    assert abs(got.seam.difference_m) < 1e-9


@pytest.mark.parametrize("raise_m", [0.0, 2.0])
def test_seam_step_on_a_curved_surface_is_the_jump_built_in(tmp_path, raise_m):
    paths = _two_tiles(tmp_path, _quadratic, overlap_cols=0, raise_second_m=raise_m)
    with Dem.open(paths) as dem:
        got = measure_tiles(dem.mosaic)
    assert got.overlap is None  # they only touch
    assert abs(got.seam.difference_m) == pytest.approx(raise_m, abs=1e-6)  # 3/8 h^2 f'' cancels
    assert got.seam.points == 2 * 40  # one boundary point per edge row, from each side
    # Each side alone is off by 3/8 h^2 f'' at the seam (f'' = 2e-4 /m across it: 7.5 mm), so the step's
    # zero is the cancellation, not a flat surface.
    with Dem.open(paths[:1]) as west:
        x, y = 500_300.0, 5_000_000.0 - 205.0  # on a's east boundary, at a cell row
        one_side = float(west.mosaic.tiles[0].sample([x], [y], reach_cells=0.5)[0])
    assert _quadratic(x, y) - one_side == pytest.approx(3.0 / 8.0 * CELL**2 * 2e-4, abs=1e-9)  # f - p, convex


def test_a_tile_in_feet_among_metres_is_named_with_the_key_and_the_fix(tmp_path):
    west, north = 500_000.0, 5_000_000.0
    paths = [
        write_dem(tmp_path / f"t{k}.tif", CRS, west + 30 * CELL * k, north, CELL, 30, 40, _plane) for k in range(3)
    ]
    write_dem(paths[1], CRS, west + 300.0, north, CELL, 30, 40, lambda x, y: _plane(x, y) / M_PER_FT)
    with Dem.open(paths) as dem:
        with pytest.raises(SiteFileError) as err:
            check_tile_units(dem, 600.0, HeightKeys())
    text = str(err.value)
    assert "terrain.vertical_unit" in text and "t1.tif looks in feet read as metres" in text
    assert "3.281 times" in text  # 1 / 0.3048 = 3.2808
    assert 'band unit to "ft"' in text and "\n" not in text


def test_a_tile_in_metres_read_as_feet_is_named(tmp_path):
    paths = _two_tiles(tmp_path, _plane, overlap_cols=0)
    with Dem.open(paths, vertical_unit="ft") as dem_all_ft:  # both read as feet: they agree, the survey
        check_tile_units(dem_all_ft, 600.0)  # check of the whole DEM is the threshold's (dem_causes)
    write_dem(paths[1], CRS, 500_300.0, 5_000_000.0, CELL, 30, 40, _plane, unit="ft")
    with Dem.open(paths) as dem:
        with pytest.raises(SiteFileError, match=r"b\.tif looks in metres read as feet .*raster \(ft\)"):
            check_tile_units(dem, 600.0)


def test_tiles_that_agree_pass_the_unit_check(tmp_path):
    paths = _two_tiles(tmp_path, _plane, overlap_cols=3, raise_second_m=0.3)
    with Dem.open(paths) as dem:
        check_tile_units(dem, 600.0)  # no error: 0.3 m is no unit slip


# --- the demo DEM cut into tiles, through the study and the command line ---


def _cut_demo(folder: Path, col: int, overlap: int, raise_m: float = 0.0, scale: float = 1.0) -> list[Path]:
    """The demo DEM cut at column ``col`` into a west and an east tile sharing ``overlap`` columns each way;
    the west tile (away from the threshold) raised by ``raise_m``, the east one multiplied by ``scale``."""
    src = DEMO_SITE.parent / "dem.tif"
    paths = []
    with rasterio.open(src) as ds:
        for name, c0, c1, extra, factor in (
            ("west.tif", 0, col + overlap, raise_m, 1.0),
            ("east.tif", col - overlap, ds.width, 0.0, scale),
        ):
            window = Window(c0, 0, c1 - c0, ds.height)
            profile = ds.profile | {"width": window.width, "height": window.height, "dtype": "float64"}
            profile["transform"] = ds.window_transform(window)
            with rasterio.open(folder / name, "w", **profile) as dst:
                dst.write((ds.read(1, window=window).astype(np.float64) + extra) * factor, 1)
            paths.append(folder / name)
    return paths


def _site(folder: Path, names: list[str]) -> Path:
    text = DEMO_SITE.read_text(encoding="utf-8")
    value = "[" + ", ".join(f'"{n}"' for n in names) + "]"
    text = re.sub(r'^dem = "dem.tif".*$', f"dem = {value}", text, flags=re.M) + NO_SURFACE
    path = folder / "site.toml"
    path.write_text(text, encoding="utf-8")
    return path


def _zone_col(result) -> int:
    """The demo DEM's column under the mast (so that the overlap lies under the study)."""
    from pyproj import Transformer

    m = result.mast
    with rasterio.open(DEMO_SITE.parent / "dem.tif") as ds:
        x, _ = Transformer.from_crs("EPSG:4326", ds.crs.to_wkt(), always_xy=True).transform(m.lon_deg, m.lat_deg)
        return int(ds.index(x, ds.bounds.top - 1.0)[1])


@pytest.fixture(scope="module")
def demo_col():
    from tests_support import without_surface

    return _zone_col(run_study(without_surface(load_site(DEMO_SITE))))


def test_demo_tiles_5_m_apart_warn_and_report_where(tmp_path, demo_col):
    _cut_demo(tmp_path, demo_col, overlap=40, raise_m=5.0)
    result = run_study(load_site(_site(tmp_path, ["west.tif", "east.tif"])))
    codes = [f.code for f in result.findings]
    assert "dem-tile-overlap" in codes and "dem-tile-seam" in codes
    d = result.terrain_source.tile_agreement.overlap
    assert abs(d.difference_m) == pytest.approx(5.0, abs=1e-4)  # the 5.0 m added (float64 tiles)
    assert abs(d.difference_m) > TILE_TOLERANCE_M
    message = next(f.message for f in result.findings if f.code == "dem-tile-overlap")
    assert "5.00 m" in message and "west.tif" in message and "east.tif" in message
    print("demo overlap:", d, "\nseam:", result.terrain_source.tile_agreement.seam)

    from geo.outputs.summary import summary_dict

    tiles = json.loads(json.dumps(summary_dict(result)))["terrain"]["tiles"]
    assert abs(tiles["largest_overlap_disagreement"]["difference_m"]) == pytest.approx(5.0, abs=1e-4)
    assert abs(tiles["largest_overlap_disagreement"]["difference_ft"]) == pytest.approx(5.0 / M_PER_FT, abs=1e-3)
    assert set(tiles["largest_seam_step"]["tiles"]) == {"west.tif", "east.tif"}


def test_demo_tiles_that_agree_give_no_tile_warning(tmp_path, demo_col):
    _cut_demo(tmp_path, demo_col, overlap=40)
    result = run_study(load_site(_site(tmp_path, ["west.tif", "east.tif"])))
    assert not [f for f in result.findings if f.code.startswith("dem-tile")]
    agreement = result.terrain_source.tile_agreement
    assert abs(agreement.overlap.difference_m) < 1e-9  # the same cells in both tiles
    print("demo seam step, tiles cut from one file:", agreement.seam.difference_m)
    assert abs(agreement.seam.difference_m) < TILE_TOLERANCE_M


def test_demo_tile_in_feet_stops_on_the_command_line_naming_it(tmp_path, demo_col):
    from click.testing import CliRunner

    from cli.main import main

    _cut_demo(tmp_path, demo_col, overlap=0, scale=1.0 / M_PER_FT)
    out = tmp_path / "out"
    run = CliRunner().invoke(main, ["run", str(_site(tmp_path, ["west.tif", "east.tif"])), "--out", str(out)])
    assert run.exit_code == 2 and "Traceback" not in run.output and not out.exists()
    lines = [line for line in run.output.splitlines() if line.strip()]
    assert len(lines) == 1 and "terrain.vertical_unit" in lines[0] and "east.tif" in lines[0], lines
    assert "ground falls" not in lines[0]
    print(lines[0])


def test_a_feet_tile_with_the_unit_key_set_says_the_key_sets_every_tile(tmp_path):
    paths = _two_tiles(tmp_path, _plane, overlap_cols=0, second_scale=1.0 / M_PER_FT)
    with Dem.open(paths, vertical_unit="m") as dem:
        with pytest.raises(SiteFileError) as err:
            check_tile_units(dem, 600.0)
    text = str(err.value)
    assert "b.tif looks in feet read as metres" in text and "unit now: site file" in text
    assert "terrain.vertical_unit sets the unit of every tile: leave it out" in text


def test_demo_tile_in_feet_stops_the_sweeps_solve_too(tmp_path, demo_col):
    from geo.study.dem_checks import check_dem_before_solve
    from geo.study.site_study import runway_of

    _cut_demo(tmp_path, demo_col, overlap=0, scale=1.0 / M_PER_FT)
    spec = load_site(_site(tmp_path, ["west.tif", "east.tif"]))
    with pytest.raises(SiteFileError, match=r"terrain\.vertical_unit: .*east\.tif looks in feet"):
        check_dem_before_solve(spec, runway_of(spec).frame)
