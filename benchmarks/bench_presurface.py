"""Wall time of the study before its surface prediction, on the demo site (a new process each time).

`mastplan run` runs the study up to its surface prediction on one core while the writer processes
wait for its result (``run_study``'s ``before_surface`` hook): every tenth of a second there is a
tenth of a second of the whole run. Each turn starts a new Python, imports the study and reads the
site file (timed apart), then times ``run_study`` until the hook is called (the hook stops it), wall and CPU time.

``--against DIR`` times another checkout of mastplan (say, an export of main) in the same turns,
alternating with this one, so that both see the same machine load. Prints figures; never fails by
timing. The load average is printed with them.
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]

#: One turn: prints the import time and the time to the hook.
TURN = """
import sys, time
start = time.perf_counter()
from geo.site.site_file import load_site
from geo.study.site_study import run_study
spec = load_site(sys.argv[1])
imported, cpu = time.perf_counter(), time.process_time()

class _Stop(Exception):
    pass

def stop(partial):
    raise _Stop

try:
    run_study(spec, before_surface=stop)
except _Stop:
    pass
print(imported - start, time.perf_counter() - imported, time.process_time() - cpu)
"""


def _turn(root: Path) -> tuple[float, float, float]:
    env = dict(os.environ, PYTHONPATH=str(root))
    done = subprocess.run(
        [sys.executable, "-c", TURN, str(root / "demo_airfield" / "site.toml")],
        check=True,
        cwd=root,
        env=env,
        capture_output=True,
        text=True,
    )
    imported, phase, cpu = (float(v) for v in done.stdout.split()[-3:])
    return imported, phase, cpu


def _line(label: str, t: list[float]) -> str:
    return f"{label}: median {statistics.median(t):.3f} s, min {min(t):.3f} s, max {max(t):.3f} s"


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=9)
    parser.add_argument("--against", type=Path, help="another checkout, timed in the same turns")
    args = parser.parse_args()
    roots = {"this checkout": ROOT}
    if args.against is not None:
        roots["against " + str(args.against)] = args.against.resolve()
    times = {label: ([], [], []) for label in roots}
    for _ in range(args.runs):
        for label, root in roots.items():
            for kept, value in zip(times[label], _turn(root)):
                kept.append(value)
    print(f"Study before the surface prediction, demo site, {args.runs} turns (load average {os.getloadavg()[0]:.2f})")
    for label, (imported, phase, cpu) in times.items():
        print(_line(f"  {label}, import and site file", imported))
        print(_line(f"  {label}, study to the surface prediction", phase))
        print(_line(f"  {label}, its CPU time (load moves it less)", cpu))


if __name__ == "__main__":
    main()
