"""Knife-edge shadowing of the surface facets: planes unchanged, a thin wall against an independent estimate.

What the model is (geo.optics.surface_facets, SurfaceGrid.antenna_weights): physical optics with the
incident field at each facet, and each facet's view of each receiver, scaled by the amplitude of
the knife-edge factor over one obstacle of the ray (its horizon point), the obstacle and its image
in the ground line forming a strip. What it captures: the partial shadow behind and the partial
illumination in front of an obstacle's shadow boundary (half the field on it), continuously in
the obstacle's height, and nothing at all over a plane. What it does not: the phase delay of the
diffracted wave (weights are amplitudes), several obstacles on one ray (only the horizon point
counts), the ground within 10 wavelengths of a facet, the field the obstacle's own faces scatter
toward the shadow (single scattering), and, toward the receivers, obstacles between the 16
distances at which the course is read.

The independent estimates here march densely along each ray over the same bilinear ground (2,000
points), take the point of largest v (Deygout's principal edge; ITU-R P.526 sec. 4.5, from memory)
and evaluate the strip's factor with scipy.special.fresnel (Born and Wolf 1999, sec. 8.7).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.special import fresnel

from geo.optics.kernel import _pair_fields, ground_fields
from geo.optics.surface_facets import KNIFE_EDGE_NEAR_WAVELENGTHS, SurfaceGrid, graded_nodes

LAM = 0.895  # glide path wavelength at 335 MHz [m]
ANTENNA = np.array([0.0, 0.0, 6.0])


def _grid(height, u_end=1200.0, w_half=20.0, step=1.0):
    u = graded_nodes(0.0, u_end, lambda x: step)
    w = np.arange(-w_half, w_half + 0.5 * step, 2.0)
    uu, ww = np.meshgrid(u, w)
    return SurfaceGrid(u, w, height(uu, ww), None)


def _strip_amplitude(v_top, v_bottom):
    """|F(v_top) + 1 - F(v_bottom)|, F(v) = (1 + j) / 2 [(1/2 - C) - j (1/2 - S)] (Born and Wolf sec. 8.7)."""

    def f(v):
        s, c = fresnel(v)
        return (1 + 1j) / 2 * ((0.5 - c) - 1j * (0.5 - s))

    return np.abs(f(v_top) + 1.0 - f(v_bottom))


def _bilinear(grid, pu, pw):
    u, w, z = grid.u_m, grid.w_m, grid.z_m
    i = np.clip(np.searchsorted(u, pu) - 1, 0, u.size - 2)
    j = np.clip(np.searchsorted(w, pw) - 1, 0, w.size - 2)
    tu, tw = (pu - u[i]) / (u[i + 1] - u[i]), (pw - w[j]) / (w[j + 1] - w[j])
    return (z[j, i] * (1 - tu) + z[j, i + 1] * tu) * (1 - tw) + (z[j + 1, i] * (1 - tu) + z[j + 1, i + 1] * tu) * tw


def _dense_source_estimate(grid, antenna, centre):
    """The strip factor over the point of largest v on the ray from the antenna to a facet centre (dense march)."""
    near = KNIFE_EDGE_NEAR_WAVELENGTHS * LAM
    horizontal = math.hypot(centre[0] - antenna[0], centre[1] - antenna[1])
    s = np.linspace(0.0, 1.0, 2001)[1:-1]
    s = s[(1.0 - s) * horizontal >= near]
    ground = _bilinear(grid, antenna[0] + s * (centre[0] - antenna[0]), antenna[1] + s * (centre[1] - antenna[1]))
    foot = _bilinear(grid, np.array([antenna[0]]), np.array([antenna[1]]))[0]
    d1, d2 = s * horizontal, (1.0 - s) * horizontal
    k = np.sqrt(2.0 * horizontal / (LAM * d1 * d2))
    above_ray = ground - (antenna[2] + s * (centre[2] - antenna[2]))
    excess = ground - (foot + s * (centre[2] - foot))
    v = above_ray * k
    best = int(np.argmax(np.where(excess > 0.0, v, -np.inf)))
    if excess[best] <= 0.0:
        return 1.0, -np.inf
    return float(_strip_amplitude(v[best], v[best] - 2.0 * excess[best] * k[best])), float(v[best])


@pytest.mark.parametrize("slope", [(0.0, 0.0), (0.012, -0.02), (-0.03, 0.01)])
def test_over_any_plane_nothing_changes(slope):
    # Exact (image theory): over a plane the physical-optics integral needs no shadowing, so every
    # weight is 1, whatever the plane's tilt (the ground line is the plane itself).
    gu, gw = slope
    grid = _grid(lambda u, w: gu * u + gw * w - 0.4, u_end=800.0)
    antennas = np.array([[0.0, 0.0, 4.5], [0.0, 0.25, 9.0]])
    weights = grid.antenna_weights(antennas, LAM)
    assert np.array_equal(weights, np.ones_like(weights))
    _, _, excess = grid.horizon_obstacles(LAM)
    assert np.all(excess <= 1e-6)


def _wall(height_m, at_m=100.0):
    return lambda u, w: np.where(np.abs(u - at_m) < 0.5, height_m, 0.0)


@pytest.mark.parametrize("wall_m", [5.0, 1.0], ids=["shadow", "lit"])
def test_a_thin_wall_through_the_kernel_against_the_knife_edge(wall_m):
    # A wall one node high at 100 m on flat ground, the antenna 6 m up. Each facet's scattered field
    # toward a distant receiver (5 deg up the course), with the antenna-side weights over without them,
    # is the facet's knife-edge factor; against the dense-march estimate within 1 dB where v is in
    # -1..3 (the 5 m wall shadows the ground out to 600 m, v from 0 to 3; behind the 1 m wall the
    # ground is lit, v from -1 to 0).
    grid = _grid(_wall(wall_m))
    facets = grid.facets(foot=False)
    centres = facets.centres_m
    weights = grid.antenna_weights(ANTENNA[None, :], LAM)[0]
    pick = np.flatnonzero((np.abs(centres[:, 1]) < 1.5) & (centres[:, 0] > 115.0) & (centres[:, 0] < 1150.0))[::7]
    chosen = facets.subset(pick)
    e = math.radians(5.0)
    direction = np.array([[math.cos(e), 0.0, math.sin(e)]])
    groups = np.arange(pick.size)
    with_weights = _pair_fields(ANTENNA[None, :], chosen, direction, LAM, groups=groups, far=True,
                                source_visible=weights[pick][None, :])[0, :, 0]  # fmt: skip
    without = _pair_fields(ANTENNA[None, :], chosen, direction, LAM, groups=groups, far=True)[0, :, 0]
    ratio_db = 20.0 * np.log10(np.abs(with_weights) / np.abs(without))
    estimates = [_dense_source_estimate(grid, ANTENNA, c) for c in chosen.centres_m]
    amplitude = np.array([a for a, _ in estimates])
    v = np.array([b for _, b in estimates])
    inside = (v >= -1.0) & (v <= 3.0)
    assert inside.sum() > 20
    expected_db = 20.0 * np.log10(amplitude[inside])
    print(f"\nwall {wall_m} m: v {v[inside].min():.2f} to {v[inside].max():.2f}, "
          f"largest difference {np.max(np.abs(ratio_db[inside] - expected_db)):.3f} dB")  # fmt: skip
    assert np.max(np.abs(ratio_db[inside] - expected_db)) < 1.0
    if wall_m == 5.0:  # the hard shadow would give nothing here; the knife edge about half and less
        assert np.all(amplitude[inside & (v > 0.2)] < 0.7) and np.all(ratio_db[inside] > -20.0)


def test_a_bank_ahead_weighs_the_receivers_through_the_kernel():
    # Toward the receivers: a bank 3 m high from 700 to 900 m (flat elsewhere) stands ahead of the
    # facets before it; a distant receiver at 1 deg passes below its top from every facet between
    # 450 and 690 m. The kernel's pair weights (SurfaceGrid.horizon_obstacles, read at 16 distances
    # along the course) against the dense-march estimate along the facet-receiver ray. The course
    # is read at 16 distances, so the bank's front edge may be read up to a third of its distance
    # late: within 1 dB here, and in the shadow everywhere.
    grid = _grid(lambda u, w: np.where((u >= 700.0) & (u <= 900.0), 3.0, 0.0), u_end=1500.0)
    facets = grid.facets(foot=False)
    centres = facets.centres_m
    pick = np.flatnonzero((np.abs(centres[:, 1]) < 1.5) & (centres[:, 0] > 450.0) & (centres[:, 0] < 690.0))[::5]
    chosen = facets.subset(pick)
    obstacle = tuple(a[pick] for a in grid.horizon_obstacles(LAM))
    e = math.radians(1.0)
    direction = np.array([[math.cos(e), 0.0, math.sin(e)]])
    source = np.array([[0.0, 0.0, 30.0]])  # high, so that it lights every facet
    weighted = ground_fields(source, chosen, direction, LAM, far=True, horizon_obstacle=obstacle)
    groups = np.arange(pick.size)
    single = _pair_fields(source, chosen, direction, LAM, groups=groups, far=True, horizon_obstacle=obstacle)[0, :, 0]
    plain = _pair_fields(source, chosen, direction, LAM, groups=groups, far=True)[0, :, 0]
    assert weighted[0, 0] == pytest.approx(single.sum(), rel=1e-4)  # the same pairs, summed
    ratio_db = 20.0 * np.log10(np.abs(single) / np.abs(plain))
    expected_db = []
    for c in chosen.centres_m:
        x = np.linspace(KNIFE_EDGE_NEAR_WAVELENGTHS * LAM, 600.0, 2000)
        ground = np.where((c[0] + x >= 700.0) & (c[0] + x <= 900.0), 3.0, 0.0)
        k = np.sqrt(2.0 / (LAM * x))
        v = (ground - c[2] - x * math.tan(e)) * k
        chord = (ground[-1] - c[2]) / x[-1]
        excess = ground - (c[2] + chord * x)
        best = int(np.argmax(np.where(excess > 0.0, v, -np.inf)))
        expected_db.append(20.0 * math.log10(_strip_amplitude(v[best], v[best] - 2.0 * excess[best] * k[best])))
    expected_db = np.array(expected_db)
    print(f"\nbank: estimate {expected_db.min():.2f} to {expected_db.max():.2f} dB, "
          f"largest difference {np.max(np.abs(ratio_db - expected_db)):.3f} dB")  # fmt: skip
    assert np.max(np.abs(ratio_db - expected_db)) < 1.0
    assert np.all(ratio_db < -1.0)


def test_the_weights_are_amplitudes_between_0_and_the_lit_ripple_and_hard_is_the_sweep():
    # The knife-edge factor's amplitude lies in [0, 1.17] (Born and Wolf sec. 8.7: Cornu's spiral; the
    # strip adds at most the image edge's ripple, so 1.35 bounds it); "hard" is the line-of-sight sweep
    # (checked against the dense march in test_surface_shading.py) as 0 and 1; "none" is 1.
    grid = _grid(lambda u, w: 3.0 * np.exp(-(((u - 400.0) / 15.0) ** 2)), u_end=1500.0)
    antennas = np.array([[0.0, 0.0, 4.5], [0.0, 0.25, 9.0]])
    soft = grid.antenna_weights(antennas, LAM)
    assert soft.min() >= 0.0 and soft.max() < 1.35
    hard = grid.antenna_weights(antennas, LAM, "hard")
    assert np.array_equal(hard, grid.antenna_visibility(antennas).astype(float))
    assert np.array_equal(grid.antenna_weights(antennas, LAM, "none"), np.ones_like(soft))
    hidden = hard == 0.0
    assert hidden.sum() > 100 and np.all(soft[hidden] > 0.0)  # the hard shadow is now a partial one
    with pytest.raises(ValueError, match="must be one of knife-edge, hard, none"):
        grid.antenna_weights(antennas, LAM, "soft")
