"""Terrain shadowing of the surface facets against independent line-of-sight checks.

The sweep of :meth:`geo.optics.surface_facets.SurfaceGrid.antenna_visibility` is checked against a
dense march along each facet's line of sight over the same bilinear surface (2,000 points per
ray: an independent and slow method), on ground with an exact answer (a plane below the
antennas, a straight ridge) and on real ground: matplotlib's sample DEM
``jacksboro_fault_dem.npz`` (3-arc-second elevations of a real place, shipped in the matplotlib
package; ``matplotlib.cbook.get_sample_data``).
"""

from __future__ import annotations

import numpy as np
import pytest

from geo.optics.surface_facets import SurfaceGrid, graded_nodes

ANTENNAS = np.array([[0.0, 0.0, 4.5], [0.0, 0.25, 9.0]])


def _lattice(height, u_end=1500.0, w_half=150.0):
    """A graded node lattice like the prediction's (finer near the mast) and the ground on it."""
    u = graded_nodes(0.0, u_end, lambda x: min(0.4 + 0.01 * x, 5.0))
    w_pos = graded_nodes(0.0, w_half, lambda x: min(0.4 + 0.02 * x, 5.0))
    w = np.concatenate([-w_pos[:0:-1], w_pos])
    uu, ww = np.meshgrid(u, w)
    return SurfaceGrid(u, w, height(uu, ww), None)


def _dense_visibility(grid: SurfaceGrid, antenna, facet_index) -> np.ndarray:
    """Line of sight by brute force: 2,000 points on the segment from 0.5 m off the facet to the antenna."""
    u, w, z = grid.u_m, grid.w_m, grid.z_m
    uc, wc, zc = grid._centres()
    iu, jw = np.divmod(facet_index, wc.size)
    c = np.column_stack([uc[iu], wc[jw], zc[iu, jw]])
    length = np.hypot(c[:, 0] - antenna[0], c[:, 1] - antenna[1])
    t = 0.5 / length[:, None] + np.linspace(0.0, 1.0, 2000)[None, :] * (1.0 - 0.5 / length[:, None] - 1e-6)
    pu = c[:, 0, None] + t * (antenna[0] - c[:, 0, None])
    pw = c[:, 1, None] + t * (antenna[1] - c[:, 1, None])
    line = c[:, 2, None] + t * (antenna[2] - c[:, 2, None])
    i = np.clip(np.searchsorted(u, pu) - 1, 0, u.size - 2)
    j = np.clip(np.searchsorted(w, pw) - 1, 0, w.size - 2)
    tu = (pu - u[i]) / (u[i + 1] - u[i])
    tw = (pw - w[j]) / (w[j + 1] - w[j])
    ground = (z[j, i] * (1 - tu) + z[j, i + 1] * tu) * (1 - tw) + (z[j + 1, i] * (1 - tu) + z[j + 1, i + 1] * tu) * tw
    return ~np.any(ground > line + 1e-3, axis=1)


def _agreement(grid: SurfaceGrid, count: int = 3000) -> list[tuple[int, int, int]]:
    """Per antenna: (hidden by the sweep, hidden by the dense march, facets where they differ)."""
    seen = grid.antenna_visibility(ANTENNAS)
    pick = np.random.default_rng(3).choice(seen.shape[1], min(count, seen.shape[1]), replace=False)
    out = []
    for s, antenna in enumerate(ANTENNAS):
        dense = _dense_visibility(grid, antenna, pick)
        out.append((int((~seen[s, pick]).sum()), int((~dense).sum()), int((seen[s, pick] != dense).sum())))
    return out


def test_every_facet_of_a_plane_below_the_antennas_is_seen():
    # Exact: from a point above a plane, the segment to any point of the plane stays above it.
    grid = _lattice(lambda u, w: 0.004 * u - 0.01 * w - 0.3)
    assert grid.antenna_visibility(ANTENNAS).all()


def test_a_ridge_hides_the_ground_behind_it_as_the_line_of_sight_says():
    # A straight ridge 3 m high at 400 m: behind it, ground is hidden out to where the line from
    # the antenna over the crest comes down to it (similar triangles: 400 * 4.5 / (4.5 - 3) = 1200 m
    # for the lower antenna at the centre line); in front of it, everything is seen.
    grid = _lattice(lambda u, w: 3.0 * np.exp(-(((u - 400.0) / 15.0) ** 2)))
    seen = grid.antenna_visibility(ANTENNAS)[0].reshape(grid.u_m.size - 1, grid.w_m.size - 1)
    uc, wc, _ = grid._centres()
    centre = np.argmin(np.abs(wc))
    assert seen[uc < 380.0, centre].all()
    assert not seen[(uc > 440.0) & (uc < 1150.0), centre].any()
    assert seen[uc > 1250.0, centre].all()
    for _, hidden_dense, differ in _agreement(grid):
        assert hidden_dense > 100
        assert differ <= 0.01 * 3000


def _jacksboro_height():
    """Bilinear ground of the sample DEM in metres about its centre, relief scaled by 0.1."""
    from matplotlib import cbook

    with cbook.get_sample_data("jacksboro_fault_dem.npz") as data:
        z = data["elevation"].astype(float)
        dy = float(data["dy"]) * 111_320.0  # degrees of latitude to metres
        dx = float(data["dx"]) * 111_320.0 * np.cos(np.radians(36.3))  # at the file's latitude
    rows, cols = z.shape
    z = 0.1 * (z - z.mean())

    def height(u, w):
        fx = np.clip(u / dx + cols / 2.0, 0.0, cols - 1.001)
        fy = np.clip(w / dy + rows / 2.0, 0.0, rows - 1.001)
        i, j = fx.astype(int), fy.astype(int)
        tx, ty = fx - i, fy - j
        return (z[j, i] * (1 - tx) + z[j, i + 1] * tx) * (1 - ty) + (z[j + 1, i] * (1 - tx) + z[j + 1, i + 1] * tx) * ty

    return height


@pytest.fixture(scope="module")
def jacksboro_height():
    return _jacksboro_height()


def test_real_ground_shadowing_agrees_with_the_dense_line_of_sight(jacksboro_height):
    # Real relief: the sweep reads the horizon between lattice nodes, so it may differ from the
    # exact line of sight on a few facets at shadow edges; 2 % is this project's tolerance.
    for shift in (0.0, 900.0):
        foot = jacksboro_height(np.zeros(1) + shift, np.zeros(1))
        grid = _lattice(lambda u, w, shift=shift, foot=foot: jacksboro_height(u + shift, w) - foot)
        for _, hidden_dense, differ in _agreement(grid):
            assert hidden_dense > 50  # the real ground hides some of itself at this relief
            assert differ <= 0.02 * 3000


def test_horizon_along_the_course_of_a_tilted_plane_is_its_slope():
    # Exact: on a plane rising at 2 % toward +u, the ground ahead of any point rises at 2 %; the
    # last 600 m of the lattice has less ground ahead, but what it has rises at 2 % too.
    grid = _lattice(lambda u, w: 0.02 * u + 0.01 * w)
    tangents = grid.horizon_tangents()
    uc, _, _ = grid._centres()
    inside = np.repeat(uc < grid.u_m[-1] - 1.0, grid.w_m.size - 1)
    assert np.allclose(tangents[inside], 0.02, atol=1e-9)
