"""Batch studies: a bad site among good ones, CSV input, progress only on a terminal."""

import csv
import hashlib
import json
import math
import re
import subprocess
import sys

import pyogrio
import pytest
from pyproj import Geod
from tests_support import DEMO_SITE, on_a_terminal

GOOD = DEMO_SITE.read_text().split("[terrain]")[0].split("# The invented local rules")[0]


@pytest.fixture
def sites(tmp_path):
    (tmp_path / "good.toml").write_text(GOOD)
    (tmp_path / "bad.toml").write_text(GOOD.replace("offset = 120", "offset = 10"))
    runways = tmp_path / "runways.csv"
    with runways.open("w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(
            [
                "units",
                "site.name",
                "runway.threshold.lat",
                "runway.threshold.lon",
                "runway.threshold.elevation",
                "runway.end.lat",
                "runway.end.lon",
                "runway.end.elevation",
                "runway.width",
                "glide_path.angle_deg",
                "glide_path.localizer_mhz",
                "glide_path.array",
                "mast.side",
                "mast.offset",
                "mast.setback",
            ]
        )
        w.writerow(
            ["m", "Invented A", 10.0, 20.0, 100, 10.02, 20.0, 101, 45, 3.0, 109.3, "capture-effect", "left", 120, 300]
        )
        w.writerow(
            [
                "m",
                "Invented B",
                -30.0,
                150.0,
                50,
                -30.0,
                150.03,
                50,
                45,
                9.0,
                109.3,
                "null-reference",
                "right",
                120,
                300,
            ]
        )
    return tmp_path


def _batch(*args):
    return subprocess.run(
        [sys.executable, "-m", "cli.main", "batch", *map(str, args)], capture_output=True, text=True, timeout=300
    )


def test_one_bad_site_does_not_stop_the_others(sites):
    out = sites / "out"
    proc = _batch(sites / "good.toml", sites / "bad.toml", sites / "runways.csv", "--out", out, "-j", "2")
    assert proc.returncode == 1
    rows = list(csv.DictReader((out / "index.csv").open()))
    status = {r["site"]: (r["status"], r["error"]) for r in rows}
    assert status["good.toml"][0] == "done"
    assert status["bad.toml"][0] == "failed" and "mast.offset" in status["bad.toml"][1]
    assert status["Invented A (runways.csv row 2)"][0] == "done"
    assert (
        status["Invented B (runways.csv row 3)"][0] == "failed"
        and "angle_deg" in status["Invented B (runways.csv row 3)"][1]
    )
    assert (out / "good" / "summary.json").exists()
    masts = pyogrio.read_dataframe(out / "sites.gpkg", layer="mast")
    assert sorted(masts["site"]) == ["Invented A (runways.csv row 2)", "good.toml"]
    assert "failed: bad.toml" in proc.stdout
    # Not a terminal: no progress bar on stderr.
    assert "\r[" not in proc.stderr and "sites" not in proc.stderr


def test_progress_bar_on_a_terminal(sites):
    (sites / "good2.toml").write_text(GOOD)
    code, shown = on_a_terminal("batch", sites / "good.toml", "--out", sites / "out2", "-q")
    assert code == 0 and b"Studying sites" not in shown  # --quiet hides it
    args = ("batch", sites / "good.toml", sites / "good2.toml", "--out", sites / "out3", "-j", "1")
    code, shown = on_a_terminal(*args, ticking_clock=True)
    assert code == 0 and b"Studying sites" in shown and b"2/2" in shown
    # click's bar: position and, while sites remain, the estimated time left (hh:mm:ss). click estimates it
    # only once a second has passed; its clock here ticks a second at each reading, so the estimate is there
    # at the first site whatever the machine's speed.
    assert b"1/2" in shown and re.search(rb"1/2\s+\d\d:\d\d:\d\d", shown)


def _one_line_input_error(proc, *words):
    """Exit code 2, one line on stderr naming what is wrong, no traceback, no internal error."""
    lines = proc.stderr.strip().splitlines()
    assert proc.returncode == 2, proc.stderr
    assert len(lines) == 1 and "Traceback" not in proc.stderr and "internal error" not in proc.stderr
    for word in words:
        assert word in lines[0], lines[0]


def test_a_csv_with_only_a_header_is_an_input_error(sites):
    empty = sites / "empty.csv"
    empty.write_text("units,site.name,runway.threshold.lat\n")
    proc = _batch(empty, "--out", sites / "o")
    _one_line_input_error(proc, "empty.csv", "no runway rows")
    assert not (sites / "o").exists()


def test_a_missing_site_file_fails_before_anything_is_written(sites):
    proc = _batch(sites / "good.toml", sites / "nowhere.toml", "--out", sites / "o")
    _one_line_input_error(proc, "nowhere.toml", "no such file")
    assert not (sites / "o").exists()


def test_the_same_file_twice_is_refused(sites):
    proc = _batch(sites / "good.toml", sites / "." / "good.toml", "--out", sites / "o")
    _one_line_input_error(proc, "good.toml", "given twice")
    assert not (sites / "o").exists()


@pytest.mark.parametrize("column", ["protected_area.0.name", "prediction.csb_feed"])
def test_a_column_a_csv_cannot_carry_says_what_to_do(sites, column):
    rows = list(csv.reader((sites / "runways.csv").open()))
    rows[0].append(column)
    for row in rows[1:]:
        row.append("x")
    with (sites / "areas.csv").open("w", newline="") as fh:
        csv.writer(fh).writerows(rows)
    proc = _batch(sites / "areas.csv", "--out", sites / "o")
    _one_line_input_error(proc, column, "cannot be given in a CSV", "site file (.toml)")
    assert not (sites / "o").exists()


def test_index_lists_every_antenna_the_array_the_side_the_mast_and_the_input_hash(sites):
    out = sites / "out"
    proc = _batch(sites / "good.toml", sites / "runways.csv", "--out", out, "-j", "2")
    assert proc.returncode == 1  # row 3 fails (its angle), the others are done
    rows = {r["site"]: r for r in csv.DictReader((out / "index.csv").open())}
    a, good = rows["Invented A (runways.csv row 2)"], rows["good.toml"]
    # Capture-effect (M-array) heights h, 2h, 3h with h = lambda / (4 sin theta) over flat ground
    # (REFERENCE "Physics": capture-effect array); localizer 109.30 MHz pairs with glide path
    # 332.00 MHz (Annex 10 Vol I 3.1.6.1); c = 299,792,458 m/s (exact, SI).
    h = 299_792_458.0 / 332.00e6 / (4 * math.sin(math.radians(3.0)))
    assert a["array"] == "capture-effect" and a["side"] == "left"
    for role, k in (("lower", 1), ("middle", 2), ("upper", 3)):
        assert float(a[f"{role}_height_m"]) == pytest.approx(k * h, abs=1e-3)
        assert float(a[f"{role}_height_ft"]) == pytest.approx(k * h / 0.3048, abs=1e-2)  # 1 ft = 0.3048 m
    assert good["array"] == "null-reference" and good["middle_height_m"] == "" and good["middle_shift_m"] == ""
    assert good["lower_height_m"] and good["upper_height_m"] and good["upper_shift_m"]
    failed = rows["Invented B (runways.csv row 3)"]
    assert failed["lower_height_m"] == "" and failed["array"] == ""
    # The mast's position: independent construction with pyproj.Geod from the threshold, setback
    # 300 m along the runway, then 120 m to the left of it (a short local step; 0.5 m tolerance).
    geod = Geod(ellps="WGS84")
    az, _, _ = geod.inv(20.0, 10.0, 20.0, 10.02)
    lon, lat, _ = geod.fwd(20.0, 10.0, az, 300.0)
    lon, lat, _ = geod.fwd(lon, lat, az - 90.0, 120.0)
    _, _, miss = geod.inv(lon, lat, float(a["mast_lon"]), float(a["mast_lat"]))
    assert miss < 0.5
    # The input hash of a CSV row: SHA-256 of the header line and the row line, as in the file.
    lines = (sites / "runways.csv").read_text().splitlines()
    expected = hashlib.sha256((lines[0] + "\n" + lines[1] + "\n").encode()).hexdigest()
    assert a["input_sha256"] == expected
    summary = json.loads((out / a["folder"] / "summary.json").read_text())
    assert summary["input"]["sha256"] == expected
    # A site file's hash is the file's, done or failed.
    assert good["input_sha256"] == hashlib.sha256((sites / "good.toml").read_bytes()).hexdigest()


def _batch_here(*args):
    """``mastplan batch`` in this process (click's runner): its exit code and stderr, without a new interpreter.

    The real process's exit status and output are checked by the tests above and by test_cli.py.
    """
    from click.testing import CliRunner

    from cli.main import main

    return CliRunner().invoke(main, ["batch", *map(str, args)])


def test_fail_on(sites):
    # The good site has no warning and no fail. With a target RDH of 14 m (the setback is solved
    # for it) the RDH is below 15-18 m: a warning for Category I, where that band is recommended
    # (Annex 10 Vol I 3.1.5.1.5), and a fail for Category II, where it is the standard (3.1.5.1.4).
    low = GOOD.replace("target_rdh = 15.5", "target_rdh = 14.0")
    (sites / "low.toml").write_text(low)
    (sites / "low2.toml").write_text(low.replace('category = "I"', 'category = "II"'))
    assert _batch_here(sites / "good.toml", "--out", sites / "o1", "--fail-on", "warning").exit_code == 0
    assert _batch_here(sites / "low.toml", "--out", sites / "o2", "--fail-on", "fail").exit_code == 0
    res = _batch_here(sites / "low.toml", "--out", sites / "o3", "--fail-on", "warning")
    assert res.exit_code == 1 and "1 warning" in res.stderr and "--fail-on warning" in res.stderr
    assert (sites / "o3" / "index.csv").exists()  # the results are written all the same
    res = _batch_here(sites / "low2.toml", "--out", sites / "o4", "--fail-on", "fail")
    assert res.exit_code == 1 and "1 fail" in res.stderr
