"""Batch studies: a bad site among good ones, CSV input, progress only on a terminal."""

import csv
import subprocess
import sys

import pyogrio
import pytest
from tests_support import DEMO_SITE

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


def _batch_on_a_terminal(*args):
    """Run a batch with stderr on a pseudo-terminal; return (exit code, what the terminal showed)."""
    import os
    import pty

    master, slave = pty.openpty()
    proc = subprocess.run(
        [sys.executable, "-m", "cli.main", "batch", *map(str, args)], stdout=subprocess.PIPE, stderr=slave, timeout=300
    )
    os.close(slave)
    data = b""
    while True:
        try:
            chunk = os.read(master, 4096)
        except OSError:
            break
        if not chunk:
            break
        data += chunk
    os.close(master)
    return proc.returncode, data


def test_progress_bar_on_a_terminal(sites):
    code, shown = _batch_on_a_terminal(sites / "good.toml", "--out", sites / "out2", "-q")
    assert code == 0 and b"1/1 sites" not in shown  # --quiet hides it
    code, shown = _batch_on_a_terminal(sites / "good.toml", "--out", sites / "out3")
    assert code == 0 and b"1/1 sites" in shown
