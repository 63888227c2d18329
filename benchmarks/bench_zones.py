"""Reflection zones: three antennas (capture-effect), at least 2,000 receivers each, path zone.

Times the exact ellipses and their unions, as `geo.radio.zones.antenna_zone` computes them, and the
whole set the study computes (path and coverage zones, each antenna and all together). Prints
figures; never fails by timing. Requirement for reference: three antennas under 0.3 s.
"""

from __future__ import annotations

import statistics
import time

from geo.radio.arrays import antenna_heights_m, proximity_shifts_m
from geo.radio.zones import antenna_zone, path_receivers, reflection_zones
from geo.site.channels import wavelength_m

RUNS = 7


def main() -> None:
    lam = wavelength_m(332.0)
    heights = antenna_heights_m("capture-effect", lam, 3.0)
    shifts = proximity_shifts_m(heights, 120.0)
    receivers = path_receivers(300.0, 120.0, 3.0, 667)
    antenna_zone(heights[0], 0.0, receivers, lam)  # warm imports
    times = []
    for _ in range(RUNS):
        start = time.perf_counter()
        shapes = [antenna_zone(h, s, receivers, lam) for h, s in zip(heights, shifts)]
        times.append(time.perf_counter() - start)
    print(
        f"path zones of 3 antennas, {receivers.shape[0]:,} receivers each: median {statistics.median(times):.3f} s, "
        f"min {min(times):.3f} s over {RUNS} runs; areas {', '.join(f'{s.area_m2:,.0f}' for s in shapes)} m2"
    )
    times = []
    for _ in range(RUNS):
        start = time.perf_counter()
        zones = reflection_zones(("lower", "middle", "upper"), heights, shifts, 300.0, 120.0, 3.0, lam)
        times.append(time.perf_counter() - start)
    print(
        f"all zones of a study (path and coverage, 3 antennas and their unions, {len(zones)} zones): "
        f"median {statistics.median(times):.3f} s over {RUNS} runs"
    )


if __name__ == "__main__":
    main()
