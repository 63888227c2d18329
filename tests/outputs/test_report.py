"""report.html and report.pdf: verdict, order by severity, ground, references, title block, TCH, PDF."""

from __future__ import annotations

import html
import os
import re
import shutil
import subprocess

import pytest
from tests_support import demo_site_without_surface

from geo.outputs import pdf as pdf_module
from geo.outputs.report import write_report
from geo.outputs.text import summary_text
from geo.outputs.write import write_study
from geo.site.site_file import load_site
from geo.study.site_study import run_study
from geo.units import format_length

TITLE_BLOCK = """
[report]
prepared_by = "A. Engineer <navaids>"
checked_by = "B. Checker"
revision = "B"
date = "12 May 2025"
"""


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    """The demo study (surface prediction off) with a [report] table, and its report."""
    folder = tmp_path_factory.mktemp("report")
    site = demo_site_without_surface(folder)
    site.write_text(site.read_text(encoding="utf-8") + TITLE_BLOCK, encoding="utf-8")
    result = run_study(load_site(site))
    write_report(result, folder / "report.html", plots=False)
    return result, (folder / "report.html").read_text(encoding="utf-8"), site


def _findings_section(page: str) -> str:
    return page.split("<h2>Findings</h2>", 1)[1].split("<h2>", 1)[0]


def test_the_verdict_counts_every_severity_of_the_study(demo):
    result, page, _ = demo
    counts = dict.fromkeys(("fail", "warning", "info", "pass"), 0)
    for f in result.findings:
        counts[f.severity] += 1
    shown = dict(re.findall(r"data-severity='(\w+)' data-count='(\d+)'", page))
    assert {k: int(v) for k, v in shown.items()} == counts
    assert sum(counts.values()) == len(result.findings) > 0
    # the verdict stands above the findings, the key figures and the cautions
    assert page.index("Verdict:") < page.index('class="caution"') < page.index("<h2>Findings</h2>")
    worst = next(s for s in ("fail", "warning", "info", "pass") if counts[s])
    assert f"class='verdict {worst}'" in page


def test_findings_are_worst_first_and_keep_their_order_within_a_severity(demo):
    result, page, _ = demo
    codes = re.findall(r"<li class='(\w+)' data-code='([^']*)'>", _findings_section(page))
    expected = [(s, f.code) for s in ("fail", "warning", "info", "pass") for f in result.findings if f.severity == s]
    assert codes == expected
    assert len({s for s, _ in codes}) >= 2  # the demo has warnings, an info and passes: the sort is tested


def test_the_ground_section_names_the_dem_its_crs_cell_and_the_datum_shift(demo):
    result, page, _ = demo
    ground = page.split("<h2>Ground</h2>", 1)[1].split("<h2>", 1)[0]
    assert "dem.tif" in ground
    assert "EPSG:" in ground  # the demo DEM's CRS is an EPSG code (demo_airfield/make_dem.py)
    assert format_length(result.terrain.cell_size_m, "m", 2) in ground
    assert "Datum conversion" in ground and "Shift applied at the mast" in ground


def test_each_cited_source_is_listed_once_and_the_caveat_becomes_a_mark(demo):
    result, page, _ = demo
    messages = [f.message for f in result.findings]
    references = page.split("<h2 id='references'>References</h2>", 1)[1]
    ids = re.findall(r"<li id='ref-([\w-]+)'>", references)
    assert len(ids) == len(set(ids))
    # what the findings cite, by name (the texts of geo/study/findings.py and geo/airfield/surfaces.py)
    for name, key in (("Annex 10", "annex10"), ("Annex 14", "annex14"), ("PANS-OPS", "pans-ops"), ("AIM", "faa-aim")):
        assert any(name in m for m in messages), name
        assert ids.count(key) == 1
        assert "8th edition (2018)" in references  # Annex 14's edition, as the finding gives it
    caveat = re.compile(r"from memory[:;] confirm (against )?the edition in force")
    assert any(caveat.search(m) for m in messages)
    assert not caveat.search(html.unescape(_findings_section(page)))
    assert "href='#ref-annex10'" in _findings_section(page)
    assert "Values from memory" in references


def test_the_title_block_shows_the_report_fields_escaped(demo):
    _, page, _ = demo
    title = page.split("<table class='title'>", 1)[1].split("</table>", 1)[0]
    for text in ("A. Engineer &lt;navaids&gt;", "B. Checker", "<td>B</td>", "12 May 2025"):
        assert text in title
    assert "<navaids>" not in page


def test_tch_is_named_beside_the_path_over_the_threshold(demo):
    result, page, _ = demo
    value = format_length(result.path_height_over_threshold_m, "m")
    line = f"actual path over the threshold, threshold crossing height (TCH): {value}"
    assert line in summary_text(result)
    assert f"Actual path over the threshold, threshold crossing height (TCH)</th><td>{html.escape(value)}" in page


def test_report_html_is_byte_identical_on_rerun(demo, tmp_path):
    result, page, site = demo
    again = run_study(load_site(site))
    write_report(again, tmp_path / "report.html", plots=False)
    assert (tmp_path / "report.html").read_bytes() == page.encode("utf-8")


def _chromium():
    if pdf_module.find_chromium() is None:
        if os.environ.get("CI"):
            pytest.fail("CI must run the PDF test: .ci/run installs Debian's chromium")
        pytest.skip("headless Chromium is not installed (apt-get install chromium); CI installs it")


@pytest.mark.parametrize("page, width_pt", [("A4", 595), ("Letter", 612)])
def test_report_pdf_is_printed_at_the_page_size_and_same_on_rerun(demo, tmp_path, page, width_pt):
    _chromium()
    result, _, _ = demo
    from dataclasses import replace

    result = replace(result, spec=replace(result.spec, report=replace(result.spec.report, page=page)))
    outs = [write_study(result, tmp_path / f"out{i}", plots=False, outputs=("summary", "pdf")) for i in (1, 2)]
    data = (outs[0] / "report.pdf").read_bytes()
    assert data.startswith(b"%PDF")
    assert (outs[0] / "report.html").is_file()  # the PDF is the report printed
    # A4 is 210 mm = 595.3 pt wide, Letter 8.5 in = 612 pt (ISO 216; ANSI/ASME Y14.1)
    box = re.search(rb"/MediaBox \[0 0 ([\d.]+) ([\d.]+)\]", data)
    assert abs(float(box.group(1)) - width_pt) < 1.0
    assert b"D:20000101000000" in data  # Chromium's date of printing is fixed
    assert (outs[1] / "report.pdf").read_bytes() == data
    assert '"written": true' in (outs[0] / "summary.json").read_text(encoding="utf-8")


def test_without_chromium_the_summary_says_why_there_is_no_pdf(demo, tmp_path, monkeypatch):
    result, _, _ = demo
    monkeypatch.setattr(pdf_module, "find_chromium", lambda: None)
    out = write_study(result, tmp_path / "out", plots=False, outputs=("summary", "pdf"))
    assert not (out / "report.pdf").exists()
    summary = (out / "summary.json").read_text(encoding="utf-8")
    assert '"written": false' in summary and "no headless Chromium found" in summary


def test_chromium_that_fails_leaves_no_pdf_and_a_reason(tmp_path):
    fake = tmp_path / "chromium"
    fake.write_text("#!/bin/sh\necho broken >&2\nexit 3\n", encoding="utf-8")
    fake.chmod(0o755)
    (tmp_path / "report.html").write_text("<p>x</p>", encoding="utf-8")
    reason = pdf_module.write_pdf(tmp_path / "report.html", tmp_path / "report.pdf", chromium=str(fake))
    assert reason is not None and "exit 3" in reason and "broken" in reason
    assert not (tmp_path / "report.pdf").exists()


def test_fixed_dates_keep_the_length_and_every_offset():
    data = b"%PDF-1.4\n<</CreationDate (D:20261203161811+00'00')\n/ModDate (D:20261203161811+00'00')>>"
    fixed = pdf_module.fixed_dates(data)
    assert len(fixed) == len(data)
    assert fixed.count(b"(D:20000101000000+00'00')") == 2


def test_the_cli_says_on_screen_why_there_is_no_pdf(tmp_path, monkeypatch):
    from click.testing import CliRunner

    from cli.main import main

    monkeypatch.setattr(pdf_module, "find_chromium", lambda: None)
    site = demo_site_without_surface(tmp_path)
    out = tmp_path / "out"
    res = CliRunner().invoke(main, ["run", str(site), "--out", str(out), "--outputs", "summary,pdf"])
    assert res.exit_code == 0, res.output
    assert "no report.pdf: no headless Chromium found" in res.output


def test_pdf_is_not_a_default_output():
    from geo.outputs.write import OUTPUTS

    assert "pdf" not in OUTPUTS
    assert shutil is not None and subprocess is not None
