"""The offline web map in a real browser (headless Chromium via Playwright), and KML / GeoPackage."""

import json
import os
import shutil
import xml.etree.ElementTree as ET

import pyogrio
import pytest
from tests_support import DEMO_SITE

from geo.outputs.write import write_study
from geo.site import load_site
from geo.study import run_study

HOSTILE = "<script>alert('x')</script> & \"Runway\""


@pytest.fixture(scope="module")
def demo_out(tmp_path_factory):
    result = run_study(load_site(DEMO_SITE))
    return result, write_study(result, tmp_path_factory.mktemp("demo") / "out", plots=False)


def _chromium():
    path = shutil.which("chromium") or shutil.which("chromium-browser")
    if path is None:
        if os.environ.get("CI"):
            pytest.fail("CI must run the browser test: .ci/run installs Debian's chromium")
        pytest.skip("headless Chromium is not installed (apt-get install chromium); CI installs it")
    return path


def test_map_works_offline_in_a_real_browser(demo_out):
    from playwright.sync_api import sync_playwright

    result, out = demo_out
    html = (out / "map.html").read_text(encoding="utf-8")
    assert "cdn." not in html and "unpkg" not in html and "<link" not in html  # Leaflet is inlined
    with sync_playwright() as pw:
        browser = pw.chromium.launch(executable_path=_chromium(), args=["--no-sandbox", "--disable-gpu"])
        context = browser.new_context(offline=True, viewport={"width": 1400, "height": 900})
        page = context.new_page()
        errors, failed = [], []
        page.on("pageerror", lambda e: errors.append(str(e)))
        page.on("requestfailed", lambda r: failed.append(r.url))
        page.goto((out / "map.html").as_uri())
        page.wait_for_selector(".leaflet-control-layers")
        labels = [t.strip() for t in page.locator(".leaflet-control-layers-overlays label").all_inner_texts()]
        expected = {
            "DEM hillshade",
            "Runway",
            "Centre line",
            "Extended centre line (10 NM)",
            "Threshold and GPIP",
            "Mast and antennas",
            "Protected areas (critical)",
            "Protected areas (sensitive)",
            "Online base map (OpenStreetMap, needs internet)",
        }
        expected |= {f"{k} zone, {a.role} antenna" for k in ("Path", "Coverage") for a in result.antennas}
        assert set(labels) == expected
        # Zone polygons are drawn: one SVG path per visible path zone among the interactive paths.
        drawn = page.locator("path.leaflet-interactive").count()
        assert drawn >= len(result.antennas) + 3
        page.locator("path.mastplan-mast").click(force=True)
        popup = page.locator(".leaflet-popup-content").inner_text()
        assert "Glide path mast" in popup
        for a in result.antennas:
            assert f"{a.height_m:,.3f} m" in popup and f"{a.shift_toward_runway_m:,.3f} m" in popup
        browser.close()
    assert errors == [] and failed == []


def test_hostile_site_name_is_escaped_everywhere(tmp_path):
    text = DEMO_SITE.read_text().replace(
        'name = "Harrowfield Regional RWY 27 (fictional)"', f"name = {json.dumps(HOSTILE)}"
    )
    text = text.replace('notes = "Demo site', 'notes = "<b>notes</b> <img src=x onerror=alert(1)> Demo site')
    site = tmp_path / "site.toml"
    site.write_text(text)
    shutil.copy(DEMO_SITE.with_name("dem.tif"), tmp_path / "dem.tif")
    out = write_study(run_study(load_site(site)), tmp_path / "out", plots=False)
    html = (out / "map.html").read_text(encoding="utf-8")
    assert "<script>alert" not in html and "&lt;script&gt;alert" in html
    report = (out / "report.html").read_text(encoding="utf-8")
    assert "<script>alert" not in report and "&lt;script&gt;alert" in report
    assert "&lt;b&gt;notes&lt;/b&gt;" in report
    kml = (out / "site.kml").read_text(encoding="utf-8")
    root = ET.fromstring(kml)  # well-formed despite the markup in the name
    name = root.find("{http://www.opengis.net/kml/2.2}Document/{http://www.opengis.net/kml/2.2}name")
    assert name.text == HOSTILE


def test_geopackage_and_kml_read_back(demo_out):
    result, out = demo_out
    layers = {name for name, _ in pyogrio.list_layers(out / "site.gpkg")}
    geojson = {p.stem for p in (out / "layers").glob("*.geojson")}
    assert layers == geojson
    zones = pyogrio.read_dataframe(out / "site.gpkg", layer="reflection_zones")
    assert zones.crs.to_epsg() == 4326 and len(zones) == len(result.zones)
    by = {(r.antenna, r.kind): r for r in zones.itertuples()}
    for z in result.zones:
        assert by[(z.antenna, z.kind)].area_m2 == pytest.approx(z.shape.area_m2, rel=1e-6)
    kml_zones = pyogrio.read_dataframe(out / "site.kml", layer="reflection_zones")
    assert len(kml_zones) == len(result.zones)
    mast = pyogrio.read_dataframe(out / "site.kml", layer="mast").geometry.iloc[0]
    assert (mast.x, mast.y) == pytest.approx((result.mast.lon_deg, result.mast.lat_deg), abs=1e-7)
