"""The test suite on a loaded machine: ``make test``'s command run several times while busy processes run.

Starts ``--busy`` processes (2 by default) that keep a core each busy with a pure-Python loop, then
runs the whole suite ``--runs`` times in a row (5 by default) with the command of the Makefile's
``test`` target (``python -m pytest`` and its options, read from the Makefile), and prints for each
run the wall time, the CPU time of the suite's processes (user + sys), the load average and the
counts of passed, failed, skipped and erroring tests; at the end the failures of all runs. The busy
processes end by themselves after ``--busy-limit`` seconds and are killed when the benchmark ends.

A benchmark, not a test: it exits 0 whatever the figures (non-zero only for bad arguments).

Example::

    .venv/bin/python benchmarks/bench_tests_loaded.py            # 5 runs, 2 busy processes
    .venv/bin/python benchmarks/bench_tests_loaded.py --runs 2 -- -x
"""

from __future__ import annotations

import argparse
import os
import re
import resource
import shlex
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]

#: A busy process: pure-Python arithmetic until its time is up (argv[1], seconds).
BUSY = """
import sys, time
end = time.monotonic() + float(sys.argv[1])
while time.monotonic() < end:
    sum(i * i for i in range(10_000))
"""

#: pytest's last line, e.g. "2 failed, 637 passed, 1 skipped, 2 warnings in 155.72s (0:02:35)".
COUNT = re.compile(r"(\d+) (passed|failed|skipped|errors?|xfailed|xpassed|deselected)\b")


def make_test_args(makefile: Path = ROOT / "Makefile") -> list[str]:
    """The options ``make test`` gives pytest: the words after ``-m pytest`` in the ``test`` target's recipe."""
    lines = makefile.read_text(encoding="utf-8").splitlines()
    in_test = False
    for line in lines:
        if re.match(r"^test\s*:", line):
            in_test = True
            continue
        if in_test:
            if not line.startswith("\t"):
                break
            words = shlex.split(line.strip())
            if "-m" in words and words[words.index("-m") + 1 : words.index("-m") + 2] == ["pytest"]:
                return words[words.index("-m") + 2 :]
    raise SystemExit(f"no 'python -m pytest' line in the test target of {makefile}")


def children_cpu_s() -> float:
    """User + sys time of the finished child processes (and the ones they waited for). [s]"""
    usage = resource.getrusage(resource.RUSAGE_CHILDREN)
    return usage.ru_utime + usage.ru_stime


def start_busy(count: int, limit_s: float) -> list[subprocess.Popen]:
    return [
        subprocess.Popen([sys.executable, "-c", BUSY, str(limit_s)], stdout=subprocess.DEVNULL) for _ in range(count)
    ]


def stop_busy(procs: list[subprocess.Popen]) -> None:
    for proc in procs:
        if proc.poll() is None:
            proc.kill()
    for proc in procs:
        proc.wait()


def run_suite(command: list[str], log: Path) -> dict:
    """One run of the suite; its figures and failures (the output goes to ``log``)."""
    cpu0, wall0 = children_cpu_s(), time.perf_counter()
    with log.open("w", encoding="utf-8") as fh:
        proc = subprocess.run(command, cwd=ROOT, stdout=fh, stderr=subprocess.STDOUT, text=True)
    wall, cpu = time.perf_counter() - wall0, children_cpu_s() - cpu0
    text = log.read_text(encoding="utf-8", errors="replace")
    summary = next((line for line in reversed(text.splitlines()) if " in " in line and COUNT.search(line)), "")
    counts = {"passed": 0, "failed": 0, "skipped": 0, "errors": 0}
    for n, word in COUNT.findall(summary):
        key = "errors" if word.startswith("error") else word
        if key in counts:
            counts[key] = int(n)
    failures = [line.split(" - ")[0] for line in text.splitlines() if line.startswith(("FAILED ", "ERROR "))]
    return {
        "wall_s": wall,
        "cpu_s": cpu,
        "exit": proc.returncode,
        "load": os.getloadavg(),
        **counts,
        "failures": failures,
    }


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--runs", type=int, default=5, help="runs of the suite in a row (default 5)")
    parser.add_argument("--busy", type=int, default=2, help="busy processes meanwhile (default 2)")
    parser.add_argument(
        "--busy-limit", type=float, default=None, help="seconds after which a busy process ends (default: 15 min a run)"
    )
    parser.add_argument("--python", default=sys.executable, help="the interpreter that runs pytest")
    parser.add_argument("--logs", type=Path, default=Path("/tmp/mastplan-bench-tests"), help="folder for the logs")
    parser.add_argument("pytest_args", nargs="*", help="more pytest options, after --")
    args = parser.parse_args(argv)
    if args.runs < 1 or args.busy < 0:
        parser.error("--runs must be at least 1 and --busy at least 0")
    command = [args.python, "-m", "pytest", *make_test_args(), *args.pytest_args]
    args.logs.mkdir(parents=True, exist_ok=True)
    limit = args.busy_limit if args.busy_limit is not None else 900.0 * args.runs
    print(f"command: {shlex.join(command)}  (cwd {ROOT})")
    print(f"{args.busy} busy processes (each at most {limit:.0f} s), {args.runs} runs, {os.cpu_count()} CPUs")
    print(f"logs in {args.logs}")
    busy = start_busy(args.busy, limit)
    results = []
    try:
        for i in range(1, args.runs + 1):
            r = run_suite(command, args.logs / f"run{i}.log")
            results.append(r)
            print(
                f"run {i}: wall {r['wall_s']:6.1f} s, CPU {r['cpu_s']:6.1f} s (user+sys), "
                f"load {r['load'][0]:.1f}; {r['passed']} passed, {r['failed']} failed, {r['skipped']} skipped, "
                f"{r['errors']} errors (exit {r['exit']})",
                flush=True,
            )
            for name in r["failures"]:
                print(f"    {name}", flush=True)
    except KeyboardInterrupt:
        print("interrupted", flush=True)
    finally:
        stop_busy(busy)
    if results:
        walls = [r["wall_s"] for r in results]
        print(
            f"{len(results)} runs: wall {min(walls):.1f}-{max(walls):.1f} s (mean {sum(walls) / len(walls):.1f} s); "
            f"failures in total {sum(r['failed'] + r['errors'] for r in results)}"
        )
        every = sorted({name for r in results for name in r["failures"]})
        for name in every:
            runs = [str(i) for i, r in enumerate(results, 1) if name in r["failures"]]
            print(f"    {name}  (run {', '.join(runs)})")
    return 0


if __name__ == "__main__":
    sys.exit(main())
