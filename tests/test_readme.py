"""README's library example runs as written, on a copy of the demo airfield."""

from __future__ import annotations

import contextlib
import io
import json
import re
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
