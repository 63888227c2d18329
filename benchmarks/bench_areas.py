"""Derived areas: 2,000 object positions x 2 headings x 300 receivers on the designed path.

The demo site on flat ground (its DEM left out), one large aircraft tail (generic sizes), the
grid sized to give 2,000 positions around the mast. Prints the time, the positions per second
and the facets per position; never fails by timing. Requirement for reference: within 60 s on
2 cores.
"""

from __future__ import annotations

import dataclasses
import os
import time
from pathlib import Path

import numpy as np

from geo.areas import derive_areas
from geo.objects import GENERIC_OBJECTS
from geo.site import AreaSpec, load_site
from geo.study import run_study

SITE = Path(__file__).resolve().parents[1] / "demo_airfield" / "site.toml"


def main() -> None:
    spec = load_site(SITE)
    # 50 x 40 positions at 10 m: 500 m ahead to 0 behind the mast... 390 m across.
    grid = AreaSpec(grid_m=10.0, ahead_m=490.0, behind_m=0.0, away_m=170.0, beyond_m=100.0)
    spec = dataclasses.replace(spec, terrain=None, objects=(GENERIC_OBJECTS[0],), areas=grid)
    result = run_study(spec)
    start = time.perf_counter()
    areas = derive_areas(result, receivers_count=300)
    took = time.perf_counter() - start
    d = areas.disturbances[0]
    positions = d.ahead_m.size
    computed = int((~d.at_mast).sum())
    print(
        f"Derived areas, {positions:,} positions ({computed:,} computed, the rest against the mast) x "
        f"{len(d.share)} headings x {areas.receivers.points_m.shape[0]} receivers, "
        f"{os.cpu_count()} cores: {took:.1f} s ({positions * len(d.share) / took:,.0f} position-headings/s)"
    )
    for a in areas.areas:
        print(f"  {a.object_name}, {a.kind}: {a.area_m2:,.0f} m2, reach {a.reach_m()}")
    print(f"  largest share of the limit: {np.nanmax(np.where(d.at_mast, np.nan, d.worst_share)):.2f}")


if __name__ == "__main__":
    main()
