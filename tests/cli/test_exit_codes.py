"""Exit codes as README.md and every command's --help state them; inputs that would mislead; output folders.

The runs are in-process (click's runner) on the test site without a DEM, so each is quick.
"""

import os
import re
import subprocess
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner

from cli.main import main

ROOT = Path(__file__).resolve().parents[2]
COMMANDS = ("run", "demo", "sweep", "batch", "areas", "building-heights")
as_root = pytest.mark.skipif(os.geteuid() == 0, reason="root ignores folder permissions")


def _run(*args):
    return CliRunner().invoke(main, [str(a) for a in args])


def _readme_codes() -> dict:
    """README's table of exit codes: code -> meaning."""
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    section = text.split("### Exit codes", 1)[1].split("\n#", 1)[0]
    codes = {}
    for cells in re.findall(r"^\| ([\d, ]+) \| (.+) \|$", section, flags=re.M):
        for code in cells[0].split(","):
            codes[int(code)] = cells[1]
    return codes


def _one_line(res) -> str:
    lines = res.output.strip().splitlines()
    assert len(lines) == 1 and "Traceback" not in res.output, res.output
    return lines[0]


def _leftovers(folder: Path) -> list:
    """mastplan's hidden temporary folders (``.NAME.partial-*``, ``.NAME.old-*``) in ``folder``."""
    return sorted(p.name for p in folder.glob(".*") if ".partial-" in p.name or ".old-" in p.name)


def test_every_command_help_lists_the_readme_codes():
    codes = _readme_codes()
    assert {0, 1, 2, 3} <= set(codes)
    for command in COMMANDS:
        shown = _run(command, "--help").output
        listed = {int(c) for c in re.findall(r"^\s+(\d+)\s{2,}", shown.split("Exit codes:", 1)[1], flags=re.M)}
        assert listed == set(codes), (command, listed)


def test_each_exit_code_is_what_the_readme_says(tmp_path, write_site, site_text, monkeypatch):
    codes = _readme_codes()
    site = write_site(site_text)
    only = ("--outputs", "summary", "-q")
    done = _run("run", site, "--out", tmp_path / "done", *only)
    assert done.exit_code == 0 and codes[0] == "done", done.output
    bad = _run("run", site, "--out", tmp_path / "bad", "--outputs", "none", "-q")
    assert bad.exit_code == 2 and codes[2].startswith("bad input") and "--outputs" in _one_line(bad)
    # The test site's RDH, 14.40 m, is below 15-18 m, a fail for Category II (Annex 10 Vol I 3.1.5.1.4).
    cat2 = write_site(site_text.replace("[glide_path]\n", '[glide_path]\ncategory = "II"\n'), "cat2.toml")
    gate = _run("run", cat2, "--out", tmp_path / "gate", *only, "--fail-on", "fail")
    assert gate.exit_code == 1 and "--fail-on" in codes[1] and "--fail-on fail" in _one_line(gate)
    assert (tmp_path / "gate" / "summary.json").exists()

    def broken(*args, **kwargs):
        raise RuntimeError("a bug")

    monkeypatch.setattr("geo.study.site_study.run_study", broken)
    internal = _run("run", site, "--out", tmp_path / "internal", *only)
    assert internal.exit_code == 3 and codes[3].startswith("internal error")
    assert "internal error: RuntimeError: a bug" in _one_line(internal)
    assert not (tmp_path / "internal").exists() and not _leftovers(tmp_path)


def test_a_bug_in_a_real_process_exits_3_in_one_line(tmp_path, write_site, site_text):
    # The console command (cli.main.entry) keeps the code: a library function made to fail before the study.
    code = (
        "import geo.study.site_study as s, sys\n"
        "def broken(*a, **k): raise RuntimeError('a bug')\n"
        "s.run_study = broken\n"
        "from cli.main import entry\n"
        "sys.argv = ['mastplan', *sys.argv[1:]]\n"
        "entry()\n"
    )
    args = ["run", str(write_site(site_text)), "--out", str(tmp_path / "r"), "--outputs", "summary"]
    proc = subprocess.run([sys.executable, "-c", code, *args], capture_output=True, text=True, timeout=120)
    assert proc.returncode == 3, proc.stderr
    assert proc.stderr.count("\n") == 1 and "internal error: RuntimeError" in proc.stderr


@pytest.mark.parametrize(
    "args, option, words",
    [
        (("--outputs", "plots", "--no-plots"), "--outputs", "--no-plots"),
        (("--outputs", "summary,plots", "--no-plots"), "--outputs", "--no-plots"),
        (("--outputs", ""), "--outputs", "nothing would be written"),
        (("--outputs", " , "), "--outputs", "nothing would be written"),
        (("--outputs", "summary,pictures"), "--outputs", "pictures is not an output"),
    ],
)
def test_run_options_that_would_mislead_exit_2(tmp_path, write_site, site_text, args, option, words):
    res = _run("run", write_site(site_text), "--out", tmp_path / "r", *args)
    line = _one_line(res)
    assert res.exit_code == 2 and option in line and words in line
    assert not (tmp_path / "r").exists() and not _leftovers(tmp_path)


def test_no_plots_with_the_default_outputs_is_no_contradiction(tmp_path, write_site, site_text):
    res = _run("run", write_site(site_text), "--out", tmp_path / "r", "--no-plots", "-q")
    assert res.exit_code == 0, res.output
    assert (tmp_path / "r" / "summary.json").exists() and not list((tmp_path / "r").glob("*.png"))


@pytest.mark.parametrize(
    "args, option, words",
    [
        (("--rdh-band", "18", "15"), "--rdh-band", "LOW < HIGH"),
        (("--rdh-band", "15", "15"), "--rdh-band", "LOW < HIGH"),
        (("--rdh-band", "-1", "18"), "--rdh-band", "0 < LOW"),
        (("--offset", "0", "100", "25"), "--offset", "FROM > 0"),
        (("--setback", "-50", "300", "10"), "--setback", "FROM > 0"),
    ],
)
def test_sweep_options_that_would_mislead_exit_2(tmp_path, write_site, site_text, args, option, words):
    res = _run("sweep", write_site(site_text), "--out", tmp_path / "s", "--no-plots", *args)
    line = _one_line(res)
    assert res.exit_code == 2 and option in line and words in line, line
    assert not (tmp_path / "s").exists()


def test_a_folder_that_cannot_be_replaced_exits_2_and_keeps_the_earlier_results(
    tmp_path, write_site, site_text, monkeypatch
):
    # The system refuses to move the earlier results aside, as it does for a folder without write
    # permission (rename(2): EACCES); made to happen here so that it is tested as root too.
    site = write_site(site_text)
    out = tmp_path / "r"
    assert _run("run", site, "--out", out, "--outputs", "summary", "-q").exit_code == 0
    before = (out / "summary.json").read_bytes()
    real_rename = os.rename

    def refused(src, dst):
        if Path(src) == out:
            raise PermissionError(13, "Permission denied")
        return real_rename(src, dst)

    monkeypatch.setattr(os, "rename", refused)
    res = _run("run", site, "--out", out, "--outputs", "summary,tables", "--overwrite", "-q")
    line = _one_line(res)
    assert res.exit_code == 2 and f"cannot replace {out}" in line and "permissions" in line
    assert sorted(p.name for p in out.iterdir()) == ["summary.json"] and (out / "summary.json").read_bytes() == before
    assert not _leftovers(tmp_path)


@as_root
def test_a_parent_without_write_permission_exits_2_before_the_study(tmp_path, write_site, site_text):
    site = write_site(site_text)
    locked = tmp_path / "locked"
    locked.mkdir()
    locked.chmod(0o555)
    try:
        res = _run("run", site, "--out", locked / "r", "--outputs", "summary", "-q")
        line = _one_line(res)
        assert res.exit_code == 2 and str(locked / "r") in line and "Permission denied" in line
        assert list(locked.iterdir()) == []
    finally:
        locked.chmod(0o755)


@as_root
def test_a_read_only_output_folder_exits_2_and_leaves_no_old_folder(tmp_path, write_site, site_text):
    site = write_site(site_text)
    out = tmp_path / "r"
    assert _run("run", site, "--out", out, "--outputs", "summary", "-q").exit_code == 0
    out.chmod(0o555)  # renaming a folder to another parent needs write permission on the folder itself
    try:
        res = _run("run", site, "--out", out, "--outputs", "summary", "--overwrite", "-q")
        line = _one_line(res)
        assert res.exit_code == 2 and str(out) in line and "permissions" in line
        assert (out / "summary.json").exists() and not _leftovers(tmp_path)
    finally:
        out.chmod(0o755)


def test_a_later_run_removes_the_folders_of_earlier_runs_that_ended(tmp_path, write_site, site_text):
    site = write_site(site_text)
    out = tmp_path / "r"
    assert _run("run", site, "--out", out, "--outputs", "summary", "-q").exit_code == 0
    child = subprocess.Popen([sys.executable, "-c", ""])
    child.wait()  # its number now names no process
    gone = child.pid
    for name in (f".r.partial-{gone}-abc", f".r.old-{gone}-abc/r", ".r.old-k2j4_x9q/r"):  # the last: older versions
        (tmp_path / name).mkdir(parents=True)
        (tmp_path / name / "x.txt").write_text("left by a run that ended\n")
    running = subprocess.Popen([sys.executable, "-c", "import sys; sys.stdin.read()"], stdin=subprocess.PIPE)
    try:  # it runs until its input is closed
        kept = [f".r.partial-{running.pid}-live", f".rx.old-{gone}-abc"]  # a running process's; another folder's
        for name in kept:
            (tmp_path / name).mkdir()
        res = _run("run", site, "--out", out, "--outputs", "summary", "--overwrite", "-q")
    finally:
        running.communicate()
    assert res.exit_code == 0, res.output
    assert _leftovers(tmp_path) == sorted(kept)


def test_earlier_results_left_aside_by_a_killed_run_come_back(tmp_path, write_site, site_text):
    # A run killed between its two renames: the earlier results in its .old- folder, none at --out.
    site = write_site(site_text)
    child = subprocess.Popen([sys.executable, "-c", ""])
    child.wait()
    aside = tmp_path / f".r.old-{child.pid}-abc" / "r"
    aside.mkdir(parents=True)
    (aside / "summary.json").write_text("{}\n")
    res = _run("run", site, "--out", tmp_path / "r", "--outputs", "summary", "-q")
    assert res.exit_code == 2 and "--overwrite" in _one_line(res)  # they are back, so not replaced unasked
    assert (tmp_path / "r" / "summary.json").read_text() == "{}\n" and not _leftovers(tmp_path)
