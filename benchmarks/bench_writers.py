"""CPU time of each writer task of `mastplan run` on the demo site, in a writer process.

`mastplan run` forks two writer processes (geo/outputs/background.py): one draws the plots
(``write_plots`` of the study before its surface prediction, then ``write_surface_plot``), the
other renders the map and writes the GeoPackage (``write_map``, ``write_gpkg``). Here the demo study
is computed once (its state before the surface prediction kept, as `mastplan run` hands it to the
writers); then, in each round, one forked process per writer group imports ahead what the real
worker imports, and times each task with its process CPU time (user + system,
``resource.getrusage``), writing into a temporary folder. Prints medians; never fails by timing.
Other work on the machine inflates the figures: the load average is printed with them.
"""

from __future__ import annotations

import multiprocessing
import os
import resource
import statistics
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
ROUNDS = int(os.environ.get("BENCH_ROUNDS", "7"))
#: The writer groups timed: ``plots`` (the plot worker's tasks), ``map`` (the map and the GeoPackage).
GROUPS = tuple(os.environ.get("BENCH_GROUPS", "plots,map").split(","))


def _cpu() -> float:
    r = resource.getrusage(resource.RUSAGE_SELF)
    return r.ru_utime + r.ru_stime


def _group(conn, group: str, partial, result, layers, folder: str) -> None:
    """One writer process: the worker's imports ahead, then its tasks in the order `mastplan run` gives them."""
    from geo.outputs.background import _WARM_MODULES, _WARM_WITHOUT_DATAFRAMES
    from geo.outputs.imports import import_without_dataframes

    names = ("plots",) if group == "plots" else ("map", "gpkg")
    for name in names:
        if name in _WARM_WITHOUT_DATAFRAMES:
            import_without_dataframes(_WARM_WITHOUT_DATAFRAMES[name])
    import importlib

    for name in names:
        for module in _WARM_MODULES.get(name, ()):
            importlib.import_module(module)
    out = Path(folder)
    times = {}
    if group == "plots":
        from geo.outputs.plots import write_plots, write_surface_plot

        t = _cpu()
        write_plots(partial, out)
        times["write_plots"] = _cpu() - t
        t = _cpu()
        write_surface_plot(result, out)
        times["write_surface_plot"] = _cpu() - t
    else:
        from geo.outputs.gpkg import write_gpkg
        from geo.outputs.webmap import write_map

        t = _cpu()
        write_map(partial, layers, out / "map.html")
        times["write_map"] = _cpu() - t
        t = _cpu()
        write_gpkg(layers, out / "site.gpkg")
        times["write_gpkg"] = _cpu() - t
    conn.send(times)
    conn.close()


def main() -> None:
    from demo_airfield import SITE_FILE
    from geo.outputs.geojson import study_layers
    from geo.site import load_site
    from geo.study import run_study

    kept = []
    result = run_study(load_site(SITE_FILE), before_surface=kept.append)
    partial = kept[0]
    layers = study_layers(partial)
    ctx = multiprocessing.get_context("fork")
    figures: dict[str, list[float]] = {}
    keep = os.environ.get("BENCH_KEEP")
    for _ in range(ROUNDS):
        for group in GROUPS:
            with tempfile.TemporaryDirectory() as tmp:
                folder = keep or tmp
                parent, child = ctx.Pipe()
                proc = ctx.Process(target=_group, args=(child, group, partial, result, layers, folder))
                proc.start()
                for name, value in parent.recv().items():
                    figures.setdefault(name, []).append(value)
                proc.join()
    print(f"load average {os.getloadavg()[0]:.2f}; {ROUNDS} rounds; CPU time per task in a writer process")
    for name, values in figures.items():
        median, low, high = statistics.median(values), min(values), max(values)
        print(f"  {name:20s} median {median:.3f} s  min {low:.3f} s  max {high:.3f} s")
    total = [sum(v[i] for v in figures.values()) for i in range(ROUNDS)]
    print(f"  {'all four':20s} median {statistics.median(total):.3f} s")


if __name__ == "__main__":
    sys.path.insert(0, str(ROOT))
    main()
