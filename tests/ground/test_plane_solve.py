"""The bracketing solve of the forward slope, on functions g with known fixed points and jumps.

References: scipy.optimize.brentq (a reference root finder) for the fixed points; the jump's location
and the spread follow from the construction; heights from geo.radio.arrays.antenna_heights_m.
"""

import numpy as np
import pytest
from scipy.optimize import brentq

from geo.ground.plane_solve import NARROW_M, SETTLED_M, solve_forward_slope
from geo.radio.arrays import antenna_heights_m

LAM, THETA = 0.8965, 3.0


def _evaluator(g_deg, lateral=0.0):
    calls = []

    def evaluate(slope_deg, lateral_gradient, index):
        calls.append(slope_deg.size)
        g = np.array([g_deg(float(s)) for s in slope_deg])
        return np.tan(np.radians(g)), np.full(slope_deg.size, lateral)

    return evaluate, calls


def _h(s):
    return np.array(antenna_heights_m("null-reference", LAM, THETA, s))


@pytest.mark.parametrize("slope_of_g", [-0.95, -1.5, -4.0, 0.5, 0.9, 1.6])
def test_fixed_points_where_plain_iteration_swings_or_creeps(slope_of_g):
    # g(s) = 0.15 + k (s - 0.1): plain iteration diverges for |k| > 1 (it swings for k < -1, as on the issue's
    # site); the fixed point is the root of s - g(s) (scipy brentq as the reference).
    def g(s):
        return 0.15 + slope_of_g * (s - 0.1)

    evaluate, calls = _evaluator(g)
    solve = solve_forward_slope(evaluate, "null-reference", LAM, THETA, 1)
    root = brentq(lambda s: s - g(s), -9.0, 2.49, xtol=1e-12)
    assert solve.status[0] == "settled"
    assert np.abs(_h(solve.slope_deg[0]) - _h(root)).max() <= SETTLED_M
    assert np.abs(_h(solve.plane_slope_deg[0]) - _h(solve.slope_deg[0])).max() <= SETTLED_M
    assert solve.evaluations[0] == sum(calls) <= 61


def test_a_jump_without_a_fixed_point_stops_on_the_bracket():
    # g jumps from 0.5 to 0.3 deg where s crosses 0.4 deg: no s = g(s). The bracket closes on 0.4 deg; the end
    # used is the one whose heights are nearer its plane's: |h(0.4) - h(0.3)| < |h(0.5) - h(0.4)| (h is convex
    # in s), so the upper end (plane 0.3 deg); the spread is the heights' difference between 0.5 and 0.3 deg.
    evaluate, _ = _evaluator(lambda s: 0.5 if s < 0.4 else 0.3)
    solve = solve_forward_slope(evaluate, "null-reference", LAM, THETA, 1)
    assert solve.status[0] == "bracket"
    low, high = solve.bracket_deg[0]
    assert low < 0.4 <= high
    assert np.abs(_h(high) - _h(low)).max() <= NARROW_M
    assert solve.plane_slope_deg[0] == pytest.approx(0.3, abs=1e-12)
    assert solve.spread_m[0] == pytest.approx(np.abs(_h(0.5) - _h(0.3)).max(), rel=1e-9)


def test_many_candidates_at_once_each_with_its_own_answer():
    # Vectorised: candidates with different g (fixed points, a jump, steep ground) solved together give what
    # each gives alone.
    gs = [lambda s: 0.2 - 2.0 * s, lambda s: 0.5 if s < 0.4 else 0.3, lambda s: 2.9, lambda s: -1.0 + 0.3 * s]

    def evaluate(slope_deg, lateral_gradient, index):
        g = np.array([gs[i](float(s)) for i, s in zip(index, slope_deg)])
        return np.tan(np.radians(g)), np.zeros(slope_deg.size)

    together = solve_forward_slope(evaluate, "capture-effect", LAM, THETA, len(gs))
    for i, g in enumerate(gs):
        alone = solve_forward_slope(_evaluator(g)[0], "capture-effect", LAM, THETA, 1)
        assert together.status[i] == alone.status[0]
        assert together.plane_slope_deg[i] == pytest.approx(alone.plane_slope_deg[0], abs=1e-12)
    assert list(together.status) == ["settled", "bracket", "steep", "settled"]


def test_ground_rising_to_the_path_angle_is_refused_not_looped():
    # A plane rising 2.7 deg wherever the zone lies: within 0.5 deg of the 3 deg path (an image array needs
    # the grazing angle; FAA Order 6750.16, memory).
    evaluate, calls = _evaluator(lambda s: 2.7)
    solve = solve_forward_slope(evaluate, "sideband-reference", LAM, THETA, 1)
    assert solve.status[0] == "steep"
    assert sum(calls) < 80


def test_the_lateral_gradient_is_carried_into_the_zone():
    # The zone's receivers are measured from the plane's lateral gradient: a constant lateral gradient needs
    # one pass after the level-ground start.
    evaluate, _ = _evaluator(lambda s: 0.25, lateral=0.012)
    solve = solve_forward_slope(evaluate, "null-reference", LAM, THETA, 1)
    assert solve.status[0] == "settled" and solve.passes[0] == 1
    assert solve.lateral_gradient[0] == pytest.approx(0.012)
    assert solve.plane_slope_deg[0] == pytest.approx(0.25, abs=1e-9)
