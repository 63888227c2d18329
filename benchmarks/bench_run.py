"""Wall time of `mastplan run` on the demo site, as a user runs it (new process each time).

Prints figures; never fails by timing. Requirement for reference: under 1.5 s on 2 cores.
"""

from __future__ import annotations

import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
SITE = ROOT / "demo_airfield" / "site.toml"
RUNS = 7


def main() -> None:
    times = []
    with tempfile.TemporaryDirectory() as tmp:
        for i in range(RUNS):
            start = time.perf_counter()
            subprocess.run(
                [sys.executable, "-m", "cli.main", "run", str(SITE), "--out", f"{tmp}/r{i}", "--quiet"],
                check=True,
                cwd=ROOT,
            )
            times.append(time.perf_counter() - start)
        start = time.perf_counter()
        subprocess.run([sys.executable, "-c", "pass"], check=True)
        bare = time.perf_counter() - start
    print(f"mastplan run (demo site), {RUNS} runs: median {statistics.median(times):.3f} s, "
          f"min {min(times):.3f} s, max {max(times):.3f} s (bare interpreter start {bare:.3f} s)")


if __name__ == "__main__":
    main()
