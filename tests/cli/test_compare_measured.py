"""``mastplan compare-measured`` on the demo airfield: outputs, keys, moves, and bad files (exit code 2)."""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest
from click.testing import CliRunner

from cli.main import main

ROOT = Path(__file__).resolve().parents[2]
EXAMPLE = ROOT / "examples" / "measured" / "demo_runs.csv"


@pytest.fixture(scope="module")
def demo_run(tmp_path_factory):
    # The demo with its surface prediction: the fit takes the surface's sensitivities (a few predictions more).
    out = tmp_path_factory.mktemp("measured") / "out"
    got = CliRunner().invoke(
        main, ["compare-measured", str(ROOT / "demo_airfield/site.toml"), str(EXAMPLE), "--out", str(out)]
    )
    assert got.exit_code == 0, got.output
    return out, got.output


def test_outputs_and_keys(demo_run):
    out, text = demo_run
    assert {p.name for p in out.iterdir()} == {"summary.json", "differences.csv", "measured.png"}
    s = json.loads((out / "summary.json").read_text(encoding="utf-8"))
    antennas = s["adjustment"]["antennas"]
    assert [a["role"] for a in antennas] == [a["role"] for a in s["antennas"]] == ["lower", "upper"]
    for a, before in zip(antennas, s["antennas"]):
        assert a["height_m"] == pytest.approx(before["height_m"] + a["move_m"], abs=2e-4)
        assert a["move_ft"] == pytest.approx(a["move_m"] / 0.3048, abs=2e-4)  # 1 ft = 0.3048 m exactly
        assert round(a["move_m"] / 0.005, 6) == round(a["move_m"] / 0.005)  # rounded to the 5 mm default step
    assert set(s["adjustment"]["path_after"]) == {"path_angle_deg", "half_sector_below_deg", "half_sector_above_deg",
                                                  "rdh_m", "rdh_ft"}  # fmt: skip
    assert s["comparison"]["surface"] is True and "surface" in s["adjustment"]["sensitivities"]
    assert "flight inspection" in s["adjustment"]["caution"]
    assert "mm (" in text and " in)" in text and "Caution" in text
    rows = (out / "differences.csv").read_text(encoding="utf-8").splitlines()
    samples = [r for r in EXAMPLE.read_text(encoding="utf-8").splitlines()[1:] if r and not r.startswith("#")]
    assert rows[0].startswith("kind,name,run,row,distance_m,distance_ft") and len(rows) == 1 + len(samples) - 1


def test_every_key_is_documented(demo_run):
    from tests.outputs.test_summary_keys import is_documented, key_paths

    text = (ROOT / "docs" / "summary_keys.md").read_text(encoding="utf-8")
    section = text.split("## `mastplan compare-measured`", 1)[1]
    documented = re.findall(r"^\| `([^`]+)` \| \S", section, flags=re.M)
    s = json.loads((demo_run[0] / "summary.json").read_text(encoding="utf-8"))
    assert [p for p in key_paths(s) if not is_documented(p, documented)] == []


def test_help_says_it_takes_measured_results():
    got = CliRunner().invoke(main, ["compare-measured", "--help"])
    assert got.exit_code == 0 and "measured results" in got.output


def test_a_bad_file_is_one_line_and_exit_code_2(tmp_path):
    bad = tmp_path / "bad.csv"
    bad.write_text("distance_m,ddm\n1000,0.01\n2000,abc\n", encoding="utf-8")
    site = ROOT / "demo_airfield/site.toml"  # read only: the files are checked before the study
    got = CliRunner().invoke(main, ["compare-measured", str(site), str(bad), "--out", str(tmp_path / "o")])
    assert got.exit_code == 2  # bad input (cli/common.py, README's table of exit codes)
    lines = got.output.strip().splitlines()
    assert len(lines) == 1 and "row 3, column ddm" in lines[0] and "Traceback" not in got.output
    assert not (tmp_path / "o").exists()


def test_a_bad_step_is_exit_code_2(tmp_path):
    got = CliRunner().invoke(
        main, ["compare-measured", str(ROOT / "demo_airfield/site.toml"), str(EXAMPLE), "--out", str(tmp_path / "o"),
               "--step-mm", "0"]
    )  # fmt: skip
    assert got.exit_code == 2 and "--step-mm" in got.output
