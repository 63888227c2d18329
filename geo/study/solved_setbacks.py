"""The setback that meets the target RDH at each side and offset of a sweep.

:func:`solve_setbacks` iterates the sweep's own plane fit: the same fixed point as
:func:`geo.airfield.path.setback_for_rdh_m`, with a secant step, as the single-site study does on
terrain.

References
----------
.. [2] ICAO Annex 10, Volume I, 3.1.5.1: ILS reference datum height (see :mod:`geo.study.findings`).
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np

from geo.airfield.path import setback_for_rdh_m
from geo.study.dem_checks import check_dem_before_solve
from geo.study.site_study import runway_of
from geo.study.sweep import run_sweep

__all__ = ["solve_setbacks"]


def solve_setbacks(spec, options, iterations: int = 12, tolerance_m: float = 0.005):
    """Sweep the offsets and sides of ``options`` at the setback that meets the target RDH [2]_.

    Parameters
    ----------
    spec : SiteSpec
    options : SweepOptions
        Its ``setbacks_m`` are ignored; ``rdh_target_m`` (else the site's ``target_rdh``, else
        15.5 m) is the RDH to meet.
    iterations : int
        Most sweeps to run.
    tolerance_m : float
        Largest RDH error accepted. [m]

    Returns
    -------
    result : SweepResult
        One candidate per side and offset, at its solved setback.
    options : SweepOptions
        The paired options of that last sweep.
    settled : numpy.ndarray of bool
        Whether each candidate's RDH met the target within the tolerance.

    Raises
    ------
    SiteFileError, TerrainError
        Before any sweep, when the DEM is more than 5 m off the survey at the threshold (the key that
        looks wrong) or does not cover it (:func:`geo.study.dem_checks.check_dem_before_solve`).
    """
    target = options.rdh_target_m if options.rdh_target_m is not None else (spec.target_rdh_m or 15.5)
    runway = runway_of(spec)
    if spec.terrain is not None:  # every DEM and datum check before the solve
        check_dem_before_solve(spec, runway.frame)
    thr = spec.threshold.elevation_m
    sides = tuple(s for s in options.sides for _ in options.offsets_m)
    offsets = tuple(float(o) for _ in options.sides for o in options.offsets_m)
    start = setback_for_rdh_m(target, thr, spec.angle_deg, thr)
    setbacks = np.full(len(offsets), start)
    low, high = 1.0, runway.length_m - 1.0
    previous = None
    tan = math.tan(math.radians(spec.angle_deg))
    for _ in range(iterations):
        setbacks = np.clip(setbacks, low, high)
        paired = dataclasses.replace(
            options, setbacks_m=tuple(setbacks.tolist()), offsets_m=offsets, sides=sides, paired=True
        )
        result = run_sweep(spec, paired)
        rdh, rpi = result.columns["rdh_m"], result.columns["rpi_elevation_m"]
        error = rdh - target
        settled = np.isfinite(error) & (np.abs(error) <= tolerance_m)
        if settled.all():
            return result, paired, settled
        new = (target + thr - rpi) / tan  # geo.airfield.path.setback_for_rdh_m, every candidate at once
        if previous is not None:
            s0, e0 = previous
            ds, de = setbacks - s0, error - e0
            secant = np.abs(de) > 1e-9
            new = np.where(secant, setbacks - error * ds / np.where(secant, de, 1.0), new)
        new = np.where(np.isfinite(new), new, setbacks)
        previous = (setbacks.copy(), error)
        setbacks = np.where(settled, setbacks, new)
    return result, paired, settled
