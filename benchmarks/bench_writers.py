"""CPU time of each writer task of `mastplan run` on the demo site, in the writer processes.

`mastplan run` forks two writer processes (geo/outputs/background.py) before the study: one draws
the plots (``write_plots`` of the study before its surface prediction, then
``write_surface_plot``), the other renders the map and writes the GeoPackage (``write_map``,
``write_gpkg``). They run while the main process computes the surface prediction on both cores, so
each CPU second they spend costs about half a second of the run's wall time.

Here the demo study is computed once, in a process of its own, and kept (its state before the
surface prediction too, as `mastplan run` hands it to the writers). Then, each round, a
:class:`~geo.outputs.background.BackgroundWriter` is started as `mastplan run` starts it (its
workers import ahead what they import there), is handed the four tasks, and each task times itself
with its process CPU time (user + system, ``resource.getrusage``), writing into a temporary
folder. Prints medians over the rounds; never fails by timing. Other work on the machine inflates
the figures: the load average is printed with them.
"""

from __future__ import annotations

import os
import pickle
import resource
import statistics
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
ROUNDS = int(os.environ.get("BENCH_ROUNDS", "7"))
TASKS = ("write_plots", "write_surface_plot", "write_map", "write_gpkg")

#: The demo study and its state before the surface prediction, pickled to argv[1].
STUDY = """
import pickle, sys
from demo_airfield import SITE_FILE
from geo.outputs.geojson import study_layers
from geo.site.site_file import load_site
from geo.study.site_study import run_study

kept = []
result = run_study(load_site(SITE_FILE), before_surface=kept.append)
with open(sys.argv[1], "wb") as f:
    pickle.dump((kept[0], result, study_layers(kept[0])), f)
"""


def _cpu() -> float:
    usage = resource.getrusage(resource.RUSAGE_SELF)
    return usage.ru_utime + usage.ru_stime


def _timed(name: str, func, args: tuple, log: str) -> None:
    """Run one writer task in a worker and append its CPU time to ``log``."""
    start = _cpu()
    func(*args)
    spent = _cpu() - start
    with open(log, "a", encoding="utf-8") as f:
        f.write(f"{name} {spent}\n")


def _round(study: Path, log: str) -> None:
    """One run of the four tasks in freshly started writer processes."""
    from geo.outputs.background import BackgroundWriter
    from geo.outputs.gpkg import write_gpkg
    from geo.outputs.plots import write_plots, write_surface_plot
    from geo.outputs.webmap import write_map

    with BackgroundWriter(("plots", "map", "gpkg")) as background, tempfile.TemporaryDirectory() as tmp:
        with open(study, "rb") as f:
            partial, result, layers = pickle.load(f)
        out = Path(tmp)
        background.submit(_timed, "write_plots", write_plots, (partial, out), log, output="plots")
        background.submit(_timed, "write_surface_plot", write_surface_plot, (result, out), log, output="plots")
        background.submit(_timed, "write_map", write_map, (partial, layers, out / "map.html"), log, output="map")
        background.submit(_timed, "write_gpkg", write_gpkg, (layers, out / "site.gpkg"), log, output="gpkg")
        background.wait()


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        study = Path(tmp) / "study.pkl"
        subprocess.run([sys.executable, "-c", STUDY, str(study)], check=True, cwd=ROOT)
        figures: dict[str, list[float]] = {name: [] for name in TASKS}
        for i in range(ROUNDS):
            log = Path(tmp) / f"round{i}.txt"
            _round(study, str(log))
            for line in log.read_text(encoding="utf-8").splitlines():
                name, value = line.split()
                figures[name].append(float(value))
    print(f"load average {os.getloadavg()[0]:.2f}; {ROUNDS} rounds; CPU time per task in its writer process")
    for name, values in figures.items():
        median, low, high = statistics.median(values), min(values), max(values)
        print(f"  {name:20s} median {median:.3f} s  min {low:.3f} s  max {high:.3f} s")
    total = [sum(values[i] for values in figures.values()) for i in range(ROUNDS)]
    print(f"  {'all four':20s} median {statistics.median(total):.3f} s")


if __name__ == "__main__":
    sys.path.insert(0, str(ROOT))
    main()
