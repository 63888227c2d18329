"""The grid of object positions that grows until every derived area closes inside it.

The positions lie on one lattice anchored at the mast (``u = i step``, ``w = j step`` in the mast
frame: ``u`` ahead toward the approach, ``w`` toward the runway), each object on a rectangle of it.
The rectangle starts at the extents of ``[areas]`` (``ahead``, ``behind``, ``away``, and past the
centre line ``beyond``) and grows, side by side, by whole blocks of :data:`BLOCK_M` (rounded to
whole steps), wherever the object's sensitive area (which holds its critical one) still has a cell
on that edge. Only the new positions are computed; the old ones keep their values. A side stops
at ``max_extent`` from the mast; an area still on that edge stays open there, and the caller warns.

The disturbance is a black box here: ``evaluate(k, heading, u, w)`` gives, for object ``k`` at the
positions ``(u, w)``, the 95 % bend per segment and the largest share of the limit (inf where the
object stands against the mast). What "closed" means is the grid's: no cell of the area on the
grid's outer row or column. An island of the area beyond a gap of more than one block is not
found.

References
----------
.. [1] ICAO Annex 10, Volume I, Attachment C, 2.1.10 (critical and sensitive areas: the areas in
       which objects disturb the signal beyond the tolerance; from memory).
"""

from __future__ import annotations

import math
import time
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass, field

import numpy as np

__all__ = ["SIDES", "BLOCK_M", "Lattice", "ObjectGrid", "initial_lattice", "grow_grids"]

#: The grid's sides, as the warnings and outputs name them.
SIDES = ("ahead", "behind", "toward_runway", "away")
#: Width of one block the grid grows by on an open side (rounded to whole steps; our choice). [m]
BLOCK_M = 100.0
_EPS = 1e-9


@dataclass(frozen=True)
class Lattice:
    """A rectangle of the lattice: indices ``i0..i1`` along ``u``, ``j0..j1`` along ``w`` (inclusive)."""

    step_m: float
    i0: int
    i1: int
    j0: int
    j1: int

    def positions(self) -> tuple[np.ndarray, np.ndarray]:
        """Every position (u, w) of the rectangle. [m]"""
        ii, jj = np.meshgrid(np.arange(self.i0, self.i1 + 1), np.arange(self.j0, self.j1 + 1), indexing="ij")
        return ii.ravel() * self.step_m, jj.ravel() * self.step_m

    def outside(self, other: Lattice) -> tuple[np.ndarray, np.ndarray]:
        """The positions of this rectangle that ``other`` (inside it) does not hold. [m]"""
        u, w = self.positions()
        i, j = np.rint(u / self.step_m), np.rint(w / self.step_m)
        old = (i >= other.i0) & (i <= other.i1) & (j >= other.j0) & (j <= other.j1)
        return u[~old], w[~old]

    def extent_m(self) -> dict:
        """Reach of the rectangle from the mast on each side (``toward_runway`` from the mast). [m]"""
        s = self.step_m
        return {"ahead": self.i1 * s, "behind": -self.i0 * s, "toward_runway": self.j1 * s, "away": -self.j0 * s}

    def edge(self, u: np.ndarray, w: np.ndarray) -> dict:
        """Per side, which of the positions lie on that outer row or column."""
        i, j = np.rint(u / self.step_m), np.rint(w / self.step_m)
        return {"ahead": i == self.i1, "behind": i == self.i0, "toward_runway": j == self.j1, "away": j == self.j0}


def initial_lattice(settings, offset_m: float) -> Lattice:
    """The starting rectangle from ``[areas]``: whole steps within the extents (past the centre line ``beyond``)."""
    s = settings.grid_m
    return Lattice(
        s,
        -math.floor(settings.behind_m / s + _EPS),
        math.floor(settings.ahead_m / s + _EPS),
        -math.floor(settings.away_m / s + _EPS),
        math.floor((offset_m + settings.beyond_m) / s + _EPS),
    )


@dataclass
class ObjectGrid:
    """One object's positions so far, their values, and its rectangle.

    Attributes
    ----------
    lattice : Lattice
    u, w : numpy.ndarray, shape (G,)
        Positions in the order computed. [m]
    segment_ddm : dict of str to numpy.ndarray, shape (G, S)
    share : dict of str to numpy.ndarray, shape (G,)
    open_sides : tuple of str
        Sides where the sensitive area is still on the edge at the largest extent.
    rounds : int
        Growth rounds after the first block.
    """

    lattice: Lattice
    u: np.ndarray
    w: np.ndarray
    segment_ddm: dict
    share: dict
    open_sides: tuple = ()
    rounds: int = 0
    pending: tuple = field(default=(), repr=False)
    figures: dict = field(default_factory=dict)  # heading -> figure name -> (G,), when evaluate gives them

    def worst(self) -> np.ndarray:
        return np.max(np.stack(list(self.share.values())), axis=0)


def _grown(lattice: Lattice, sides, limit: int, block: int) -> tuple[Lattice, tuple]:
    """The rectangle grown by ``block`` steps on each open side (at most ``limit`` steps out), and the sides stuck."""
    i0, i1, j0, j1 = lattice.i0, lattice.i1, lattice.j0, lattice.j1
    stuck = []
    for side in sides:
        if side == "ahead":
            i1, hit = min(i1 + block, limit), i1 >= limit
        elif side == "behind":
            i0, hit = max(i0 - block, -limit), i0 <= -limit
        elif side == "toward_runway":
            j1, hit = min(j1 + block, limit), j1 >= limit
        else:
            j0, hit = max(j0 - block, -limit), j0 <= -limit
        if hit:
            stuck.append(side)
    return Lattice(lattice.step_m, i0, i1, j0, j1), tuple(stuck)


def _jobs(grids, headings, chunk: int) -> list:
    jobs = []
    for k, g in enumerate(grids):
        u, w = g.pending
        for h in headings[k]:
            jobs += [(k, h, u[a : a + chunk], w[a : a + chunk]) for a in range(0, u.size, chunk)]
    return jobs


def _timed(evaluate):
    def run(job):
        k, h, u, w = job
        start = time.perf_counter()
        values = evaluate(k, h, u, w)
        return job, values, time.perf_counter() - start

    return run


def _take(grids, results) -> None:
    """Append each job's positions and values to its object's grid (in the jobs' order)."""
    for k, g in enumerate(grids):
        u, w = g.pending
        if u.size == 0:
            continue
        mine = [(job, values) for job, values, _ in results if job[0] == k]
        for h in g.share:
            parts = [values for job, values in mine if job[1] == h]
            g.segment_ddm[h] = np.concatenate([g.segment_ddm[h], *[p[0] for p in parts]])
            g.share[h] = np.concatenate([g.share[h], *[p[1] for p in parts]])
            mine_h = [(job[2].size, values[2] if len(values) > 2 else {}) for job, values in mine if job[1] == h]
            _take_figures(g, h, mine_h)
        g.u, g.w = np.concatenate([g.u, u]), np.concatenate([g.w, w])
        g.pending = (np.empty(0), np.empty(0))


def _take_figures(grid: ObjectGrid, heading: str, parts: list) -> None:
    """Append the jobs' figures for ``heading``, ``parts`` = [(positions, {name: (n,)})]: NaN where a job has none."""
    names = {name for _, part in parts for name in part} | set(grid.figures.get(heading, {}))
    if not names:
        return
    held = grid.figures.setdefault(heading, {})
    before = grid.u.size
    for name in names:
        added = [part.get(name, np.full(n, np.nan)) for n, part in parts]
        held[name] = np.concatenate([held.get(name, np.full(before, np.nan)), *added])


def grow_grids(
    start: Lattice,
    headings: list[tuple[str, ...]],
    segments: int,
    evaluate,
    threshold: float,
    max_extent_m: float,
    chunk: int,
    threads: int,
    progress=None,
    plan=None,
) -> list[ObjectGrid]:
    """Every object's grid, grown until its area closes or the largest extent is reached.

    Parameters
    ----------
    start : Lattice
        The first rectangle, the same for every object.
    headings : list of tuple of str
        Per object, its headings.
    segments : int
        Number of approach segments (columns of ``segment_ddm``).
    evaluate : callable
        ``evaluate(k, heading, u, w) -> (segment_ddm (n, S), share (n,))``, or with a third item, a dict of
        per-position figures (name -> (n,)) kept beside them (``ObjectGrid.figures``).
    threshold : float
        A position is in the area when its worst share exceeds this (the sensitive share).
    max_extent_m : float
        No side grows beyond this distance from the mast. [m]
    chunk : int
        Positions per job.
    threads : int
    progress : callable, optional
        ``progress(done, total)`` in positions x headings, the total growing with the grid.
    plan : callable, optional
        ``plan(positions, seconds)`` once, after the first timed jobs (one per object and heading):
        the position-headings of the first rectangle and an estimate of the time they take. [s]

    Returns
    -------
    list of ObjectGrid
    """
    step = start.step_m
    limit = max(int(math.floor(max_extent_m / step + _EPS)), start.i1, -start.i0, start.j1, -start.j0)
    block = max(int(round(BLOCK_M / step)), 1)
    first = start.positions()
    grids = [
        ObjectGrid(start, np.empty(0), np.empty(0), {h: np.empty((0, segments)) for h in hs},
                   {h: np.empty(0) for h in hs}, pending=first)
        for hs in headings
    ]  # fmt: skip
    counter = {"done": 0, "total": 0}
    pool = ThreadPoolExecutor(max_workers=threads)
    try:
        run = _timed(evaluate)
        while True:
            jobs = _jobs(grids, headings, chunk)
            if not jobs:
                return grids
            counter["total"] += sum(job[2].size for job in jobs)
            results = _run_jobs(pool, run, jobs, counter, progress, plan, threads)
            plan = None
            _take(grids, results)
            for g in grids:
                _next_block(g, threshold, limit, block)
    finally:  # an interrupted run stops after the jobs in hand, not after every job
        pool.shutdown(wait=True, cancel_futures=True)


def _run_jobs(pool, run, jobs, counter, progress, plan, threads) -> list:
    """The jobs on the pool; with ``plan``, the first job of each object and heading first, timed."""
    results = []
    rest = jobs
    if plan is not None:
        seen, lead, rest = set(), [], []
        for job in jobs:
            (rest if (job[0], job[1]) in seen else lead).append(job)
            seen.add((job[0], job[1]))
        for item in pool.map(run, lead):
            results.append(item)
            counter["done"] += item[0][2].size
        cost = {(job[0], job[1]): seconds / max(job[2].size, 1) for job, _, seconds in results}
        left = sum(cost[job[0], job[1]] * job[2].size for job in rest)
        plan(counter["total"], left / max(threads, 1) + sum(s for *_, s in results) / max(threads, 1))
        if progress is not None:
            progress(counter["done"], counter["total"])
    for item in pool.map(run, rest):
        results.append(item)
        counter["done"] += item[0][2].size
        if progress is not None:
            progress(counter["done"], counter["total"])
    return results


def _next_block(grid: ObjectGrid, threshold: float, limit: int, block: int) -> None:
    """Open sides of the object's area on its rectangle: the next block to compute, or the sides left open."""
    inside = grid.worst() > threshold
    edges = grid.lattice.edge(grid.u, grid.w)
    sides = [s for s in SIDES if (inside & edges[s]).any()]
    if not sides:
        grid.open_sides = ()
        return
    grown, stuck = _grown(grid.lattice, sides, limit, block)
    grid.open_sides = stuck
    if grown == grid.lattice:
        return
    grid.pending = grown.outside(grid.lattice)
    grid.lattice = grown
    grid.rounds += 1
