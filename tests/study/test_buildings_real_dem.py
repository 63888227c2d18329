"""Two buildings beside a runway on real ground (matplotlib's sample DEM, tests/jacksboro.py): a run reports them."""

import json
import math

import pytest
from click.testing import CliRunner
from jacksboro import jacksboro_sheet, site_text

from cli.main import main

#: The smooth sheet of tests/optics/test_surface_real_dem.py (relief scale, column, threshold latitude).
SMOOTH = (0.05, 280, 36.55)
#: A metal hangar 400 m ahead of the mast and 250 m out from it, and a concrete L-shaped terminal beyond
#: (invented test values; the runway runs south, the mast 300 m past the threshold, 120 m to the west).
BUILDINGS = """
[[building]]
name = "Hangar"
centre = {{ lat = {hangar[0]:.7f}, lon = {hangar[1]:.7f} }}
length = 80
width = 60
heading_deg = 0
height = 20

[[building]]
name = "Terminal"
footprint = [{terminal}]
height = 12
cladding = "concrete"
"""


def _offset(lat, lon, north_m, east_m):
    # Spherical Earth, R = 6,371 km: ample for placing test buildings (the optics uses the geodesics).
    r = 6_371_000.0
    return lat + math.degrees(north_m / r), lon + math.degrees(east_m / (r * math.cos(math.radians(lat))))


@pytest.fixture(scope="module")
def run_with_buildings(tmp_path_factory):
    folder = tmp_path_factory.mktemp("jacksboro_buildings")
    sheet = jacksboro_sheet()
    scale, col, lat = SMOOTH
    original, _, lon = sheet.meridian_pair(folder, scale, col, 60)
    threshold, end = sheet.runway(sheet.scaled(scale), lat, lon, 180.0)
    mast_lat = _offset(threshold[0], threshold[1], -300.0, 0.0)[0]
    hangar = _offset(mast_lat, threshold[1], 400.0, -120.0 - 250.0)
    corners = [(700, -500), (700, -420), (760, -420), (760, -460), (800, -460), (800, -500)]
    terminal = ", ".join(
        "{{ lat = {:.7f}, lon = {:.7f} }}".format(*_offset(mast_lat, threshold[1], n, e)) for n, e in corners
    )
    extra = BUILDINGS.format(hangar=hangar, terminal=terminal)
    path = folder / "site.toml"
    path.write_text(site_text(original, "Jacksboro meridian runway with buildings", threshold, end, extra=extra))
    out = folder / "out"
    res = CliRunner().invoke(main, ["run", str(path), "--out", str(out), "--outputs", "summary,layers", "-q"])
    return res, out


def test_a_run_with_two_buildings_completes_and_reports(run_with_buildings):
    # Issue 22: on real ground a run with two buildings completes and reports both (summary, findings, layer).
    res, out = run_with_buildings
    assert res.exit_code == 0, res.output
    summary = json.loads((out / "summary.json").read_text())
    found = summary["prediction"]["surface"]["buildings"]
    assert found["over"] == "DEM surface"
    assert [e["name"] for e in found["each"]] == ["Hangar", "Terminal"]
    for e in found["each"]:
        assert math.isfinite(e["path_angle_shift_deg"]) and e["segments"]
        assert e["largest_share_of_limit"] == "infinity" or e["largest_share_of_limit"] >= 0.0
    assert found["each"][1]["constants_source"].startswith("ITU-R P.2040")
    codes = [f["code"] for f in summary["findings"]]
    assert codes.count("building-bends") == 2
    layer = json.loads((out / "layers" / "buildings.geojson").read_text())
    assert [f["properties"]["name"] for f in layer["features"]] == ["Hangar", "Terminal"]
    assert len(layer["features"][1]["geometry"]["coordinates"][0]) == 7  # six corners, closed
