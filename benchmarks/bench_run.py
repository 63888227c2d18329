"""Wall time of `mastplan run` on the demo site, as a user runs it (a new process each time).

First the full run against the import floor: the bare start of Python with the libraries every
study needs (`python -c "import numpy, pyproj, shapely, rasterio"`), timed in turns with the full
run (every output, as `mastplan demo` writes them) so that both see the same machine load; the
figure is the ratio of the medians. Goal for reference (issue 13): the full run within 7 times the
floor on 2 cores.

Then variants: without plots, the study with only its summary and GeoJSON layers (the site-study
core's outputs), and that on flat ground (the demo site with its [terrain] table removed).
Prints figures; never fails by timing. Other work on the machine slows every figure: the load
average is printed with them.
"""

from __future__ import annotations

import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
SITE = ROOT / "demo_airfield" / "site.toml"
RUNS = 7
FLOOR = "import numpy, pyproj, shapely, rasterio"


def _once(args: list[str], cpu: list[float] | None = None) -> float:
    """Wall time of one run; its CPU time (every process it started) appended to ``cpu``."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    start = time.perf_counter()
    subprocess.run([sys.executable, *args], check=True, cwd=ROOT)
    wall = time.perf_counter() - start
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    if cpu is not None:
        cpu.append(after.ru_utime + after.ru_stime - before.ru_utime - before.ru_stime)
    return wall


def _run_args(site: Path, tmp: str, *extra: str) -> list[str]:
    return ["-m", "cli.main", "run", str(site), "--out", f"{tmp}/r", "--overwrite", "--quiet", *extra]


def _line(label: str, t: list[float]) -> str:
    return f"{label}, {len(t)} runs: median {statistics.median(t):.3f} s, min {min(t):.3f} s, max {max(t):.3f} s"


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        _once(_run_args(SITE, tmp))  # warm the file cache and the bytecode
        floor, full, cpu = [], [], []
        for _ in range(RUNS):
            floor.append(_once(["-c", FLOOR]))
            full.append(_once(_run_args(SITE, tmp), cpu))
        print(_line(f'import floor (python -c "{FLOOR}")', floor))
        print(_line("mastplan run (demo site, every output)", full))
        print(f"full run / import floor (medians): {statistics.median(full) / statistics.median(floor):.2f}")
        print(
            f"full run CPU time, all processes: median {statistics.median(cpu):.3f} s "
            f"(CPU / wall {statistics.median(cpu) / statistics.median(full):.2f}: above 1 where processes overlap)"
        )
        print(f"load average at the end (1 min): {os.getloadavg()[0]:.2f} on {os.cpu_count()} CPUs")

        flat = Path(tmp) / "flat.toml"
        flat.write_text(SITE.read_text().split("[terrain]")[0])
        core = ("--outputs", "summary,layers")
        for label, site, extra in [
            ("demo site, --no-plots", SITE, ("--no-plots",)),
            ("demo site, summary and GeoJSON layers", SITE, core),
            ("demo site on flat ground, summary and GeoJSON layers", flat, core),
        ]:
            t = [_once(_run_args(site, tmp, *extra)) for _ in range(RUNS)]
            print(_line(f"mastplan run ({label})", t))
        print(f"bare interpreter start {_once(['-c', 'pass']):.3f} s")


if __name__ == "__main__":
    main()
