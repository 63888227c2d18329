"""Siting sweep on a 1 m DEM: candidates per second, against the single-site pipeline per candidate.

Makes the 10,000 x 10,000 cell 1 m DEM of bench_terrain.py, sweeps a grid of candidates on both
sides (reflecting plane in each candidate's own zone, slope-corrected heights, RDH, roughness,
grading volumes, Annex 14 clearance), then times the single-site study (geo.study.site_study.run_study) and
the single-site terrain analysis alone at a few of the same candidates. Prints figures; never
fails by timing. Requirement for reference: at least 500 candidates per second.
"""

from __future__ import annotations

import dataclasses
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

from bench_terrain import make_dem, write_site  # noqa: E402

from geo.site.site_file import MastSpec, SiteSpec, load_site  # noqa: E402
from geo.study.site_study import run_study  # noqa: E402
from geo.study.sweep import SweepOptions, run_sweep  # noqa: E402


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        dem = Path(tmp) / "dem_1m.tif"
        make_dem(dem)
        site = write_site(Path(tmp), dem, setback_m=300.0)
        spec: SiteSpec = load_site(site)
        options = SweepOptions(tuple(np.arange(230.0, 381.0, 2.0)), tuple(np.arange(80.0, 201.0, 20.0)))
        run_sweep(spec, SweepOptions((300.0,), (120.0,)))  # imports and caches
        start = time.perf_counter()
        sweep = run_sweep(spec, options)
        elapsed = time.perf_counter() - start
        rate = len(sweep) / elapsed
        print(
            f"sweep on a 1 m DEM: {len(sweep):,} candidates in {elapsed:.2f} s = {rate:,.0f} candidates/s "
            f"(grid {sweep.grid_spacing_m:g} m, {int(sweep.columns['feasible'].sum())} feasible)"
        )
        picks = np.linspace(0, len(sweep) - 1, 4).astype(int)
        times, terrain_times = [], []
        for k in picks:
            c = sweep.columns
            one = dataclasses.replace(
                spec,
                mast=MastSpec(
                    side=str(c["side"][k]), offset_m=float(c["offset_m"][k]), setback_m=float(c["setback_m"][k])
                ),
            )
            start = time.perf_counter()
            result = run_study(one)
            times.append(time.perf_counter() - start)
            from geo.ground.dem import Dem
            from geo.ground.terrain import analyse_terrain

            with Dem.open(dem) as d:
                start = time.perf_counter()
                analyse_terrain(
                    d,
                    result.runway.frame,
                    result.mast.side,
                    result.mast.setback_m,
                    result.mast.offset_m,
                    spec.array,
                    result.wavelength_m,
                    spec.angle_deg,
                )
                terrain_times.append(time.perf_counter() - start)
        per = float(np.median(times))
        per_terrain = float(np.median(terrain_times))
        print(
            f"single-site study per candidate: {per:.3f} s ({1 / per:.1f} candidates/s); sweep is "
            f"{rate * per:,.0f}x faster. Terrain analysis alone: {per_terrain:.3f} s per candidate; sweep is "
            f"{rate * per_terrain:,.0f}x faster"
        )


if __name__ == "__main__":
    main()
