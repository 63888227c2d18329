"""The grid that grows until the areas close (geo.optics.area_grid), on a disturbance known in closed form.

The disturbance here is invented: a share of 1 inside a disc and 0 outside, so the area it gives is
known (pi r^2, Euclid) and so is where it closes; the grid's mechanics are checked against it.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from geo.optics.area_grid import Lattice, grow_grids
from geo.optics.areas import cell_union

STEP = 10.0
START = Lattice(STEP, -5, 30, -10, 12)  # 50 m behind to 300 m ahead, 100 m away to 120 m toward the runway


def _disc(centre, radius, calls):
    def evaluate(k, heading, u, w):
        calls.extend(zip(np.round(u / STEP).astype(int).tolist(), np.round(w / STEP).astype(int).tolist()))
        inside = np.hypot(u - centre[0], w - centre[1]) <= radius
        share = inside.astype(float)
        return np.column_stack([share, share]), share

    return evaluate


def _grow(centre, radius, max_extent_m, calls):
    return grow_grids(START, [("along",)], 2, _disc(centre, radius, calls), 0.5, max_extent_m, 64, 2)


def test_the_grid_grows_until_the_disc_closes_computing_each_position_once():
    calls = []
    (g,) = _grow((400.0, -50.0), 330.0, 2000.0, calls)
    assert len(calls) == len(set(calls)) == g.u.size  # every position once, none again
    inside = g.worst() > 0.5
    edges = g.lattice.edge(g.u, g.w)
    assert not any((inside & e).any() for e in edges.values()) and g.open_sides == ()
    # The disc reaches 730 m ahead; the grid holds it whole: every lattice point of the disc (within
    # r of its centre, Euclid) is a position of the grid and inside the area.
    ii, jj = np.meshgrid(np.arange(-200, 201), np.arange(-200, 201), indexing="ij")
    disc = np.hypot(ii * STEP - 400.0, jj * STEP + 50.0) <= 330.0
    assert inside.sum() == disc.sum()
    # The cell union of the disc's lattice points: pi r^2 within the cells along its rim (2 pi r x step).
    area = cell_union(g.u, g.w, inside, STEP).area
    assert abs(area - math.pi * 330.0**2) <= 2.0 * math.pi * 330.0 * STEP
    # It grew by whole blocks of 100 m (10 steps) on the open sides only, never behind past the disc.
    ext = g.lattice.extent_m()
    assert ext["ahead"] >= 730.0 and (ext["ahead"] - 300.0) % 100.0 == 0.0
    assert ext["behind"] == 50.0  # the disc starts 70 m ahead of the mast: that side never opens


def test_an_area_past_the_largest_extent_stays_open_on_that_side():
    calls = []
    (g,) = _grow((600.0, 0.0), 500.0, 800.0, calls)
    assert g.open_sides == ("ahead",)
    assert g.lattice.extent_m()["ahead"] == 800.0
    assert len(calls) == len(set(calls))


def test_plan_estimates_the_first_grid_before_the_rest():
    seen = []
    calls = []
    grow_grids(START, [("along", "across")], 2, _disc((0.0, 0.0), 50.0, calls), 0.5, 2000.0, 64, 2,
               plan=lambda positions, seconds: seen.append((positions, seconds)))  # fmt: skip
    ((positions, seconds),) = seen
    assert positions == 2 * (36 * 23)  # two headings x the first rectangle's positions
    assert seconds >= 0.0


@pytest.mark.parametrize("side, centre", [("behind", (-150.0, 0.0)), ("away", (0.0, -150.0)),
                                          ("toward_runway", (0.0, 250.0))])  # fmt: skip
def test_each_side_grows_and_closes(side, centre):
    # Each disc reaches past the first rectangle on one side (a disc wholly beyond it is not found:
    # the module's notes).
    calls = []
    (g,) = _grow(centre, 150.0, 2000.0, calls)
    assert g.open_sides == ()
    ext = g.lattice.extent_m()
    reach = {"behind": -centre[0], "away": -centre[1], "toward_runway": centre[1]}[side] + 150.0
    assert ext[side] > reach
