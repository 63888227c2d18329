"""DDM at many receiver points: CSB and SBO fields by image theory, three antennas (capture-effect).

Prints receiver points per second; never fails by timing. Requirement for reference: at least
1e6 receiver points per second.
"""

from __future__ import annotations

import time

import numpy as np

from geo.radio.arrays import ARRAY_TYPES, antenna_heights_m, proximity_shifts_m
from geo.radio.prediction import ArrayModel, ddm
from geo.site.channels import wavelength_m


def main() -> None:
    lam = wavelength_m(332.0)
    for array in ("null-reference", "capture-effect"):
        t = ARRAY_TYPES[array]
        heights = antenna_heights_m(array, lam, 3.0)
        model = ArrayModel.build(heights, proximity_shifts_m(heights, 120.0), t.csb_feed, t.sbo_feed, lam)
        rng = np.random.default_rng(0)
        n = 2_000_000
        rx = np.column_stack([rng.uniform(300, 18_820, n), rng.uniform(-500, 500, n), rng.uniform(5, 1500, n)])
        best = float("inf")
        for _ in range(3):
            start = time.perf_counter()
            c, s = model.fields(rx)
            values = ddm(c, s, 0.1)
            best = min(best, time.perf_counter() - start)
        print(
            f"DDM, {array} ({len(heights)} antennas), {n:,} receivers: {best:.3f} s, "
            f"{n / best:,.0f} points/s (finite: {np.isfinite(values).all()})"
        )


if __name__ == "__main__":
    main()
