"""The issue's sweep on the demo (setbacks 200-400 m by 2 m, offsets 60-200 m by 5 m, both sides).

Prints the best candidate, how many candidates the obstacle free zone rules out, the time of the
sweep, its ranking, and of the solved setbacks; never fails by timing.
"""

from __future__ import annotations

import time
from pathlib import Path

import numpy as np

from geo.site.site_file import load_site
from geo.study.solved_setbacks import solve_setbacks
from geo.study.sweep import SweepOptions, run_sweep
from geo.study.sweep_choice import add_ranks, near_feasible
from geo.units import format_length

ROOT = Path(__file__).resolve().parents[1]


def main() -> None:
    spec = load_site(ROOT / "demo_airfield" / "site.toml")
    setbacks = tuple(200.0 + 2.0 * i for i in range(101))
    offsets = tuple(60.0 + 5.0 * i for i in range(29))
    options = SweepOptions(setbacks, offsets, ("left", "right"))
    start = time.perf_counter()
    result = run_sweep(spec, options)
    swept = time.perf_counter() - start
    start = time.perf_counter()
    add_ranks(result, options, spec)
    ranked = time.perf_counter() - start
    c = result.columns
    ofz = np.array(["obstacle free zone" in r for r in result.reasons])
    k = result.best
    print(
        f"sweep: {len(result):,} candidates in {swept:.2f} s, ranked in {ranked:.3f} s; "
        f"{int(c['feasible'].sum()):,} feasible; {int(ofz.sum()):,} in the obstacle free zone "
        f"(largest such offset {c['offset_m'][ofz].max():.0f} m)"
    )
    print(
        f"best: {c['side'][k]} side, setback {format_length(c['setback_m'][k], 'm', 1)}, "
        f"offset {format_length(c['offset_m'][k], 'm', 1)}, mast top {c['mast_top_height_m'][k]:.2f} m, "
        f"score {c['score'][k]:.1f}"
    )
    iev = run_sweep(spec, SweepOptions(setbacks[::5], offsets[::4], ("right",), roughness_criterion="iev"))
    print(
        f"IEV criterion: {int(iev.columns['feasible'].sum())} feasible, "
        f"{near_feasible(iev.columns, iev.reasons).size} near-feasible"
    )
    start = time.perf_counter()
    solved, _, settled = solve_setbacks(spec, SweepOptions((), offsets, ("left", "right")))
    print(
        f"solved setbacks: {len(solved)} candidates in {time.perf_counter() - start:.2f} s, "
        f"{int(settled.sum())} settled; RDH {np.nanmin(solved.columns['rdh_m']):.3f}-"
        f"{np.nanmax(solved.columns['rdh_m']):.3f} m (target {spec.target_rdh_m} m)"
    )


if __name__ == "__main__":
    main()
