"""README's library example runs as written, on a copy of the demo airfield."""

from __future__ import annotations

import contextlib
import csv
import io
import json
import re
import shlex
import shutil
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def library_example() -> str:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    section = text.split("## As a Python library", 1)[1].split("\n## ", 1)[0]
    blocks = re.findall(r"```python\n(.*?)```", section, flags=re.S)
    assert len(blocks) == 1, "the library section holds one Python example"
    return blocks[0]


def test_the_library_example_runs_and_writes_the_study(tmp_path, monkeypatch):
    shutil.copytree(ROOT / "demo_airfield", tmp_path / "demo_airfield", ignore=shutil.ignore_patterns("*.py"))
    monkeypatch.chdir(tmp_path)
    shown = io.StringIO()
    with contextlib.redirect_stdout(shown):
        exec(compile(library_example(), "README.md", "exec"), {"__name__": "readme_example"})
    lines = shown.getvalue().splitlines()
    rdh = float(re.match(r"RDH (\S+) m", lines[0]).group(1))
    # The demo is sited for the Annex 10 RDH: 15 m, tolerance +3 m (Annex 10 Vol I 3.1.5.1.4).
    assert 15.0 <= rdh <= 18.0
    summary = json.loads((tmp_path / "out/library-demo/summary.json").read_text(encoding="utf-8"))
    assert f"{summary['rdh_m']:.2f}" == f"{rdh:.2f}"
    assert not list((tmp_path / "out/library-demo").glob("*.png"))  # plots=False
    assert re.fullmatch(r"12 candidates; best: (\d+|None)", lines[-1])  # 3 setbacks x 2 offsets x both sides


def command_lines(text: str) -> list[str]:
    """The command lines of README's ``sh`` blocks, comments and ``make`` lines aside."""
    lines = []
    for block in re.findall(r"```sh\n(.*?)```", text, flags=re.S):
        for line in block.splitlines():
            line = line.split(" #", 1)[0].strip()
            if line and not line.startswith("make "):
                lines.append(line)
    return lines


def test_every_command_line_of_the_readme_is_a_mastplan_command():
    lines = command_lines((ROOT / "README.md").read_text(encoding="utf-8"))
    assert lines and all(line.startswith("mastplan ") for line in lines), lines
    # The parser must be able to fail: a block with a stray command is seen.
    assert command_lines("```sh\nmake demo\nrm -rf out  # no\n```\n") == ["rm -rf out"]


def test_every_example_file_is_run_by_a_readme_command():
    text = " ".join(command_lines((ROOT / "README.md").read_text(encoding="utf-8")))
    inputs = sorted(p for p in (ROOT / "examples").rglob("*") if p.suffix in (".toml", ".csv"))
    assert inputs
    for path in inputs:
        assert path.relative_to(ROOT).as_posix() in text, f"{path} is run by no command in README"


def test_every_readme_command_runs_as_written(tmp_path, monkeypatch):
    from click.testing import CliRunner

    from cli.main import main

    # A copy of the examples, and of the demo DEM they name by relative path; outputs go under tmp_path.
    shutil.copytree(ROOT / "examples", tmp_path / "examples", ignore=shutil.ignore_patterns("*.py", "__pycache__"))
    (tmp_path / "demo_airfield").mkdir()
    shutil.copy2(ROOT / "demo_airfield" / "dem.tif", tmp_path / "demo_airfield")
    shutil.copy2(ROOT / "demo_airfield" / "site.toml", tmp_path / "demo_airfield")  # compare-measured's site
    monkeypatch.chdir(tmp_path)
    for line in command_lines((ROOT / "README.md").read_text(encoding="utf-8")):
        args = shlex.split(line)[1:]
        result = CliRunner().invoke(main, args, catch_exceptions=False)
        assert result.exit_code == 0, f"{line}\n{result.output}"
        out = Path(args[args.index("--out") + 1]) if "--out" in args else None
        if out is not None:
            assert (out / "summary.json").is_file() or (out / "index.csv").is_file(), line
    with open(tmp_path / "out/examples/batch/index.csv", encoding="utf-8", newline="") as index:
        statuses = [row["status"] for row in csv.DictReader(index)]
    assert statuses == ["done"] * 3  # every site of the batch: one site file and two CSV rows
    feet = json.loads((tmp_path / "out/examples/feet/summary.json").read_text(encoding="utf-8"))
    assert feet["input"]["units"] == "ft" and "skipped" in feet["prediction"]["surface"]  # surface = false


def test_the_tiles_script_reproduces_the_committed_tiles(tmp_path):
    # The example's tiles are invented; their script must be deterministic so the committed files can be remade.
    import importlib.util

    import numpy as np
    import rasterio

    spec = importlib.util.spec_from_file_location("make_tiles", ROOT / "examples/tiles/make_tiles.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    for fresh in module.make(tmp_path):
        with rasterio.open(fresh) as a, rasterio.open(ROOT / "examples/tiles" / fresh.name) as b:
            assert a.crs == b.crs and a.transform == b.transform
            np.testing.assert_array_equal(a.read(1), b.read(1))
