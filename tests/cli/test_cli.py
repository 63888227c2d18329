"""The command line: exit codes, one-line messages, no tracebacks.

Tests that run the demo for its exit codes, file names or sweep rows take it without the surface
prediction (``demo_site_without_surface``); `mastplan demo` itself runs whole.
"""

import json
import re
import subprocess
import sys

import pytest
from click.testing import CliRunner
from tests_support import demo_site_without_surface, on_a_terminal

from cli.main import main


def _run(*args):
    return CliRunner().invoke(main, list(args))


def test_run_writes_results_and_prints_a_summary(tmp_path, write_site, site_text):
    site = write_site(site_text)
    res = _run("run", str(site), "--out", str(tmp_path / "r"))
    assert res.exit_code == 0, res.output
    assert "RDH:" in res.output and "planning aid" in res.output
    summary = json.loads((tmp_path / "r" / "summary.json").read_text())
    assert summary["array"] == "null-reference"


@pytest.mark.parametrize(
    "old, new, field",
    [
        ("width = 45", "width = -3", "runway.width"),
        ('units = "m"', 'units = "cubits"', "units"),
        ("lat = -35.41,", "lat = 95,", "runway.threshold.lat"),
        ("setback = 290", "setback = 9000", "mast.setback"),
        ("angle_deg = 3.0", 'angle_deg = "3"', "glide_path.angle_deg"),
    ],
)
def test_bad_site_file_exits_2_with_one_line(tmp_path, write_site, site_text, old, new, field):
    site = write_site(site_text.replace(old, new, 1))
    res = _run("run", str(site), "--out", str(tmp_path / "r"))
    assert res.exit_code == 2
    lines = res.output.strip().splitlines()
    assert len(lines) == 1 and field in lines[0] and "Traceback" not in res.output
    assert not (tmp_path / "r").exists()


def test_existing_output_is_refused_without_overwrite(tmp_path, write_site, site_text):
    site = write_site(site_text)
    only = ("--outputs", "summary")  # what is written does not matter here: whether the folder is replaced
    assert _run("run", str(site), "--out", str(tmp_path / "r"), *only).exit_code == 0
    res = _run("run", str(site), "--out", str(tmp_path / "r"), *only)
    assert res.exit_code == 2 and "--overwrite" in res.output
    assert _run("run", str(site), "--out", str(tmp_path / "r"), "--overwrite", *only).exit_code == 0


def test_missing_site_file_exits_2(tmp_path):
    res = _run("run", str(tmp_path / "none.toml"), "--out", str(tmp_path / "r"))
    assert res.exit_code == 2 and "cannot read" in res.output


def test_demo_runs_as_a_real_process(tmp_path):
    proc = subprocess.run(
        [sys.executable, "-m", "cli.main", "demo", "--out", str(tmp_path / "demo")],
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert proc.returncode == 0, proc.stderr
    assert "Harrowfield" in proc.stdout
    assert (tmp_path / "demo" / "layers" / "mast.geojson").exists()


def test_bad_input_in_a_real_process_has_no_traceback(tmp_path, write_site, site_text):
    site = write_site(site_text.replace("offset = 130", "offset = 10"))
    proc = subprocess.run(
        [sys.executable, "-m", "cli.main", "run", str(site), "--out", str(tmp_path / "r")],
        capture_output=True,
        text=True,
        timeout=120,
    )
    assert proc.returncode == 2
    assert proc.stderr.count("\n") == 1 and "mast.offset" in proc.stderr and "Traceback" not in proc.stderr


def test_a_real_process_keeps_its_exit_status_and_its_whole_output(tmp_path):
    # The console command ends without the interpreter's teardown (cli.main.entry): the status of
    # --fail-on (1: the demo has warnings, see its summary.json) and every printed line must still
    # reach the caller through pipes. (The demo's warnings do not come from its surface prediction.)
    out = tmp_path / "r"
    args = [
        "run",
        str(demo_site_without_surface(tmp_path)),
        "--out",
        str(out),
        "--outputs",
        "summary",
        "--fail-on",
        "warning",
    ]
    proc = subprocess.run([sys.executable, "-m", "cli.main", *args], capture_output=True, text=True, timeout=120)
    assert proc.returncode == 1, proc.stderr
    assert proc.stdout.rstrip().endswith(f"Results written to {out}")
    assert proc.stderr.startswith("mastplan: findings at level warning or worse:")
    assert (out / "summary.json").exists()


def test_demo_dem_script_reproduces_the_committed_raster(tmp_path):
    # The demo DEM is invented; its script must be deterministic so the committed file can be remade.
    import numpy as np
    import rasterio

    from demo_airfield import SITE_FILE
    from demo_airfield.make_dem import make

    fresh = make(tmp_path / "dem.tif")
    with rasterio.open(fresh) as a, rasterio.open(SITE_FILE.with_name("dem.tif")) as b:
        assert a.crs == b.crs and a.transform == b.transform
        np.testing.assert_array_equal(a.read(1), b.read(1))


def test_no_plots_option_skips_only_the_pictures(tmp_path):
    site = demo_site_without_surface(tmp_path)  # the same files with or without the surface prediction
    res = _run("run", str(site), "--out", str(tmp_path / "r"), "--no-plots", "-q")
    assert res.exit_code == 0, res.output
    names = sorted(p.name for p in (tmp_path / "r").iterdir())
    assert names == [
        "layers",
        "map.html",
        "path.csv",
        "profile.csv",
        "report.html",
        "site.gpkg",
        "site.kml",
        "summary.json",
    ]


def test_sweep_command_writes_the_table_candidates_and_the_best_study(tmp_path):
    out = tmp_path / "sweep"
    res = _run(
        "sweep",
        str(demo_site_without_surface(tmp_path)),
        "--out",
        str(out),
        "--setback",
        "280",
        "340",
        "30",
        "--offset",
        "100",
        "150",
        "50",
        "--side",
        "both",
        "--no-plots",
    )
    assert res.exit_code == 0, res.output
    rows = list(__import__("csv").DictReader((out / "sweep.csv").open()))
    assert len(rows) == 3 * 2 * 2 and {"setback_m", "setback_ft", "cut_m3", "cut_yd3", "feasible", "score"} <= set(
        rows[0]
    )
    summary = json.loads((out / "summary.json").read_text())
    assert summary["candidates"] == 12
    if summary["best"] is not None:
        best = json.loads((out / "best" / "summary.json").read_text())
        assert best["mast"]["setback_m"] == pytest.approx(summary["best"]["setback_m"], abs=1e-3)
        assert "candidates" in (out / "best" / "map.html").read_text()
    fc = json.loads((out / "layers" / "candidates.geojson").read_text())
    assert len(fc["features"]) == 12


def test_sweep_command_refuses_a_bad_range(tmp_path):
    from demo_airfield import SITE_FILE

    res = _run("sweep", str(SITE_FILE), "--out", str(tmp_path / "s"), "--setback", "300", "200", "10")
    assert res.exit_code == 2 and "--setback" in res.output and len(res.output.strip().splitlines()) == 1


@pytest.mark.parametrize(
    "level, category, code, message",
    [
        # The test site's RDH is 14.40 m, below 15-18 m: a warning for Category I, where that band is
        # recommended (Annex 10 Vol I 3.1.5.1.5), a fail for Category II, where it is the standard
        # (3.1.5.1.4). Its other findings are passes and infos.
        ("fail", "I", 0, None),
        ("warning", "I", 1, "1 warning (--fail-on warning)"),
        ("fail", "II", 1, "1 fail (--fail-on fail)"),
        ("warning", "II", 1, "1 fail (--fail-on warning)"),
    ],
)
def test_run_fail_on_exits_1_when_a_finding_is_that_bad(
    tmp_path, write_site, site_text, level, category, code, message
):
    site = write_site(site_text.replace("[glide_path]\n", f'[glide_path]\ncategory = "{category}"\n'))
    args = ["run", str(site), "--out", str(tmp_path / "r"), "--outputs", "summary", "-q", "--fail-on", level]
    res = CliRunner().invoke(main, args)
    assert res.exit_code == code, res.output
    assert (tmp_path / "r" / "summary.json").exists()  # written all the same
    if message:
        assert message in res.stderr and len(res.stderr.strip().splitlines()) == 1


def test_sweep_fail_on_when_no_candidate_is_feasible(tmp_path):
    from demo_airfield import SITE_FILE

    args = ["sweep", str(SITE_FILE), "--setback", "280", "340", "30", "--offset", "100", "150", "50", "--no-plots"]
    # An RDH band of 40-41 m: no candidate of this grid reaches it (the demo's RDH is near 15.5 m).
    args += ["--rdh-band", "40", "41", "-q"]
    res = CliRunner().invoke(main, [*args, "--out", str(tmp_path / "s1")])
    assert res.exit_code == 0, res.output
    res = CliRunner().invoke(main, [*args, "--out", str(tmp_path / "s2"), "--fail-on", "fail"])
    assert res.exit_code == 1 and "no feasible candidate" in res.stderr
    assert (tmp_path / "s2" / "sweep.csv").exists()


def test_sweep_shows_progress_only_on_a_terminal(tmp_path):
    args = [
        "sweep",
        demo_site_without_surface(tmp_path),
        "--setback",
        "280",
        "340",
        "30",
        "--offset",
        "100",
        "150",
        "50",
        "--no-plots",
    ]
    code, shown = on_a_terminal(*args, "--out", tmp_path / "s1")
    # click's bar, full at the end: "[#####]  26/26" (steps of the terrain work on both sides).
    assert code == 0 and b"Sweeping candidates" in shown and re.search(rb"\[#+\]\s+(\d+)/\1", shown)
    code, shown = on_a_terminal(*args, "--out", tmp_path / "s2", "-q")
    assert code == 0 and b"Sweeping candidates" not in shown
    res = CliRunner().invoke(main, [*map(str, args), "--out", str(tmp_path / "s3")])
    assert res.exit_code == 0 and "Sweeping candidates" not in res.output


def test_sweep_reasons_name_the_iev_criterion_in_capitals(tmp_path):
    import csv

    # Near the IEV limit (IEC 60050-705, IEV 705-04-15: the demo study's zone RMS is 0.161 m against a
    # 0.179 m limit); further from the threshold some candidates' zones are rough by it.
    args = [
        "sweep",
        str(demo_site_without_surface(tmp_path)),
        "--setback",
        "330",
        "360",
        "10",
        "--offset",
        "100",
        "125",
        "25",
        "--no-plots",
    ]
    res = CliRunner().invoke(main, [*args, "--criterion", "iev", "--side", "right", "-q", "--out", str(tmp_path / "s")])
    assert res.exit_code == 0, res.output
    reasons = [r["reasons"] for r in csv.DictReader((tmp_path / "s" / "sweep.csv").open())]
    assert any("rough by the IEV criterion" in r for r in reasons) and not any("iev criterion" in r for r in reasons)


def test_a_reader_that_goes_away_ends_the_run_quietly(tmp_path, write_site, site_text):
    # `mastplan sweep ... | head -1`: standard output closed by its reader. The POSIX convention of
    # shell tools (exit status 128 + SIGPIPE = 141, no message) instead of an internal error.
    import os

    site = write_site(site_text)
    read_end, write_end = os.pipe()
    os.close(read_end)  # the reader is gone before the first line
    try:
        proc = subprocess.run(
            [sys.executable, "-m", "cli.main", "sweep", str(site), "--out", str(tmp_path / "s")]
            + ["--setback", "250", "270", "10", "--offset", "120", "140", "20"],
            stdout=write_end,
            stderr=subprocess.PIPE,
            text=True,
            timeout=120,
        )
    finally:
        os.close(write_end)
    assert proc.returncode == 141, proc.stderr
    assert "Traceback" not in proc.stderr and "internal error" not in proc.stderr
    assert "BrokenPipeError" not in proc.stderr


def test_swapped_runway_ends_exit_2_with_one_line(tmp_path):
    path = demo_site_without_surface(tmp_path)
    text = path.read_text(encoding="utf-8")
    thr = "threshold = { lat = 46.35, lon = -101.2, elevation = 612.0 }"
    end = "end = { lat = 46.351049044, lon = -101.236344979, elevation = 606.4 }"
    assert thr in text and end in text
    swapped = text.replace(thr, "threshold = { lat = 46.351049044, lon = -101.236344979, elevation = 606.4 }@")
    swapped = swapped.replace(end, "end = { lat = 46.35, lon = -101.2, elevation = 612.0 }").replace("@", "")
    path.write_text(swapped.replace("code = 4", 'code = 4\ndesignator = "27"', 1), encoding="utf-8")
    res = _run("run", str(path), "--out", str(tmp_path / "r"))
    assert res.exit_code == 2
    assert len(res.output.strip().splitlines()) == 1 and "Traceback" not in res.output
    assert "runway.threshold: threshold and end look swapped" in res.output
    assert not (tmp_path / "r").exists()


NEW_SITE = ("--threshold", "47.3", "-100.9", "560", "--end", "47.3", "-100.87", "562")


@pytest.mark.parametrize("units, array", [("m", "null-reference"), ("ft", "capture-effect")])
def test_new_site_writes_a_file_that_loads_and_runs(tmp_path, units, array):
    from geo.site.site_file import load_site

    path = tmp_path / "new" / "rwy.toml"  # its folder is made
    res = _run("new-site", str(path), *NEW_SITE, "--units", units, "--array", array, "--name", 'Plover "Flats"')
    assert res.exit_code == 0, res.output
    spec = load_site(path)
    assert (spec.units, spec.array, spec.name) == (units, array, 'Plover "Flats"')
    # The elevations are in the file's unit: 560 ft is 170.688 m (1 ft = 0.3048 m exactly).
    assert spec.threshold.elevation_m == pytest.approx(560 * (0.3048 if units == "ft" else 1.0))
    assert spec.terrain is None and spec.mast.setback_m is None and spec.target_rdh_m is not None
    assert "# [terrain]" in path.read_text(encoding="utf-8")  # commented, as a starter
    res = _run("run", str(path), "--out", str(tmp_path / "r"), "--outputs", "summary")
    assert res.exit_code == 0, res.output
    summary = json.loads((tmp_path / "r" / "summary.json").read_text())
    assert summary["input"]["units"] == units and summary["array"] == array


def test_new_site_refuses_an_existing_file_and_leaves_it_as_it_was(tmp_path):
    path = tmp_path / "site.toml"
    path.write_text("units = 'm'  # the user's own\n", encoding="utf-8")
    res = _run("new-site", str(path), *NEW_SITE)
    assert res.exit_code == 2
    assert res.output.strip().splitlines() == [f"mastplan: error: {path}: already exists; choose another name, "
                                               "or add --overwrite to replace it"]  # fmt: skip
    assert path.read_text(encoding="utf-8") == "units = 'm'  # the user's own\n"
    assert _run("new-site", str(path), *NEW_SITE, "--overwrite").exit_code == 0
    assert "mastplan new-site" in path.read_text(encoding="utf-8")
    assert [p.name for p in tmp_path.iterdir()] == ["site.toml"]  # no temporary file left


@pytest.mark.parametrize(
    "args, option",
    [
        (("--threshold", "95", "-100.9", "560", "--end", "47.3", "-100.87", "562"), "--threshold"),
        (("--threshold", "47.3", "-100.9", "560", "--end", "47.3", "-100.9", "560"), "--end"),
        (("--threshold", "47.3", "-100.9", "560", "--end", "47.3", "-100.87", "99999"), "--end"),
    ],
)
def test_new_site_bad_position_names_the_option_and_writes_nothing(tmp_path, args, option):
    path = tmp_path / "site.toml"
    res = _run("new-site", str(path), *args)
    assert res.exit_code == 2
    assert len(res.output.strip().splitlines()) == 1 and res.output.startswith(f"mastplan: error: {option}: ")
    assert not path.exists()
