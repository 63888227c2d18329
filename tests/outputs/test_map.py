"""The offline web map in a real browser (headless Chromium via Playwright), and KML / GeoPackage."""

import json
import os
import shutil
import xml.etree.ElementTree as ET

import pyogrio
import pytest
from tests_support import DEMO_SITE, NO_SURFACE

from geo.outputs.write import write_study
from geo.site.site_file import load_site
from geo.study.site_study import run_study

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


def _click_until_the_popup_opens(page, selector: str, attempts: int = 10) -> str:
    """Click the element once it is at rest, until a popup is open; return the popup's text.

    The map opens on its view with fitBounds, which Leaflet animates: a click while the map still moves
    can miss the marker (on a loaded machine the move lasts longer). Each click waits for the element to
    stand still (Playwright's "stable"), and clicking is repeated until the popup is there: a wait for
    that state, not for a time. A popup already open is not closed by another click on a path marker.
    """
    from playwright.sync_api import TimeoutError as PlaywrightTimeoutError

    target, popup = page.locator(selector), page.locator(".leaflet-popup-content")
    for _ in range(attempts):
        target.element_handle().wait_for_element_state("stable")
        target.click(force=True)
        try:
            popup.wait_for(state="attached", timeout=5000)
        except PlaywrightTimeoutError:
            continue
        return popup.inner_text()
    pytest.fail(f"no popup opened after {attempts} clicks on {selector}")


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
        legend = [t.strip() for t in page.locator(".mastplan-legend-name").all_inner_texts()]
        assert sorted(legend) == sorted(n for n in labels if not n.startswith("Online base map"))
        # Zone polygons are drawn: one SVG path per visible path zone among the interactive paths.
        drawn = page.locator("path.leaflet-interactive").count()
        assert drawn >= len(result.antennas) + 3
        popup = _click_until_the_popup_opens(page, "path.mastplan-mast")
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
    site.write_text(text + NO_SURFACE)  # the name and notes are what is escaped; the surface prediction shows neither
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


def _overlay_names(page: str) -> list[str]:
    """The layer control's overlay names, read from the map's script."""
    import re

    block = page[page.index("overlays :") :]
    block = block[: block.index("}")]
    return re.findall(r'"([^"]+)" : ', block)


def _legend_names(page: str) -> list[str]:
    import re

    return re.findall(r"<span class='mastplan-legend-name'>([^<]+)</span>", page)


def test_legend_names_are_the_layer_control_names(demo_out):
    result, out = demo_out
    page = (out / "map.html").read_text(encoding="utf-8")
    overlays = [n for n in _overlay_names(page) if not n.startswith("Online base map")]
    legend = _legend_names(page)
    assert sorted(legend) == sorted(overlays) and len(legend) == len(set(legend))
    assert "Threshold and GPIP" in legend and "threshold" in page and "GPIP" in page
    assert "exaggerated 10 times" in page  # the demo has a DEM, so a hillshade


def test_no_hillshade_line_without_a_dem(tmp_path, write_site, site_text):
    out = write_study(run_study(load_site(write_site(site_text))), tmp_path / "out", plots=False)
    page = (out / "map.html").read_text(encoding="utf-8")
    assert "exaggerated" not in page.lower() and "DEM hillshade" not in page
    overlays = [n for n in _overlay_names(page) if not n.startswith("Online base map")]
    assert sorted(_legend_names(page)) == sorted(overlays)


def test_tooltips_have_labels_and_rounded_values_in_metres_and_feet(demo_out):
    import re

    result, out = demo_out
    page = (out / "map.html").read_text(encoding="utf-8")
    assert '"Near edge (from the mast, along the course)"' in page and '"Largest half-width"' in page
    for z in [z for z in result.zones if z.antenna != "all"]:  # the map draws each antenna's zones
        near = f"{z.shape.near_m:,.0f} m ({z.shape.near_m / 0.3048:,.0f} ft)"  # 1 ft = 0.3048 m exactly
        area = f"{z.shape.area_m2:,.0f} m2 ({z.shape.area_m2 / 0.3048**2:,.0f} ft2)"
        assert f'"near_m": "{near}"' in page and f'"area_m2": "{area}"' in page
    # The runway's tooltip: length and width to 0.1 m, bearing to 0.01 deg; no long floats anywhere.
    assert f'"true_bearing_deg": "{result.runway.true_bearing_deg:.2f} deg"' in page
    tooltip_values = re.findall(r'"(?:near_m|far_m|max_half_width_m|length_m|width_m)": "([^"]*)"', page)
    assert tooltip_values and all(re.fullmatch(r"[\d,]+(\.\d)? m \([\d,]+(\.\d)? ft\)", v) for v in tooltip_values)


def test_gpip_before_the_threshold_reads_before_and_the_mast_row_keeps_its_source(tmp_path, demo_out):
    import dataclasses

    from geo.outputs.report import write_report
    from geo.outputs.text import summary_text

    result, _ = demo_out
    early = dataclasses.replace(result, gpip=dataclasses.replace(result.gpip, along_m=-285.2))
    text = summary_text(early)
    assert "GPIP: 285.2 m (935.7 ft) before the threshold" in text  # 285.2 / 0.3048 = 935.70
    assert "-285.2" not in text
    write_report(early, tmp_path / "report.html", plots=False)
    report = (tmp_path / "report.html").read_text(encoding="utf-8")
    assert "285.2 m (935.7 ft) before the threshold" in report
    assert f"({result.mast.setback_source})" in report and "past the threshold" in summary_text(result)


def test_report_mast_row_says_surveyed_position(tmp_path, write_site, site_text):
    from geo.outputs.report import write_report

    # The test site's mast moved to a surveyed position (invented, beside the runway's right side).
    text = site_text.replace(
        'side = "right"\noffset = 130\nsetback = 290\n', "position = { lat = -35.4117, lon = 148.9226 }\n"
    )
    assert "position" in text
    result = run_study(load_site(write_site(text)))
    write_report(result, tmp_path / "report.html", plots=False)
    row = (tmp_path / "report.html").read_text(encoding="utf-8").split("<th>Mast</th>")[1].split("</tr>")[0]
    assert "(surveyed position)" in row
