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


@dataclass
class _PassState:
    """One pass's state per candidate: evaluated points as rows (k, 5) (columns ``_S`` .. ``_M``), the rest (k,)."""

    trial: np.ndarray  # next trial slope [deg]
    prev: np.ndarray  # last point of the search
    origin: np.ndarray  # first point of the pass
    a: np.ndarray  # lower end of the bracket
    b: np.ndarray  # upper end of the bracket
    chosen: np.ndarray  # the point the candidate ended on
    step: np.ndarray  # search step [deg]
    direction: np.ndarray  # search direction, +1 or -1
    other_tried: np.ndarray  # the other direction was searched
    phase: np.ndarray  # 0 first, 1 search, 2 refine, 3 done
    side: np.ndarray  # end replaced last: -1 a, +1 b
    width_prev: np.ndarray  # the bracket's width (heights) at the last refining step [m]
    slow: np.ndarray  # refining steps in a row that did not halve the bracket
    evaluations: np.ndarray
    status: np.ndarray

    @classmethod
    def start(cls, s0) -> _PassState:
        """The state before the first evaluation, from the start slopes ``s0``. [deg]"""
        k = s0.size
        blank = np.full((k, 5), np.nan)
        prev, origin, a, b, chosen = (blank.copy() for _ in range(5))
        return cls(
            trial=s0.astype(float).copy(),
            prev=prev,
            origin=origin,
            a=a,
            b=b,
            chosen=chosen,
            step=np.zeros(k),
            direction=np.zeros(k),
            other_tried=np.zeros(k, dtype=bool),
            phase=np.zeros(k, dtype=np.int64),
            side=np.zeros(k, dtype=np.int64),
            width_prev=np.full(k, np.inf),
            slow=np.zeros(k, dtype=np.int64),
            evaluations=np.zeros(k, dtype=np.int64),
            status=np.full(k, "", dtype=object),
        )


def _finish(st: _PassState, ids, state: str, rows) -> None:
    """End candidates ``ids`` with ``state`` on the points ``rows``."""
    st.phase[ids] = 3
    st.status[ids] = state
    st.chosen[ids] = rows


def _finish_steep_or_falls(st: _PassState, live, sel, point) -> None:
    """End the selected candidates on their points: ``"steep"`` where ``f < 0``, ``"falls"`` where ``f >= 0``."""
    f = point[:, _F]
    for which, state in ((sel & (f < 0), "steep"), (sel & (f >= 0), "falls")):
        _finish(st, live[which], state, point[which])


def _nearer_end(st: _PassState, ids) -> np.ndarray:
    """Per candidate, the end of the bracket with the smaller mismatch (a on a tie)."""
    return np.where((st.a[ids, _M] <= st.b[ids, _M])[:, None], st.a[ids], st.b[ids])


def _evaluate_points(evaluate, heights: _Heights, st: _PassState, live, gw, index):
    """Evaluate ``g`` at the live candidates' trial slopes: ``(trial, points (n, 5), no plane)``."""
    t = st.trial[live]
    gu, gw_fit = evaluate(t, gw[live], index[live])
    st.evaluations[live] += 1
    g = np.degrees(np.arctan(np.asarray(gu, dtype=float)))
    point = np.column_stack([t, t - g, g, gw_fit, heights.gap(t, g)])
    bad = ~np.isfinite(g) | ~np.isfinite(np.asarray(gw_fit, dtype=float))
    return t, point, bad


def _settle(st: _PassState, live, point, bad) -> np.ndarray:
    """End the candidates without a plane and those settled; the others (mask over ``live``)."""
    _finish(st, live[bad], "no-plane", point[bad])
    settled = ~bad & (point[:, _M] <= SETTLED_M)
    _finish(st, live[settled], "settled", point[settled])
    st.a[live[settled]] = point[settled]
    st.b[live[settled]] = point[settled]
    return ~bad & ~settled


def _first_step(st: _PassState, live, t, point, first, limits) -> np.ndarray:
    """First point of the pass: step toward ``g(s)``; those that started on a limit, pointing past it."""
    lowest, highest = limits
    f = point[:, _F]
    ids = live[first]
    st.origin[ids] = st.prev[ids] = point[first]
    st.direction[ids] = np.where(f[first] < 0, 1.0, -1.0)
    st.step[ids] = np.maximum(np.abs(f[first]), MIN_STEP_DEG)
    st.phase[ids] = 1
    st.trial[ids] = np.clip(t[first] + st.direction[ids] * st.step[ids], lowest, highest)
    return first & (st.trial[live] == t)


def _search_step(st: _PassState, live, t, point, search, limits):
    """Searching: a change of sign brackets the root, else step on, doubling: ``(crossed, stuck at a limit)``."""
    lowest, highest = limits
    crossed = search & (np.sign(point[:, _F]) != np.sign(st.prev[live, _F]))
    ids = live[crossed]
    lower = st.prev[ids, _S] < point[crossed, _S]
    st.a[ids] = np.where(lower[:, None], st.prev[ids], point[crossed])
    st.b[ids] = np.where(lower[:, None], point[crossed], st.prev[ids])
    st.phase[ids] = 2
    on = search & ~crossed
    ids = live[on]
    st.prev[ids] = point[on]
    st.step[ids] *= 2.0
    st.trial[ids] = np.clip(t[on] + st.direction[ids] * st.step[ids], lowest, highest)
    return crossed, on & (st.trial[live] == t)


def _turn_or_stop(st: _PassState, live, point, stuck, limits) -> None:
    """A direction ran out at its limit: search the other way from the start, or end steep or falls."""
    lowest, highest = limits
    turn = stuck & ~st.other_tried[live]
    ids = live[turn]
    st.other_tried[ids] = True
    st.direction[ids] = -st.direction[ids]
    st.prev[ids] = st.origin[ids]
    st.step[ids] = np.maximum(np.abs(st.origin[ids, _F]), MIN_STEP_DEG)
    st.trial[ids] = np.clip(st.origin[ids, _S] + st.direction[ids] * st.step[ids], lowest, highest)
    stuck_again = turn & (st.trial[live] == st.origin[live, _S])
    _finish_steep_or_falls(st, live, (stuck & ~turn) | stuck_again, point)


def _replace_ends(st: _PassState, live, point, refine) -> None:
    """Refining: replace the end with the same sign (Illinois: halve the end kept twice)."""
    ids = live[refine]
    p = point[refine]
    to_b = np.sign(p[:, _F]) == np.sign(st.b[ids, _F])
    ib, ia = ids[to_b], ids[~to_b]
    st.a[ib[st.side[ib] == 1], _F] *= 0.5
    st.b[ia[st.side[ia] == -1], _F] *= 0.5
    st.b[ib], st.a[ia] = p[to_b], p[~to_b]
    st.side[ib], st.side[ia] = 1, -1


def _stop_refining(st: _PassState, heights: _Heights, live, inside, spent):
    """End on a narrow bracket (a jump) or the budget: the others' ``(ids, bracket width [m])``."""
    ids = live[inside]
    width = heights.gap(st.a[ids, _S], st.b[ids, _S])
    narrow = width <= NARROW_M
    over = spent[inside] & ~narrow
    pick = _nearer_end(st, ids)
    for sel, state in ((narrow, "bracket"), (over, "budget")):
        _finish(st, ids[sel], state, pick[sel])
    go = ~narrow & ~over
    return ids[go], width[go]


def _next_trial(st: _PassState, ids, width) -> None:
    """The next trial inside the bracket: regula falsi, or a bisection when it is slow or falls outside."""
    fa, fb, sa, sb = st.a[ids, _F], st.b[ids, _F], st.a[ids, _S], st.b[ids, _S]
    falsi = sb - fb * (sb - sa) / (fb - fa)
    st.slow[ids] = np.where(width > 0.5 * st.width_prev[ids], st.slow[ids] + 1, 0)
    st.width_prev[ids] = width
    middle = 0.5 * (sa + sb)
    bisect = (st.slow[ids] >= 2) | ~((falsi > sa) & (falsi < sb))
    st.slow[ids[bisect]] = 0
    st.trial[ids] = np.where(bisect, middle, falsi)
    no_room = (st.trial[ids] <= sa) | (st.trial[ids] >= sb)  # the floats between the ends are used up
    pick = _nearer_end(st, ids)
    _finish(st, ids[no_room], "bracket", pick[no_room])


def _pass_result(st: _PassState, heights: _Heights) -> dict:
    """The pass's answer per candidate: chosen point, bracket ends, spread [m], evaluations and status."""
    served = np.isin(st.status, ("bracket", "budget"))
    spread = np.where(served, heights.gap(st.a[:, _G], st.b[:, _G]), st.chosen[:, _M])
    spread = np.where(np.isin(st.status, ("settled", "bracket", "budget")), spread, np.nan)
    return {
        "chosen": st.chosen,
        "a": st.a,
        "b": st.b,
        "spread_m": spread,
        "evaluations": st.evaluations,
        "status": st.status,
    }


def _one_pass(evaluate, heights: _Heights, s0, gw, index, limits) -> dict:
    """Bracket and refine ``f(s) = s - g(s)`` with the lateral gradient held (see the module notes)."""
    st = _PassState.start(s0)
    while True:
        live = np.flatnonzero(st.phase < 3)
        if live.size == 0:
            break
        t, point, bad = _evaluate_points(evaluate, heights, st, live, gw, index)
        rest = _settle(st, live, point, bad)
        spent = rest & (st.evaluations[live] >= MAX_EVALUATIONS)
        first = rest & (st.phase[live] == 0)
        stuck = _first_step(st, live, t, point, first, limits)
        crossed, stuck_on = _search_step(st, live, t, point, rest & (st.phase[live] == 1) & ~first, limits)
        _turn_or_stop(st, live, point, stuck | stuck_on, limits)
        _replace_ends(st, live, point, rest & (st.phase[live] == 2) & ~crossed)
        ids, width = _stop_refining(st, heights, live, rest & (st.phase[live] == 2), spent)
        _next_trial(st, ids, width)
        # The budget also ends a search that found no bracket: keep the point, call it steep or falls.
        _finish_steep_or_falls(st, live, spent & (st.phase[live] < 2), point)
    return _pass_result(st, heights)
