"""What the map shows at first: the opening view, the folded layer control, the legend's symbols."""

import json
import os
import re
import shutil

import pytest
from tests_support import DEMO_SITE

from geo.outputs.write import write_study
from geo.site.site_file import load_site
from geo.study.site_study import run_study

#: The opening view may be at most this many times the box of the runway, mast and zones, in the
#: direction that sets the zoom: Leaflet zooms in whole steps (each halves the span), plus 30 px of
#: padding on each side of a 900 px high view.
VIEW_FACTOR = 2.5


@pytest.fixture(scope="module")
def demo_map(tmp_path_factory):
    result = run_study(load_site(DEMO_SITE))
    out = write_study(result, tmp_path_factory.mktemp("demo") / "out", plots=False)
    return result, out


def _chromium():
    path = shutil.which("chromium") or shutil.which("chromium-browser")
    if path is None:
        if os.environ.get("CI"):
            pytest.fail("CI must run the browser test: .ci/run installs Debian's chromium")
        pytest.skip("headless Chromium is not installed (apt-get install chromium); CI installs it")
    return path


def _coords(geometry):
    """Every position of a GeoJSON geometry."""

    def walk(c):
        if isinstance(c[0], (int, float)):
            yield c
        else:
            for inner in c:
                yield from walk(inner)

    return list(walk(geometry["coordinates"]))


def _box(points):
    lons, lats = [p[0] for p in points], [p[1] for p in points]
    return min(lons), min(lats), max(lons), max(lats)


def _in_browser(out, script):
    from playwright.sync_api import sync_playwright

    page_text = (out / "map.html").read_text(encoding="utf-8")
    name = re.search(r"var (map_[0-9a-f]+) = L\.map\(", page_text).group(1)
    with sync_playwright() as pw:
        browser = pw.chromium.launch(executable_path=_chromium(), args=["--no-sandbox", "--disable-gpu"])
        page = browser.new_context(offline=True, viewport={"width": 1400, "height": 900}).new_page()
        page.goto((out / "map.html").as_uri())
        page.wait_for_selector(".leaflet-control-layers")
        page.wait_for_function(f"() => !{name}._animatingZoom && {name}._loaded")
        value = page.evaluate(script.replace("MAP", name))
        browser.close()
    return value


def test_the_opening_view_holds_the_runway_mast_and_zones_and_little_more(demo_map):
    result, out = demo_map
    layers = {p.stem: json.loads(p.read_text()) for p in (out / "layers").glob("*.geojson")}
    # The box from the written layers (not the writer's own function): runway, path zones, mast.
    points = [c for f in layers["runway"]["features"] for c in _coords(f["geometry"])]
    points += [
        c
        for f in layers["reflection_zones"]["features"]
        if f["properties"]["kind"] == "path"
        for c in _coords(f["geometry"])
    ]
    points += [c for f in layers.get("protected_areas", {"features": []})["features"] for c in _coords(f["geometry"])]
    points.append((result.mast.lon_deg, result.mast.lat_deg))
    west, south, east, north = _box(points)
    view = _in_browser(
        out, "() => { const b = MAP.getBounds(); return [b.getWest(), b.getSouth(), b.getEast(), b.getNorth()]; }"
    )
    assert view[0] <= west and view[1] <= south and view[2] >= east and view[3] >= north
    coverage = [
        c
        for f in layers["reflection_zones"]["features"]
        if f["properties"]["kind"] == "coverage"
        for c in _coords(f["geometry"])
    ]
    cw, cs, ce, cn = _box(coverage)
    assert not (view[0] <= cw and view[2] >= ce and view[1] <= cs and view[3] >= cn)  # not the whole coverage
    ratio = min((view[2] - view[0]) / (east - west), (view[3] - view[1]) / (north - south))
    assert ratio <= VIEW_FACTOR


def test_the_layer_control_opens_folded(demo_map):
    _, out = demo_map
    page = (out / "map.html").read_text(encoding="utf-8")
    assert re.search(r"L\.control\.layers\([^;]*\"collapsed\": true", page, re.S)
    expanded = _in_browser(
        out,
        "() => document.querySelector('.leaflet-control-layers').classList.contains('leaflet-control-layers-expanded')",
    )
    assert expanded is False


def _legend_swatches(page: str) -> dict[str, str]:
    items = re.findall(
        r"<div class='mastplan-legend-item'>(.*?)<span class='mastplan-legend-name'>([^<]+)</span>", page
    )
    return {name: swatch for swatch, name in items}


def test_layers_drawn_as_lines_have_lines_in_the_legend(demo_map):
    from geo.outputs.webmap import CENTRELINE_LAYER, EXTENDED_LAYER

    _, out = demo_map
    page = (out / "map.html").read_text(encoding="utf-8")
    swatches = _legend_swatches(page)
    layer_of = {CENTRELINE_LAYER: "centreline", EXTENDED_LAYER: "extended_centreline", "Runway": "runway"}
    for name, stem in layer_of.items():
        fc = json.loads((out / "layers" / f"{stem}.geojson").read_text())
        kinds = {f["geometry"]["type"] for f in fc["features"]}
        if kinds <= {"LineString", "MultiLineString"}:
            assert "<line " in swatches[name] and "<rect width='12'" not in swatches[name], name
            # the legend's stroke is the colour the map draws the layer in
            stroke = re.search(r"<line [^>]*stroke='(#[0-9a-f]{6})'", swatches[name]).group(1)
            assert f'"color": "{stroke}"' in page
        else:
            assert "<line " not in swatches[name], name


def test_the_mast_and_the_gpip_have_different_markers(demo_map):
    _, out = demo_map
    shapes = _in_browser(
        out,
        "() => [document.querySelector('path.mastplan-mast').getAttribute('d'),"
        " document.querySelector('path.mastplan-gpip').getAttribute('d'),"
        " !!document.querySelector('.leaflet-marker-pane path.mastplan-mast')]",
    )
    mast, gpip, mast_in_marker_pane = shapes
    assert mast_in_marker_pane
    assert "a" in gpip.lower() and "a" not in mast.lower()  # the GPIP a circle (arcs), the mast a triangle
    swatches = _legend_swatches((out / "map.html").read_text(encoding="utf-8"))
    assert "<path d=" in swatches["Mast and antennas"] and "<circle" not in swatches["Mast and antennas"]
    assert "<circle" in swatches["Threshold and GPIP"]


@pytest.mark.parametrize("score", [0.0, 12.5, 33.0, 50.0, 71.0, 99.0, 100.0])
def test_the_sweep_score_colours_are_viridis(score):
    # Independent method: matplotlib's own viridis colour map.
    import matplotlib

    from geo.outputs.webmap import _score_colour

    expected = matplotlib.colormaps["viridis"](score / 100.0)[:3]
    got = _score_colour(score)
    rgb = [int(got[k : k + 2], 16) / 255 for k in (1, 3, 5)]
    assert max(abs(a - b) for a, b in zip(rgb, expected)) <= 3 / 255
    assert _score_colour(None) == "#adb5bd"
