"""Lengths in the site file's unit first: the formatting helpers, a study, report and errors in feet."""

import re
import textwrap

import pytest
from tests_support import BASE_SITE, FEET_SITE

from geo.errors import SiteFileError
from geo.units import format_area, format_length, format_number, format_volume, from_unit, to_unit

# Lengths in one unit followed by the other in brackets, e.g. "1,000.0 ft (304.8 m)".
_METRES_FIRST = re.compile(r"\d m \(\S+ ft\)")
_FEET_FIRST = re.compile(r"\d ft \(\S+ m\)")


def test_format_helpers_against_the_exact_foot_and_yard():
    # International Yard and Pound Agreement (1959): 1 ft = 0.3048 m and 1 yd = 0.9144 m exactly, so
    # 1,000 ft = 304.8 m, 100 yd3 = 76.455486 m3 and 1,000 ft2 = 92.90304 m2.
    assert format_length(304.8, "ft", 1) == "1,000.0 ft (304.8 m)"
    assert format_length(304.8, "m", 1) == "304.8 m (1,000.0 ft)"
    assert format_length(-0.001, "m") == "0.00 m (0.00 ft)"  # no "-0.00"
    assert format_length(0.5, "m", 2, signed=True) == "+0.50 m (+1.64 ft)"
    assert format_length(float("nan"), "m") == "n/a" and format_length(None, "ft") == "n/a"
    assert format_volume(100 * 0.9144**3, "ft") == "100 yd3 (76 m3)"
    assert format_volume(100 * 0.9144**3, "m") == "76 m3 (100 yd3)"
    assert format_area(92.90304, "ft") == "1,000 ft2 (93 m2)"
    assert format_number(1234567.891, 2) == "1,234,567.89"
    assert to_unit(from_unit(1250.0, "ft"), "ft") == pytest.approx(1250.0)
    assert from_unit(1000.0, "ft") == pytest.approx(304.8)


@pytest.fixture
def feet_study(write_site):
    from geo.site.site_file import load_site
    from geo.study.site_study import run_study

    return run_study(load_site(write_site(FEET_SITE)))


def test_a_site_in_feet_shows_feet_first_on_screen(feet_study):
    from geo.outputs.text import summary_text

    text = summary_text(feet_study)
    # 1,000 ft and 400 ft exactly (1 ft = 0.3048 m): 304.8 m and 121.92 m.
    assert "setback 1,000.0 ft (304.8 m)" in text and "offset 400.0 ft (121.9 m)" in text
    assert not _METRES_FIRST.search(text), _METRES_FIRST.search(text)
    for f in feet_study.findings:
        assert not _METRES_FIRST.search(f.message), f.message


def test_a_site_in_metres_shows_metres_first(write_site, site_text):
    from geo.outputs.text import summary_text
    from geo.site.site_file import load_site
    from geo.study.site_study import run_study

    result = run_study(load_site(write_site(site_text)))
    text = summary_text(result)
    assert "offset 130.0 m (426.5 ft)" in text  # 130 / 0.3048 = 426.51 ft
    assert not _FEET_FIRST.search(text)


def test_the_report_in_feet(feet_study, tmp_path):
    from geo.outputs.report import write_report

    path = tmp_path / "report.html"
    write_report(feet_study, path, plots=False)
    page = path.read_text()
    assert "setback 1,000.0 ft (304.8 m)" in page and " ft2 (" in page
    assert not _METRES_FIRST.search(page)


def test_clearance_required_in_both_units():
    from geo.study.findings import check_clearance

    # terrain.min_clearance = 30 ft is 9.144 m exactly (the "required 9.144 m" without feet).
    f = check_clearance(12.0, -500.0, 9.144, unit="ft")
    assert "required 30.00 ft (9.14 m)" in f.message and "1,640 ft (500 m) before the threshold" in f.message
    # 12 m = 39.37 ft; margin 12 - 9.144 = +2.856 m = +9.37 ft.
    assert "margin +9.37 ft (+2.86 m)" in f.message


def test_errors_name_both_units(write_site):
    from geo.site.site_file import load_site
    from geo.study.site_study import run_study

    # setback = 10,000 ft = 3,048 m, past the end of BASE_SITE's runway (about 2.9 km by pyproj's geodesic).
    spec = load_site(write_site(FEET_SITE.replace("setback = 1000", "setback = 10000")))
    with pytest.raises(SiteFileError, match=r"10,000\.0 ft \(3,048\.0 m\) along the runway"):
        run_study(spec)
    # The offset limit (1,000 m in geo.site.site_file) in feet first: 1,000 / 0.3048 = 3,280.8 ft.
    with pytest.raises(SiteFileError, match=r"at most 3,280\.8 ft \(1,000\.0 m\)"):
        load_site(write_site(FEET_SITE.replace("offset = 400", "offset = 5000")))
    with pytest.raises(SiteFileError, match=r"60\.0 ft \(18\.3 m\) puts the mast on the runway"):
        load_site(write_site(FEET_SITE.replace("offset = 400", "offset = 60")))


def _codes(result):
    return {f.code: f for f in result.findings}


def test_lengths_that_look_written_in_the_other_unit(write_site):
    from geo.site.site_file import load_site
    from geo.study.site_study import run_study

    # The case: offset = 120 in a file in feet is 36.6 m, inside the strip; 120 m would be typical
    # (FAA AIM 1-1-9: 250-650 ft = 76-198 m).
    spec = load_site(write_site(FEET_SITE.replace("offset = 400", "offset = 120")))
    f = _codes(run_study(spec))["length-unit"]
    assert f.severity == "warning" and "mast.offset = 120.0" in f.message and 'units = "m"' in f.message
    # A file in metres with the setback in feet: 1,000 m is far past 2 x 1,250 ft = 762 m; 1,000 ft is typical.
    text = textwrap.dedent(BASE_SITE).replace("setback = 290", "setback = 1000")
    f = _codes(run_study(load_site(write_site(text))))["length-unit"]
    assert "mast.setback = 1,000.0" in f.message and 'units = "ft"' in f.message
    # Plausible values give no such finding.
    assert "length-unit" not in _codes(run_study(load_site(write_site(FEET_SITE))))
