"""Allowed building heights: the time of the issue's grid, measured on a sample of its cells.

The issue's goal (issue 22): a 4 km x 4 km grid at 20 m (40,000 cells) around the demo's mast, one
footprint (the default hangar, 80 m x 60 m), both orientations, within 120 s on 2 cores. This
benchmark times the command's own computation (:func:`geo.optics.building_heights.allowed_heights`)
on an evenly spread sample of that grid's cells (default 10 x 10: every 20th cell each way), with
the demo's DEM (surface prediction off: the map stands on the reflecting plane), and prints the
measured time, the cell evaluations per cell, the time per cell evaluation, and the time the whole
grid would take at that rate (the sample's mix of cells is the grid's, spread evenly over it).
``--full`` runs the whole grid instead (hours at the measured rate).

Prints figures; never fails by timing.
"""

from __future__ import annotations

import dataclasses
import os
import sys
import time
from pathlib import Path

import numpy as np

from geo.optics.areas import array_model
from geo.optics.building_heights import HeightSettings, _ground, allowed_heights, cell_grid
from geo.radio.structure_limits import structure_segments
from geo.site.site_file import load_site
from geo.study.buildings import study_receivers
from geo.study.site_study import run_study

SITE = Path(__file__).resolve().parents[1] / "demo_airfield" / "site.toml"


def main(argv: list[str]) -> None:
    full = "--full" in argv
    per_side = int(next((a.split("=", 1)[1] for a in argv if a.startswith("--per-side=")), "10"))
    spec = load_site(SITE)
    spec = dataclasses.replace(spec, prediction=dataclasses.replace(spec.prediction, surface=False))
    result = run_study(spec)
    settings = HeightSettings()  # 2 km each way, 20 m: the 40,000 cells
    model = array_model(result)
    segments = structure_segments(spec.category, result.rdh_m, spec.angle_deg)
    receivers = study_receivers(result)  # as the command gives them
    u_axis, w_axis = cell_grid(settings)
    if not full:
        pick = np.linspace(0, u_axis.size - 1, per_side).round().astype(int)
        u_axis, w_axis = u_axis[pick], w_axis[pick]
    uu, ww = np.meshgrid(u_axis, w_axis)
    u, w = uu.ravel(), ww.ravel()
    _, base = _ground(result, u, w, model)
    sample = "all" if full else f"{per_side} x {per_side}, spread evenly"
    print(f"{os.cpu_count()} cores; {receivers.points_m.shape[0]} receivers on the path; {u.size:,} cells "
          f"of the 40,000 ({sample}), both orientations")  # fmt: skip
    start = time.perf_counter()
    evaluations = 0
    for orientation in settings.orientations:
        t0 = time.perf_counter()
        found = allowed_heights(model, receivers, segments, u, w, base, settings, orientation)
        evaluations += found.evaluations
        h = found.height_m[np.isfinite(found.height_m)]
        print(f"  {orientation}: {time.perf_counter() - t0:.1f} s, {found.evaluations:,} cell evaluations, "
              f"allowed heights {h.min():.1f} to {h.max():.1f} m (median {np.median(h):.1f} m)")  # fmt: skip
    took = time.perf_counter() - start
    per_eval = took / evaluations
    print(f"Measured: {took:.1f} s for {u.size:,} cells x 2 orientations; {evaluations / (2 * u.size):.2f} "
          f"evaluations per cell; {1000 * per_eval:.0f} ms per cell evaluation")  # fmt: skip
    if not full:
        whole = took * 40_000 / u.size
        print(f"The issue's 40,000 cells x 2 orientations at this rate: about {whole:,.0f} s ({whole / 3600:.1f} h), "
              f"against the goal of 120 s")  # fmt: skip


if __name__ == "__main__":
    main(sys.argv[1:])
