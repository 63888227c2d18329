"""Wall time of `mastplan run` on the demo site, as a user runs it (a new process each time).

Variants: the full demo (every output), without plots, the study with only its summary and
GeoJSON layers (the site-study core's outputs), and that on flat ground (the demo site with its
[terrain] table removed, as the core had it).
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
RUNS = 5


def _time(site: Path, tmp: str, *extra: str) -> list[float]:
    times = []
    for _ in range(RUNS):
        start = time.perf_counter()
        subprocess.run(
            [
                sys.executable,
                "-m",
                "cli.main",
                "run",
                str(site),
                "--out",
                f"{tmp}/r",
                "--overwrite",
                "--quiet",
                *extra,
            ],
            check=True,
            cwd=ROOT,
        )
        times.append(time.perf_counter() - start)
    return times


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        flat = Path(tmp) / "flat.toml"
        flat.write_text(SITE.read_text().split("[terrain]")[0])
        core = ("--outputs", "summary,layers")
        for label, site, extra in [
            ("demo site, every output", SITE, ()),
            ("demo site, --no-plots", SITE, ("--no-plots",)),
            ("demo site, summary and GeoJSON layers", SITE, core),
            ("demo site on flat ground, summary and GeoJSON layers", flat, core),
        ]:
            t = _time(site, tmp, *extra)
            print(
                f"mastplan run ({label}), {RUNS} runs: median {statistics.median(t):.3f} s, "
                f"min {min(t):.3f} s, max {max(t):.3f} s"
            )
        start = time.perf_counter()
        subprocess.run([sys.executable, "-c", "pass"], check=True)
        print(f"bare interpreter start {time.perf_counter() - start:.3f} s")


if __name__ == "__main__":
    main()
