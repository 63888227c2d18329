"""The reflecting plane's forward slope as a fixed point, found by bracketing.

The antenna heights depend on the forward slope ``s`` of the reflecting plane (the path angle over
the plane is ``theta - s``), the zone the plane is fitted in depends on the heights, and the plane
depends on the ground in the zone. The slope is therefore a fixed point ``s = g(s)``: ``g(s)`` is
the forward slope of the plane fitted in the zone of the heights for slope ``s``. Plain iteration
``s <- g(s)`` swings without end where ``g`` changes faster than ``s`` (real ground: the zone moves
onto other ground as the heights change). This module finds a root of ``f(s) = s - g(s)`` by
bracketing, for many candidates at once (arrays of shape ``(C,)``); each caller supplies its own
evaluator of ``g`` (one study: DEM samples in the zone and a least-squares fit; a sweep: row
intervals and prefix sums).

1. **Bracket.** From the start slope, step toward ``g(s)`` (first step ``|f|``, at least 0.001 deg),
   doubling the step until ``f`` changes sign, between -10 deg and ``theta - 0.5`` deg. When that
   direction reaches its limit without a change of sign, the other direction is searched from the
   start.
2. **Refine.** Regula falsi with the Illinois modification [1]_ (the value kept at an end that is
   kept twice in a row is halved), and a bisection whenever two steps in a row did not halve the
   bracket (as Brent's method guards its steps [2]_).
3. **Stop.** *Settled*: at the trial slope the heights and the heights for the fitted plane's slope
   agree within 0.1 mm (every antenna). *Bracket*: the two ends' heights agree within 0.01 mm, so
   the bracket holds a jump of ``g`` and no fixed point: DEM samples are fixed points of the ground,
   so ``g`` is constant while no sample crosses the zone's edge and jumps when one does. Then the
   end used is the one whose heights are nearer: the end ``e`` with the smaller
   ``max_i |h_i(e) - h_i(g(e))|`` (the heights the zone was taken for against those its own plane
   calls for), and the **spread** is ``max_i |h_i(g(a)) - h_i(g(b))|`` over the ends ``a``, ``b``:
   how far the antenna heights differ across the bracket. *Budget*: 60 evaluations in one pass (as
   a bracket).
4. **Lateral gradient.** The zone's receivers stand above the plane, so the zone also depends on
   the plane's lateral gradient (by ``gw * offset``, the same for every receiver). It is held fixed
   while the forward slope is solved, then set to the lateral gradient of the answer's plane and
   the forward slope solved again from the answer, until the lateral gradient moves less than
   1e-5 (at most three passes; a first evaluation on level ground gives the first lateral gradient
   and the start slope).

Ground that cannot serve ends with a status, never a loop: ``"steep"`` (``f < 0`` everywhere
searched: the plane would rise to within 0.5 deg of the path angle), ``"falls"`` (the ground falls
more than 10 deg) or ``"no-plane"`` (the evaluator found no plane, e.g. too few samples).

References
----------
.. [1] Dowell, M. and Jarratt, P., "A modified regula falsi method for computing the root of an
       equation", BIT 11 (1971) 168-174 (the Illinois method).
.. [2] Brent, R. P., *Algorithms for Minimization without Derivatives*, Prentice-Hall, 1973, ch. 4
       (bracketing with guaranteed bisection steps).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from geo.radio.arrays import antenna_heights_m, array_type

__all__ = ["SlopeSolve", "solve_forward_slope", "heights_for_slopes", "SETTLED_M", "NARROW_M"]

#: Heights at the trial slope and at its plane's slope agree within this: a fixed point. [m]
SETTLED_M = 1e-4
#: A bracket whose ends' heights agree within this holds a jump, not a fixed point. [m]
NARROW_M = 1e-5
#: Smallest first step of the bracket search. [deg]
MIN_STEP_DEG = 1e-3
#: The plane must stay this far below the path angle (an image array needs a grazing angle). [deg]
STEEP_MARGIN_DEG = 0.5
#: Lowest forward slope searched. [deg]
LOWEST_SLOPE_DEG = -10.0
#: Evaluations of g in one pass.
MAX_EVALUATIONS = 60
#: Passes with the lateral gradient updated, and how little it must move to stop. [m/m]
LATERAL_PASSES = 3
LATERAL_TOLERANCE = 1e-5

# Columns of an evaluated point: trial slope, f = s - g (halved by Illinois), g, lateral gradient, mismatch.
_S, _F, _G, _GW, _M = range(5)

Evaluator = Callable[[np.ndarray, np.ndarray, np.ndarray], tuple[np.ndarray, np.ndarray]]


@dataclass(frozen=True)
class SlopeSolve:
    """What the solve found for each candidate (arrays of shape (C,) or (C, 2)).

    Attributes
    ----------
    slope_deg : numpy.ndarray
        Trial slope of the end used: the zone was taken for the heights of this slope. [deg]
    lateral_gradient : numpy.ndarray
        Lateral gradient the zone's receivers were measured from. [m/m]
    plane_slope_deg : numpy.ndarray
        Forward slope of the plane fitted at that end: the reported slope. [deg]
    plane_lateral_gradient : numpy.ndarray
        Lateral gradient of that plane. [m/m]
    bracket_deg : numpy.ndarray, shape (C, 2)
        Trial slopes at the two ends of the last bracket (equal when settled). [deg]
    bracket_plane_slope_deg : numpy.ndarray, shape (C, 2)
        Forward slopes of the planes fitted at those ends. [deg]
    spread_m : numpy.ndarray
        How far the antenna heights differ across the bracket (settled: between the trial slope's
        heights and its plane's), largest over the antennas. [m]
    evaluations : numpy.ndarray of int
        Evaluations of ``g``, all passes.
    passes : numpy.ndarray of int
        Passes with an updated lateral gradient.
    status : numpy.ndarray of str
        ``"settled"``, ``"bracket"``, ``"budget"``, ``"steep"``, ``"falls"`` or ``"no-plane"``.
    """

    slope_deg: np.ndarray
    lateral_gradient: np.ndarray
    plane_slope_deg: np.ndarray
    plane_lateral_gradient: np.ndarray
    bracket_deg: np.ndarray
    bracket_plane_slope_deg: np.ndarray
    spread_m: np.ndarray
    evaluations: np.ndarray
    passes: np.ndarray
    status: np.ndarray

    @property
    def served(self) -> np.ndarray:
        """Candidates with a plane (settled, or stopped on a bracket)."""
        return np.isin(self.status, ("settled", "bracket", "budget"))


def heights_for_slopes(array: str, wavelength_m: float, angle_deg: float, slopes_deg) -> np.ndarray:
    """Slope-corrected antenna heights (:func:`geo.radio.arrays.antenna_heights_m`) for many slopes.

    Returns
    -------
    numpy.ndarray, shape (len(slopes_deg), antennas)
        Heights, lowest first; NaN where the slope is not below the path angle. [m]
    """
    slopes = np.atleast_1d(np.asarray(slopes_deg, dtype=float))
    out = np.full((slopes.size, len(array_type(array).roles)), np.nan)
    for k, s in enumerate(slopes):
        if math.isfinite(s) and s < angle_deg:
            out[k] = antenna_heights_m(array, wavelength_m, angle_deg, float(s))
    return out


def solve_forward_slope(
    evaluate: Evaluator, array: str, wavelength_m: float, angle_deg: float, count: int
) -> SlopeSolve:
    """Solve ``s = g(s)`` for ``count`` candidates at once.

    Parameters
    ----------
    evaluate : callable
        ``evaluate(slope_deg, lateral_gradient, index) -> (forward_gradient, lateral_gradient)``:
        for the candidates ``index`` (int array), the plane fitted in the zone of the heights for
        the trial slopes (the zone's receivers measured from a plane with forward gradient
        ``tan(slope)`` and the given lateral gradient). Gradients in [m/m]; NaN where no plane.
    array : str
        Array type.
    wavelength_m : float
        [m]
    angle_deg : float
        Path angle. [deg]
    count : int
        Candidates.

    Returns
    -------
    SlopeSolve
    """
    c = count
    heights = _Heights(array, wavelength_m, angle_deg)
    limits = (LOWEST_SLOPE_DEG, angle_deg - STEEP_MARGIN_DEG)
    every = np.arange(c)
    gu0, gw0 = evaluate(np.zeros(c), np.zeros(c), every)  # level ground: the start slope and lateral gradient
    status = np.full(c, "no-plane", dtype=object)
    start = np.clip(np.degrees(np.arctan(gu0)), *limits)
    gw_zone = np.asarray(gw0, dtype=float).copy()
    nan2 = np.full((c, 2), np.nan)
    out = {
        "slope_deg": np.full(c, np.nan),
        "lateral_gradient": np.full(c, np.nan),
        "plane_slope_deg": np.full(c, np.nan),
        "plane_lateral_gradient": np.full(c, np.nan),
        "bracket_deg": nan2.copy(),
        "bracket_plane_slope_deg": nan2.copy(),
        "spread_m": np.full(c, np.nan),
    }
    evaluations = np.ones(c, dtype=np.int64)
    passes = np.zeros(c, dtype=np.int64)
    pending = np.flatnonzero(np.isfinite(start) & np.isfinite(gw_zone))
    for pass_no in range(1, LATERAL_PASSES + 1):
        if pending.size == 0:
            break
        one = _one_pass(evaluate, heights, start[pending], gw_zone[pending], pending, limits)
        evaluations[pending] += one["evaluations"]
        passes[pending] = pass_no
        status[pending] = one["status"]
        chosen, a, b = one["chosen"], one["a"], one["b"]
        out["slope_deg"][pending] = chosen[:, _S]
        out["lateral_gradient"][pending] = gw_zone[pending]
        out["plane_slope_deg"][pending] = chosen[:, _G]
        out["plane_lateral_gradient"][pending] = chosen[:, _GW]
        out["bracket_deg"][pending] = np.column_stack([a[:, _S], b[:, _S]])
        out["bracket_plane_slope_deg"][pending] = np.column_stack([a[:, _G], b[:, _G]])
        out["spread_m"][pending] = one["spread_m"]
        served = np.isin(one["status"], ("settled", "bracket", "budget"))
        moved = np.abs(chosen[:, _GW] - gw_zone[pending]) > LATERAL_TOLERANCE
        start[pending] = chosen[:, _S]
        gw_zone[pending] = np.where(served, chosen[:, _GW], gw_zone[pending])
        pending = pending[served & moved]
    return SlopeSolve(status=status, evaluations=evaluations, passes=passes, **out)


class _Heights:
    """Heights for slopes, and the mismatch of a point (heights at s against heights at g(s))."""

    def __init__(self, array, wavelength_m, angle_deg):
        self.args = (array, wavelength_m, angle_deg)

    def __call__(self, slopes_deg) -> np.ndarray:
        return heights_for_slopes(*self.args, slopes_deg)

    def gap(self, s1, s2) -> np.ndarray:
        """Largest difference over the antennas between the heights of two slopes (inf if undefined). [m]"""
        d = np.abs(self(s1) - self(s2)).max(axis=1)
        return np.where(np.isfinite(d), d, np.inf)


def _one_pass(evaluate, heights: _Heights, s0, gw, index, limits) -> dict:
    """Bracket and refine ``f(s) = s - g(s)`` with the lateral gradient held (see the module notes)."""
    lowest, highest = limits
    k = s0.size
    blank = np.full((k, 5), np.nan)
    prev, origin, a, b, chosen = (blank.copy() for _ in range(5))
    trial = s0.astype(float).copy()
    step = np.zeros(k)
    direction = np.zeros(k)
    other_tried = np.zeros(k, dtype=bool)
    phase = np.zeros(k, dtype=np.int64)  # 0 first, 1 search, 2 refine, 3 done
    side = np.zeros(k, dtype=np.int64)  # end replaced last: -1 a, +1 b
    width_prev = np.full(k, np.inf)
    slow = np.zeros(k, dtype=np.int64)
    evaluations = np.zeros(k, dtype=np.int64)
    status = np.full(k, "", dtype=object)
    while True:
        live = np.flatnonzero(phase < 3)
        if live.size == 0:
            break
        t = trial[live]
        gu, gw_fit = evaluate(t, gw[live], index[live])
        evaluations[live] += 1
        g = np.degrees(np.arctan(np.asarray(gu, dtype=float)))
        point = np.column_stack([t, t - g, g, gw_fit, heights.gap(t, g)])
        f = point[:, _F]

        def finish(sel, state, pick, live=live):
            ids = live[sel]
            phase[ids] = 3
            status[ids] = state
            chosen[ids] = pick[sel] if pick is not None else chosen[ids]

        bad = ~np.isfinite(g) | ~np.isfinite(np.asarray(gw_fit, dtype=float))
        finish(bad, "no-plane", point)
        settled = ~bad & (point[:, _M] <= SETTLED_M)
        finish(settled, "settled", point)
        a[live[settled]] = point[settled]
        b[live[settled]] = point[settled]
        rest = ~bad & ~settled
        spent = rest & (evaluations[live] >= MAX_EVALUATIONS)

        # First point of the pass: step toward g(s).
        first = rest & (phase[live] == 0)
        ids = live[first]
        origin[ids] = prev[ids] = point[first]
        direction[ids] = np.where(f[first] < 0, 1.0, -1.0)
        step[ids] = np.maximum(np.abs(f[first]), MIN_STEP_DEG)
        phase[ids] = 1
        trial[ids] = np.clip(t[first] + direction[ids] * step[ids], lowest, highest)
        stuck = first & (trial[live] == t)  # started on a limit, pointing past it
        # Searching: a change of sign brackets the root; else step on, doubling.
        search = rest & (phase[live] == 1) & ~first
        crossed = search & (np.sign(f) != np.sign(prev[live, _F]))
        ids = live[crossed]
        lower = prev[ids, _S] < point[crossed, _S]
        a[ids] = np.where(lower[:, None], prev[ids], point[crossed])
        b[ids] = np.where(lower[:, None], point[crossed], prev[ids])
        phase[ids] = 2
        on = search & ~crossed
        ids = live[on]
        prev[ids] = point[on]
        step[ids] *= 2.0
        trial[ids] = np.clip(t[on] + direction[ids] * step[ids], lowest, highest)
        stuck |= on & (trial[live] == t)
        # A direction ran out at its limit: search the other way from the start, or stop.
        turn = stuck & ~other_tried[live]
        ids = live[turn]
        other_tried[ids] = True
        direction[ids] = -direction[ids]
        prev[ids] = origin[ids]
        step[ids] = np.maximum(np.abs(origin[ids, _F]), MIN_STEP_DEG)
        trial[ids] = np.clip(origin[ids, _S] + direction[ids] * step[ids], lowest, highest)
        stuck_again = turn & (trial[live] == origin[live, _S])
        done_searching = (stuck & ~turn) | stuck_again
        finish(done_searching & (f < 0), "steep", point)
        finish(done_searching & (f >= 0), "falls", point)

        # Refining: replace the end with the same sign (Illinois: halve the end kept twice).
        refine = rest & (phase[live] == 2) & ~crossed
        ids = live[refine]
        p = point[refine]
        to_b = np.sign(p[:, _F]) == np.sign(b[ids, _F])
        ib, ia = ids[to_b], ids[~to_b]
        a[ib[side[ib] == 1], _F] *= 0.5
        b[ia[side[ia] == -1], _F] *= 0.5
        b[ib], a[ia] = p[to_b], p[~to_b]
        side[ib], side[ia] = 1, -1
        # Stop on a narrow bracket (a jump) or the budget; else the next trial.
        inside = rest & (phase[live] == 2)
        ids = live[inside]
        width = heights.gap(a[ids, _S], b[ids, _S])
        narrow = width <= NARROW_M
        over = spent[inside] & ~narrow
        for sel, state in ((narrow, "bracket"), (over, "budget")):
            pick = np.where((a[ids, _M] <= b[ids, _M])[:, None], a[ids], b[ids])
            phase[ids[sel]] = 3
            status[ids[sel]] = state
            chosen[ids[sel]] = pick[sel]
        go = ~narrow & ~over
        ids, width = ids[go], width[go]
        fa, fb, sa, sb = a[ids, _F], b[ids, _F], a[ids, _S], b[ids, _S]
        falsi = sb - fb * (sb - sa) / (fb - fa)
        slow[ids] = np.where(width > 0.5 * width_prev[ids], slow[ids] + 1, 0)
        width_prev[ids] = width
        middle = 0.5 * (sa + sb)
        bisect = (slow[ids] >= 2) | ~((falsi > sa) & (falsi < sb))
        slow[ids[bisect]] = 0
        trial[ids] = np.where(bisect, middle, falsi)
        no_room = (trial[ids] <= sa) | (trial[ids] >= sb)  # the floats between the ends are used up
        pick = np.where((a[ids, _M] <= b[ids, _M])[:, None], a[ids], b[ids])
        phase[ids[no_room]] = 3
        status[ids[no_room]] = "bracket"
        chosen[ids[no_room]] = pick[no_room]
        # The budget also ends a search that found no bracket: keep the point, call it steep or falls.
        searching_spent = spent & (phase[live] < 2)
        finish(searching_spent & (f < 0), "steep", point)
        finish(searching_spent & (f >= 0), "falls", point)
    served = np.isin(status, ("bracket", "budget"))
    spread = np.where(served, heights.gap(a[:, _G], b[:, _G]), chosen[:, _M])
    spread = np.where(np.isin(status, ("settled", "bracket", "budget")), spread, np.nan)
    return {"chosen": chosen, "a": a, "b": b, "spread_m": spread, "evaluations": evaluations, "status": status}
