"""The ground in front of the mast as flat facets: integration area, sampling, visibility.

The physical-optics integral of :mod:`geo.optics` runs over facets cut from the bilinear DEM
surface. This module decides where the integral runs and how finely, and which facets each
antenna and receiver can see:

- **Area.** Each receiver has its own area: the exact first Fresnel zones of the antennas and
  that receiver (:func:`geo.fresnel.exact_ellipses`) scaled by ``zone_factor`` (3: two zone
  widths beyond the first zone) about their centres. A facet's weight toward the receiver is 1
  out to half-way between the first zone and the scaled one and falls to 0 at the scaled one
  (a Planck taper, infinitely differentiable, so the edge radiates almost nothing [1]_). The
  facets fill the box around all the areas, cut at the mast's foot (``u >= 0``) and at the
  DEM's edge (nodes off the DEM count as the plane). Every weight rises from 0 at the foot
  over half the distance to the nearest specular point: the ground right under the
  antennas holds no specular point for any receiver of the approach, and there the amplitude
  ``1 / r1`` varies on the scale of the antenna height, which a coarse sum aliases.
- **Sampling.** Each facet integrates the linear part of the phase exactly (its sinc factors,
  :mod:`geo.optics`), so the rule that the phase move at most pi/8 between samples is applied to
  what is left, the quadratic part, ``k d^2 / (8 r)`` at the facet's edge
  for a facet of side ``d`` at distance ``r`` from the antenna or the nearest receiver. Facets are
  sized so that it stays below pi/8 (``d <= sqrt(lambda r / 2)``), and never larger than a DEM
  cell, so the bilinear surface is followed cell by cell; on DEMs finer than 2.5 m the facets stay
  2.5 m (they sample the bilinear surface at their corners, so detail finer than that is not
  followed: a bound on the cost). ``refine`` divides every side. The facet corners are not
  aligned with the DEM's posts (the DEM is in its own CRS): at one facet per cell the surface is
  resampled, which the doubled-sampling check measures.
- **Visibility.** A facet adds nothing to an antenna that the ground hides from it: the segment
  from the facet to the antenna is marched in 16 steps (geometric, from 0.5 m off the facet to
  98 % of the way) over the bilinear surface of the area, resampled on a uniform grid of the DEM
  cell and at most 2 m (the prediction's choice, :mod:`geo.surface_prediction`).
  Toward the receivers, each facet's horizon is taken along the course (toward +u, over up to
  600 m); a receiver whose elevation seen from the facet is below that horizon is hidden. The
  receivers on the approach lie within about 20 deg of the course seen from the zone, so the
  horizon along the course stands for theirs: an approximation, stated in the outputs' notes.

Coordinates as :mod:`geo.prediction`: ``u`` along the course toward the approach from the foot
of the mast, ``w`` across toward the runway, ``Z`` up from the plane's elevation at the foot. [m]

References
----------
.. [1] McKechan, D. J. A., Robinson, C. and Sathyaprakash, B. S., "A tapering window for
       time-domain templates and simulated signals", Class. Quantum Grav. 27 (2010) 084020
       (the Planck taper).
.. [2] Beckmann, P. and Spizzichino, A., *The Scattering of Electromagnetic Waves from Rough
       Surfaces*, Pergamon, 1963, ch. 3 (the Kirchhoff integral over the surface).
.. [3] Press, W. H. et al., *Numerical Recipes*, 3rd ed., 2007, sec. 3.6 (bilinear
       interpolation).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cached_property

import numpy as np

from geo.fresnel import exact_ellipses
from geo.optics import Facets
from geo.parallel import map_chunks

__all__ = ["AreaLimits", "SurfaceGrid", "area_limits", "graded_nodes", "planck_taper", "surface_grid"]

#: Steps of the march from a facet to an antenna.
_MARCH_STEPS = 16
#: Facets per chunk of the shading marches (each chunk holds about 20 arrays of 16 values a facet).
_SHADING_CHUNK = 10_000
#: Reach of a facet's horizon along the course. [m]
_HORIZON_REACH_M = 600.0
#: Smallest facet side. [m]
_MIN_SIDE_M = 0.05
#: Facets follow DEM cells down to this size, no finer (a bound on the cost for fine DEMs). [m]
_FINEST_CELL_M = 2.5
#: Facet side sqrt(lambda r / divisor): 2 keeps the quadratic phase at the edge below pi/8.
_PHASE_DIVISOR = 2.0


def planck_taper(t):
    """0 for ``t <= 0``, 1 for ``t >= 1``, infinitely differentiable in between [1]_."""
    t = np.clip(np.asarray(t, dtype=float), 0.0, 1.0)
    inner = (t > 0.0) & (t < 1.0)
    out = (t >= 1.0).astype(float)
    ti = t[inner]
    out[inner] = 1.0 / (1.0 + np.exp(np.clip(1.0 / ti - 1.0 / (1.0 - ti), -700.0, 700.0)))
    return out


@dataclass(frozen=True)
class AreaLimits:
    """The box the integral runs over, each receiver's own area in it, and the taper at the foot.

    Attributes
    ----------
    u0_m, u1_m, w0_m, w1_m : float
        The box: every scaled zone, cut at the foot of the mast. [m]
    foot_ramp_m : float
        The weight rises from 0 at ``u0_m`` to 1 at ``u0_m + foot_ramp_m``. [m]
    centres_m : numpy.ndarray, shape (S, R, 2)
        Centres of the first Fresnel zones of each antenna and receiver. [m]
    quadratic : numpy.ndarray, shape (S, R, 2, 2)
        Their ellipses ``(p - p0)^T Q (p - p0) <= 1``. [1/m2]
    zone_factor : float
        A facet counts fully for a receiver inside ``(1 + f) / 2`` times any antenna's zone
        (``rho`` below that), tapers to 0 at ``f`` times.
    """

    u0_m: float
    u1_m: float
    w0_m: float
    w1_m: float
    foot_ramp_m: float
    centres_m: np.ndarray
    quadratic: np.ndarray
    zone_factor: float

    def weights(self, u_m, w_m) -> np.ndarray:
        """Weight of the facets centred at (u, w) common to all receivers (the foot ramp)."""
        return planck_taper((np.asarray(u_m, float) - self.u0_m) / self.foot_ramp_m)

    def receiver_spans(self) -> tuple[np.ndarray, np.ndarray]:
        """Along-course span (u) of each receiver's area, over the antennas. [m]"""
        inv = np.linalg.inv(self.quadratic)  # (S, R, 2, 2)
        half = self.zone_factor * np.sqrt(inv[..., 0, 0])
        return np.min(self.centres_m[..., 0] - half, axis=0), np.max(self.centres_m[..., 0] + half, axis=0)

    def pair_weights(self, u_m, w_m, receivers=None) -> np.ndarray:
        """Weight of facets centred at (u, w) toward each receiver, shape (p, R).

        ``rho = sqrt((p - p0)^T Q (p - p0))`` is the distance in units of the first zone; the
        weight is a Planck taper from 1 at ``rho = (1 + f) / 2`` to 0 at ``rho = f``, the
        largest over the antennas. ``receivers`` selects receivers (all by default).
        """
        f = self.zone_factor
        sel = slice(None) if receivers is None else receivers
        u = np.asarray(u_m, float)[:, None]
        w = np.asarray(w_m, float)[:, None]
        best = None
        for centre, q in zip(self.centres_m[:, sel], self.quadratic[:, sel]):
            du, dw = u - centre[None, :, 0], w - centre[None, :, 1]
            rho = np.sqrt(q[None, :, 0, 0] * du * du + 2.0 * q[None, :, 0, 1] * du * dw + q[None, :, 1, 1] * dw * dw)
            best = rho if best is None else np.minimum(best, rho)
        weight = np.zeros(best.shape)
        inner = best <= (1.0 + f) / 2.0
        weight[inner] = 1.0
        edge = (best > (1.0 + f) / 2.0) & (best < f)
        weight[edge] = planck_taper((f - best[edge]) / ((f - 1.0) / 2.0))
        return weight


def area_limits(antennas_m, receivers_m, wavelength_m: float, zone_factor: float = 3.0) -> AreaLimits:
    """The integration box and areas from the first Fresnel zones of every antenna and receiver.

    Parameters
    ----------
    antennas_m : array_like, shape (S, 3)
        (u, w, height above the plane). [m]
    receivers_m : array_like, shape (R, 3)
        (u, w, height above the plane); all above the plane. [m]
    wavelength_m : float
        [m]
    zone_factor : float
        Each receiver's area is its zones scaled by this about their centres, the outer half of
        the margin tapered (:meth:`AreaLimits.pair_weights`).

    Returns
    -------
    AreaLimits
    """
    ants = np.atleast_2d(np.asarray(antennas_m, float))
    rx = np.atleast_2d(np.asarray(receivers_m, float))
    centres, quads, lo_u, hi_u, lo_w, hi_w, spec = [], [], [], [], [], [], []
    f = zone_factor
    for ant in ants:
        centre, quad = exact_ellipses(ant, rx, wavelength_m)
        inv = np.linalg.inv(quad)
        half_u, half_w = np.sqrt(inv[:, 0, 0]), np.sqrt(inv[:, 1, 1])
        centres.append(centre)
        quads.append(quad)
        lo_u.append(centre[:, 0] - f * half_u)
        hi_u.append(centre[:, 0] + f * half_u)
        lo_w.append(centre[:, 1] - f * half_w)
        hi_w.append(centre[:, 1] + f * half_w)
        spec.append(ant[2] / (ant[2] + rx[:, 2]) * (rx[:, 0] - ant[0]) + ant[0])  # specular point (u)
    u0 = 0.0
    foot = max(0.5 * float(np.min(np.concatenate(spec))) - u0, 1.0)
    return AreaLimits(
        u0,
        float(np.max(np.concatenate(hi_u))),
        float(np.min(np.concatenate(lo_w))),
        float(np.max(np.concatenate(hi_w))),
        foot,
        np.asarray(centres),
        np.asarray(quads),
        f,
    )


def graded_nodes(lo_m: float, hi_m: float, side_at) -> np.ndarray:
    """Nodes from ``lo_m`` to ``hi_m`` with the step ``side_at(x)`` at each node. [m]"""
    nodes = [lo_m]
    x = lo_m
    while x < hi_m:
        x = x + max(float(side_at(x)), _MIN_SIDE_M)
        nodes.append(min(x, hi_m))
    nodes = np.asarray(nodes)
    if nodes.size >= 3 and nodes[-1] - nodes[-2] < 0.3 * (nodes[-2] - nodes[-3]):
        nodes = np.delete(nodes, -2)  # no sliver at the end
    return nodes


@dataclass(frozen=True)
class SurfaceGrid:
    """The ground of the integration area on a graded node grid.

    Attributes
    ----------
    u_m, w_m : numpy.ndarray
        Node coordinates along and across. [m]
    z_m : numpy.ndarray, shape (len(w_m), len(u_m))
        Ground at the nodes (``Z``). [m]
    limits : AreaLimits
    lookup_step_m : float
        Step of the uniform resampling the visibility marches read. [m]
    """

    u_m: np.ndarray
    w_m: np.ndarray
    z_m: np.ndarray
    limits: AreaLimits
    lookup_step_m: float = 2.0

    def facets(self) -> Facets:
        """One facet per grid cell: the tangent parallelogram of the bilinear patch at its centre.

        Facets come in slabs of increasing ``u`` (so that a chunk of them is compact along the
        course and skips the receivers whose areas it misses).

        For corners ``P00, P10, P01, P11`` (first index along u) the centre is their mean and the
        edges ``a = (P10 + P11 - P00 - P01) / 2``, ``b = (P01 + P11 - P00 - P10) / 2``: exact for
        a plane, and with the bilinear patch's own normal at its centre [3]_.
        """
        uu, ww = np.meshgrid(self.u_m, self.w_m, indexing="ij")
        p = np.stack([uu, ww, self.z_m.T], axis=-1)  # (nu, nw, 3): facets ordered along u first
        p00, p10, p01, p11 = p[:-1, :-1], p[1:, :-1], p[:-1, 1:], p[1:, 1:]
        centres = ((p00 + p10 + p01 + p11) / 4.0).reshape(-1, 3)
        a = ((p10 + p11 - p00 - p01) / 2.0).reshape(-1, 3)
        b = ((p01 + p11 - p00 - p10) / 2.0).reshape(-1, 3)
        return Facets(centres, a, b, False, self.limits.weights(centres[:, 0], centres[:, 1]))

    def height_at(self, u_m, w_m) -> np.ndarray:
        """Bilinear ground height at points inside the grid (clamped at its edges) [3]_. [m]"""
        u = np.clip(np.asarray(u_m, float), self.u_m[0], self.u_m[-1])
        w = np.clip(np.asarray(w_m, float), self.w_m[0], self.w_m[-1])
        i = np.clip(np.searchsorted(self.u_m, u) - 1, 0, self.u_m.size - 2)
        j = np.clip(np.searchsorted(self.w_m, w) - 1, 0, self.w_m.size - 2)
        tu = (u - self.u_m[i]) / (self.u_m[i + 1] - self.u_m[i])
        tw = (w - self.w_m[j]) / (self.w_m[j + 1] - self.w_m[j])
        z = self.z_m
        return (z[j, i] * (1 - tu) + z[j, i + 1] * tu) * (1 - tw) + (z[j + 1, i] * (1 - tu) + z[j + 1, i + 1] * tu) * tw

    def _lookup(self, step_m: float):
        """The surface resampled on a uniform grid of ``step_m`` (for the visibility marches)."""
        uu = np.arange(self.u_m[0], self.u_m[-1] + step_m, step_m)
        ww = np.arange(self.w_m[0], self.w_m[-1] + step_m, step_m)
        gu, gw = np.meshgrid(uu, ww)
        z = self.height_at(gu.ravel(), gw.ravel()).reshape(gu.shape)
        u0, w0, nu, nw = uu[0], ww[0], uu.size, ww.size
        # Corner heights of every lookup cell side by side, so one gather reads all four.
        corners = np.stack([z[:-1, :-1], z[:-1, 1:], z[1:, :-1], z[1:, 1:]], axis=-1).reshape(-1, 4)
        corners = corners.astype(np.float32)  # centimetre heights need no more
        inv = 1.0 / step_m

        def at(u, w):
            fu = np.clip(((u - u0) * inv).astype(np.float32), 0.0, nu - 1.001)
            fw = np.clip(((w - w0) * inv).astype(np.float32), 0.0, nw - 1.001)
            # Clipped again as integers: in single precision nu - 1.001 can round up to nu - 1.
            i = np.minimum(fu.astype(np.int32), nu - 2)
            j = np.minimum(fw.astype(np.int32), nw - 2)
            tu, tw = fu - i, fw - j
            c = corners[j * (nu - 1) + i]
            near = c[..., 0] + (c[..., 1] - c[..., 0]) * tu
            return near * (1 - tw) + (c[..., 2] + (c[..., 3] - c[..., 2]) * tu) * tw

        return at

    @cached_property
    def _height_lookup(self):
        """:meth:`_lookup` at the grid's ``lookup_step_m``, made once per grid."""
        return self._lookup(self.lookup_step_m)

    def antenna_visibility(self, facets: Facets, antennas_m) -> np.ndarray:
        """Whether each antenna sees each facet over the ground between them. (S, P) bool"""
        ants = np.atleast_2d(np.asarray(antennas_m, float))
        height_at = self._height_lookup
        c = facets.centres_m
        ramp = np.linspace(0.0, 1.0, _MARCH_STEPS)[None, :]

        def blocked(sl, ant):
            length = np.maximum(np.linalg.norm(ant[None, :2] - c[sl, :2], axis=1), 1.0)[:, None]
            # Steps from 0.5 m to 98 % of the way, geometric: fine close to the facet, where its
            # own neighbourhood can hide it; sparse near the antenna, where the line is high.
            first = np.log(0.5 / length)
            t = np.exp(first + (math.log(0.98) - first) * ramp)
            u = c[sl, 0, None] + t * (ant[0] - c[sl, 0, None])
            w = c[sl, 1, None] + t * (ant[1] - c[sl, 1, None])
            line = c[sl, 2, None] + t * (ant[2] - c[sl, 2, None])
            return np.any(height_at(u, w) > line + 1e-3, axis=1)

        def chunk(sl):
            return [~blocked(sl, ant) for ant in ants]

        parts = map_chunks(chunk, len(facets), _SHADING_CHUNK)
        out = np.empty((ants.shape[0], len(facets)), dtype=bool)
        for s in range(ants.shape[0]):
            out[s] = np.concatenate([p[s] for p in parts]) if parts else np.zeros(0, bool)
        return out

    def horizon_tangents(self, facets: Facets) -> np.ndarray:
        """Tangent of each facet's horizon along the course (toward +u). (P,)"""
        c = facets.centres_m
        steps = np.geomspace(1.0, _HORIZON_REACH_M, 16)[None, :]
        height_at = self._height_lookup

        def chunk(sl):
            u = c[sl, 0, None] + steps
            inside = u <= self.u_m[-1]
            z = height_at(u, np.broadcast_to(c[sl, 1, None], u.shape))
            return np.max(np.where(inside, (z - c[sl, 2, None]) / steps, -np.inf), axis=1)

        parts = map_chunks(chunk, len(facets), _SHADING_CHUNK)
        return np.concatenate(parts) if parts else np.zeros(0)


def surface_grid(limits: AreaLimits, heights, wavelength_m: float, cell_m: float, antennas_m, receivers_m, refine=1.0):
    """Nodes graded by the pi/8 rule (see the module notes) and the ground on them.

    Parameters
    ----------
    limits : AreaLimits
    heights : callable
        ``heights(u, w) -> Z`` for arrays of points (NaN off the DEM). [m]
    wavelength_m : float
        [m]
    cell_m : float
        DEM cell; no facet is larger. [m]
    antennas_m, receivers_m : array_like
        (u, w, Z) of the antennas and the receivers (for the distance to the nearest one). [m]
    refine : float
        Divides every facet side (the doubled-sampling check uses 2).

    Returns
    -------
    SurfaceGrid
    """
    ants = np.atleast_2d(np.asarray(antennas_m, float))
    rx = np.atleast_2d(np.asarray(receivers_m, float))
    h_low = float(np.min(ants[:, 2]))
    near_rx = rx[np.argsort(rx[:, 2])[: min(rx.shape[0], 400)]]

    def nearest(x, axis):
        if axis == 0:
            r_ant = math.hypot(x, h_low)
            r_rx = float(np.min(np.hypot(near_rx[:, 0] - x, near_rx[:, 2])))
            return min(r_ant, r_rx)
        return max(abs(x), h_low)

    def side(axis):
        largest = max(cell_m, _FINEST_CELL_M)
        return lambda x: min(math.sqrt(wavelength_m * nearest(x, axis) / _PHASE_DIVISOR), largest) / refine

    u = graded_nodes(limits.u0_m, limits.u1_m, side(0))
    w_pos = graded_nodes(0.0, max(limits.w1_m, 0.0), side(1))
    w_neg = -graded_nodes(0.0, max(-limits.w0_m, 0.0), side(1))[::-1]
    w = np.concatenate([w_neg[:-1], w_pos])
    w = w[(w >= limits.w0_m - 1e-9) & (w <= limits.w1_m + 1e-9)]
    uu, ww = np.meshgrid(u, w)
    z = np.asarray(heights(uu.ravel(), ww.ravel()), dtype=float).reshape(uu.shape)
    return SurfaceGrid(u, w, z, limits, cell_m / refine)
