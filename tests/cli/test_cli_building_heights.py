"""``mastplan building-heights``: its outputs, the screening of the file's buildings, one-line errors."""

import csv
import json

import numpy as np
import pytest
from click.testing import CliRunner

from cli.main import main
from geo.units import M_PER_FT

#: A planned hangar 500 m ahead of the test site's mast and 300 m out from it (invented test values):
#: the mast stands 290 m past the threshold on the right (tests_support.BASE_SITE).
BUILDING = """
[[building]]
name = "Planned hangar"
footprint = [{{ lat = {a[0]}, lon = {a[1]} }}, {{ lat = {b[0]}, lon = {b[1]} }}, {{ lat = {c[0]}, lon = {c[1]} }},
             {{ lat = {d[0]}, lon = {d[1]} }}]
height = 12
"""


def _run(*args):
    return CliRunner().invoke(main, [str(a) for a in args])


@pytest.fixture
def site_with_building(write_site, site_text):
    import tomllib

    from geo.site.site_file import parse_site
    from geo.study.site_study import runway_of

    spec = parse_site(tomllib.loads(site_text))
    frame = runway_of(spec).frame
    corners = [(290 - 500 + du, 130 + 300 + dw) for du, dw in ((-40, -30), (40, -30), (40, 30), (-40, 30))]
    points = [tuple(round(float(v), 7) for v in frame.to_geographic(a, c)) for a, c in corners]
    return write_site(site_text + BUILDING.format(a=points[0], b=points[1], c=points[2], d=points[3]))


def test_outputs_and_screening(tmp_path, site_with_building):
    out = tmp_path / "heights"
    res = _run("building-heights", site_with_building, "--out", out, "--step", 500, "--extent", 500,
               "--orientation", "along")  # fmt: skip
    assert res.exit_code == 0, res.output
    names = {p.name for p in out.iterdir()}
    assert {"allowed_height_above_ground.tif", "allowed_height_above_datum.tif", "height_contours.gpkg",
            "height_contours.kml", "map.html", "allowed_heights.png", "summary.json", "cells.csv",
            "layers"} <= names  # fmt: skip
    summary = json.loads((out / "summary.json").read_text())
    assert summary["term"] == "building restricted area" and "flight inspection" in summary["caution"]
    assert summary["grid"]["cells"] == 4 and summary["orientations"][0]["orientation"] == "along"
    (screened,) = summary["screening"]
    assert screened["name"] == "Planned hangar" and isinstance(screened["pass"], bool)
    # 1 ft = 0.3048 m exactly (International Yard and Pound Agreement, 1959): the foot twins.
    assert screened["height_ft"] == pytest.approx(12 / M_PER_FT, abs=1e-3)
    assert "Planned hangar" in res.output and "screening aid" in res.output
    rows = list(csv.DictReader((out / "cells.csv").open()))
    assert len(rows) == 4 and all(r["orientation"] == "along" for r in rows)
    import rasterio

    with (
        rasterio.open(out / "allowed_height_above_ground.tif") as ground,
        rasterio.open(out / "allowed_height_above_datum.tif") as datum,
    ):
        assert ground.count == 2 and ground.tags()["UNITS"] == "metre" and "FEET_PER_UNIT" in ground.tags()
        # On flat ground the datum heights are the ground heights plus the site's elevation (BASE_SITE: the
        # plane at the mast's 511.2 m base).
        diff = datum.read(1) - ground.read(1)
        assert np.allclose(diff[np.isfinite(diff)], 511.2, atol=0.01)
        # Each cell of cells.csv, placed by its WGS 84 position through pyproj into the raster's CRS, falls
        # on the pixel holding its allowed height (the rotated grid's transform is right).
        from pyproj import Transformer

        to_raster = Transformer.from_crs("EPSG:4326", ground.crs.to_wkt(), always_xy=True)
        heights = ground.read(1)
        for r in rows:
            row, col = ground.index(*to_raster.transform(float(r["lon"]), float(r["lat"])))
            assert heights[row, col] == pytest.approx(float(r["allowed_height_m"]), abs=0.06)


def test_bad_options_are_one_line_errors(tmp_path, write_site, site_text):
    site = write_site(site_text)
    for args, words in ((("--share", 0), "--share"), (("--step", 0.1), "--step"), (("--extent", 50), "--extent")):
        res = _run("building-heights", site, "--out", tmp_path / "x", *args)
        assert res.exit_code == 2 and words in res.output and len(res.output.strip().splitlines()) == 1, res.output


def test_help_says_it_maps_allowed_building_heights():
    shown = " ".join(_run("building-heights", "--help").output.split())
    assert "Map allowed building heights" in shown and "building restricted area" in shown
