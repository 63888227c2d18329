"""The ground in front of the mast as flat facets: integration area, sampling, visibility.

The physical-optics integral of :mod:`geo.optics.kernel` runs over facets cut from the bilinear DEM
surface. This module decides where the integral runs and how finely, and which facets each
antenna and receiver can see:

- **Area.** Each receiver has its own area: the exact first Fresnel zones of the antennas and
  that receiver (:func:`geo.radio.fresnel.exact_ellipses`) scaled by ``zone_factor`` (3: two zone
  widths beyond the first zone) about their centres. A facet's weight toward the receiver is 1
  out to half-way between the first zone and the scaled one and falls to 0 at the scaled one
  (a Planck taper, infinitely differentiable, so the edge radiates almost nothing [1]_). The
  facets fill the box around all the areas, cut at the mast's foot (``u >= 0``) and at the
  DEM's edge (nodes off the DEM count as the plane). Each receiver's weight rises from 0 at the
  foot over half the distance to its own nearest specular point (so that no receiver's result
  depends on the receivers computed with it): the ground right under the antennas holds no
  specular point for any receiver of the approach, and there the amplitude ``1 / r1`` varies
  on the scale of the antenna height, which a coarse sum aliases.
- **Sampling.** Each facet integrates the linear part of the phase exactly (its sinc factors,
  :mod:`geo.optics.kernel`), so the rule that the phase move at most pi/8 between samples is applied to
  what is left, the quadratic part, ``k d^2 / (8 r)`` at the facet's edge
  for a facet of side ``d`` at distance ``r`` from the antenna or the nearest receiver. Facets are
  sized so that it stays below pi/8 (``d <= sqrt(lambda r / 2)``), and never larger than a DEM
  cell, so the bilinear surface is followed cell by cell; on DEMs finer than 2.5 m the facets stay
  2.5 m (they sample the bilinear surface at their corners, so detail finer than that is not
  followed: a bound on the cost). ``refine`` divides every side. The facet corners are not
  aligned with the DEM's posts (the DEM is in its own CRS): at one facet per cell the surface is
  resampled, which the doubled-sampling check measures.
- **Visibility.** A facet adds nothing to an antenna that the ground hides from it: a sweep
  outward from each antenna, slab by slab of the node lattice, carries the horizon of every ray
  (the largest elevation tangent met so far), read linearly across where a ray crosses a slab
  [4]_; a facet below the horizon of its ray is hidden. Every slab on the way counts (no
  sampling along the ray); against a dense line-of-sight march it differs on at most 2 % of the
  facets, at shadow edges (tests/optics/test_surface_shading.py). Toward the receivers, each facet's
  horizon is taken along the course (toward +u, over up to 600 m, at 16 distances on the
  surface along its column); a receiver whose elevation seen from the facet is below that
  horizon is hidden. The receivers on the approach lie within about 20 deg of the course seen
  from the zone, so the horizon along the course stands for theirs: an approximation, stated in
  the outputs' notes.

Coordinates as :mod:`geo.radio.prediction`: ``u`` along the course toward the approach from the foot
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
.. [4] Franklin, W. R. and Ray, C. K., "Higher isn't necessarily better: visibility algorithms
       and experiments", *Advances in GIS Research*, 1994 (viewsheds by sweeping horizons outward
       from the observer, with the horizon read between the lattice points a ray crosses; from
       memory).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from geo.optics.kernel import Facets
from geo.radio.fresnel import exact_ellipses
from geo.radio.knife_edge import ridge_on_ground_amplitude

__all__ = [
    "AreaLimits",
    "KNIFE_EDGE_NEAR_WAVELENGTHS",
    "SHADOWING",
    "SurfaceGrid",
    "area_limits",
    "graded_nodes",
    "planck_taper",
    "surface_grid",
]

#: Elevation tangent where nothing stands (the antenna's own slab and behind it).
_NONE = -1e30
#: Reach of a facet's horizon along the course. [m]
_HORIZON_REACH_M = 600.0
#: Smallest facet side. [m]
_MIN_SIDE_M = 0.05
#: Facets follow DEM cells down to this size, no finer (a bound on the cost for fine DEMs). [m]
_FINEST_CELL_M = 2.5
#: The knife edge leaves out the ground within this many wavelengths of a facet (its own surface).
KNIFE_EDGE_NEAR_WAVELENGTHS = 10.0
#: An obstacle's excess above the ground line counts from this height (rounding on a plane stays below it). [m]
_EXCESS_TOLERANCE_M = 1e-6
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
        The facet weight of :meth:`weights` rises from 0 at ``u0_m`` to 1 at ``u0_m + foot_ramp_m``:
        the smallest of ``foot_ramps_m``, for an integral over the whole box for every receiver. [m]
    centres_m : numpy.ndarray, shape (S, R, 2)
        Centres of the first Fresnel zones of each antenna and receiver. [m]
    quadratic : numpy.ndarray, shape (S, R, 2, 2)
        Their ellipses ``(p - p0)^T Q (p - p0) <= 1``. [1/m2]
    zone_factor : float
        A facet counts fully for a receiver inside ``(1 + f) / 2`` times any antenna's zone
        (``rho`` below that), tapers to 0 at ``f`` times.
    foot_ramps_m : numpy.ndarray, shape (R,), optional
        Each receiver's own foot ramp (half the distance to its nearest specular point), applied
        by :meth:`pair_weights`, so that a receiver's result does not depend on the receivers
        computed with it. [m]
    """

    u0_m: float
    u1_m: float
    w0_m: float
    w1_m: float
    foot_ramp_m: float
    centres_m: np.ndarray
    quadratic: np.ndarray
    zone_factor: float
    foot_ramps_m: np.ndarray | None = None

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
        largest over the antennas, times the receiver's own foot ramp (``foot_ramps_m``).
        ``receivers`` selects receivers (all by default).
        """
        f = self.zone_factor
        sel = slice(None) if receivers is None else receivers
        u = np.asarray(u_m, float)[:, None]
        w = np.asarray(w_m, float)[:, None]
        least = None  # the smallest rho squared over the antennas
        for centre, q in zip(self.centres_m[:, sel], self.quadratic[:, sel]):
            du, dw = u - centre[None, :, 0], w - centre[None, :, 1]
            rho2 = q[None, :, 0, 0] * du * du + 2.0 * q[None, :, 0, 1] * du * dw + q[None, :, 1, 1] * dw * dw
            least = rho2 if least is None else np.minimum(least, rho2, out=least)
        best = np.sqrt(least, out=least)  # sqrt is monotonic: the least rho
        weight = (best <= (1.0 + f) / 2.0).astype(float)
        edge = np.flatnonzero(((best > (1.0 + f) / 2.0) & (best < f)).ravel())
        weight.ravel()[edge] = planck_taper((f - best.ravel()[edge]) / ((f - 1.0) / 2.0))
        if self.foot_ramps_m is not None:  # only the facets within some receiver's ramp: 1 beyond
            ramps = self.foot_ramps_m[sel]
            near = np.flatnonzero(u[:, 0] - self.u0_m < np.max(ramps)) if ramps.size else np.arange(0)
            weight[near] *= planck_taper((u[near] - self.u0_m) / ramps[None, :])
        return weight

    def within_areas(self, u_m, w_m, receivers=None, margin_m: float = 1e-6) -> np.ndarray:
        """Whether a point of the lattice ``u_m`` x ``w_m`` lies in some receiver's area. (len(u), len(w)) bool

        True wherever :meth:`pair_weights` is not 0 for some receiver (and a little beyond: the
        points within ``margin_m`` of an area's edge): at each ``u`` the ellipse
        ``rho^2 = f^2`` of every antenna and receiver cuts an interval of ``w`` (the roots of a
        quadratic in ``w``), and a point inside the span of those intervals is kept. So the facets
        outside every area, whose pair weights are all 0, are known without computing them.
        ``receivers`` selects receivers (all by default).

        References
        ----------
        .. [1] Born, M. and Wolf, E., *Principles of Optics*, 7th ed., 1999, sec. 8.2 (Fresnel zones).
        """
        sel = slice(None) if receivers is None else receivers
        u = np.asarray(u_m, float)[:, None, None]
        centres, q = self.centres_m[:, sel], self.quadratic[:, sel]  # (S, R, 2), (S, R, 2, 2)
        du = u - centres[None, :, :, 0]  # (nu, S, R)
        a, b = q[None, :, :, 1, 1], q[None, :, :, 0, 1] * du
        c = q[None, :, :, 0, 0] * du * du - self.zone_factor**2
        disc = b * b - a * c  # a dw^2 + 2 b dw + c < 0 between the roots
        cut = disc > 0.0
        root = np.sqrt(np.where(cut, disc, 0.0))
        w_c = centres[None, :, :, 1]
        lo = np.where(cut, w_c + (-b - root) / a, np.inf).reshape(u.shape[0], -1).min(axis=1)
        hi = np.where(cut, w_c + (-b + root) / a, -np.inf).reshape(u.shape[0], -1).max(axis=1)
        w = np.asarray(w_m, float)[None, :]
        return (w >= lo[:, None] - margin_m) & (w <= hi[:, None] + margin_m)


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
    ramps = np.maximum(0.5 * np.min(np.asarray(spec), axis=0) - u0, 1.0)  # each receiver's own
    return AreaLimits(
        u0,
        float(np.max(np.concatenate(hi_u))),
        float(np.min(np.concatenate(lo_w))),
        float(np.max(np.concatenate(hi_w))),
        float(np.min(ramps)),
        np.asarray(centres),
        np.asarray(quads),
        f,
        ramps,
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
    """

    u_m: np.ndarray
    w_m: np.ndarray
    z_m: np.ndarray
    limits: AreaLimits

    def facets(self, foot: bool = True) -> Facets:
        """One facet per grid cell: the tangent parallelogram of the bilinear patch at its centre.

        ``foot``: the facets carry the common foot ramp (:meth:`AreaLimits.weights`); False when
        the pair weights carry each receiver's own (:meth:`AreaLimits.pair_weights`).

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
        weights = self.limits.weights(centres[:, 0], centres[:, 1]) if foot else None
        return Facets(centres, a, b, False, weights)

    def _centres(self):
        """Facet centres on the lattice: ``u`` per slab (nu - 1), ``w`` per column (nw - 1), ``Z`` (nu - 1, nw - 1)."""
        z = self.z_m.T  # (nu, nw)
        zc = (z[:-1, :-1] + z[1:, :-1] + z[:-1, 1:] + z[1:, 1:]) / 4.0
        return (self.u_m[:-1] + self.u_m[1:]) / 2.0, (self.w_m[:-1] + self.w_m[1:]) / 2.0, zc

    def _ground(self, u, w) -> np.ndarray:
        """The bilinear ground at points (u, w) of the lattice (clamped to it) [3]_. [m]"""
        nodes_u, nodes_w, z = self.u_m, self.w_m, self.z_m
        i = np.clip(np.searchsorted(nodes_u, u) - 1, 0, nodes_u.size - 2)
        j = np.clip(np.searchsorted(nodes_w, w) - 1, 0, nodes_w.size - 2)
        tu = (u - nodes_u[i]) / (nodes_u[i + 1] - nodes_u[i])
        tw = (w - nodes_w[j]) / (nodes_w[j + 1] - nodes_w[j])
        low = z[j, i] * (1.0 - tu) + z[j, i + 1] * tu
        return low * (1.0 - tw) + (z[j + 1, i] * (1.0 - tu) + z[j + 1, i + 1] * tu) * tw

    def _across(self, w):
        """Index of the lattice column left of ``w`` and the fraction toward the next (clamped)."""
        j = np.clip(np.searchsorted(self.w_m, w) - 1, 0, self.w_m.size - 2)
        t = np.clip((w - self.w_m[j]) / (self.w_m[j + 1] - self.w_m[j]), 0.0, 1.0)
        return j, t

    def fitted_slope(self) -> tuple[float, float]:
        """Slopes (along ``u``, across ``w``) of the least-squares plane through the nodes' ground, NaN left out. [-]"""
        uu, ww = np.meshgrid(self.u_m, self.w_m)
        ok = np.isfinite(self.z_m)
        if ok.sum() < 3:
            return 0.0, 0.0
        design = np.column_stack([uu[ok], ww[ok], np.ones(int(ok.sum()))])
        coef = np.linalg.lstsq(design, self.z_m[ok], rcond=None)[0]
        return float(coef[0]), float(coef[1])

    def _foot_height(self, ua: float, wa: float) -> float:
        """Ground under an antenna, linear along ``u`` through the first two slabs (exact on a plane). [m]"""
        u, w, z = self.u_m, self.w_m, self.z_m.T
        z0, z1 = np.interp(wa, w, z[0]), np.interp(wa, w, z[1])
        return float(z0 + (z1 - z0) * (ua - u[0]) / (u[1] - u[0]))

    def _horizon_sweep(self, antenna, plane_slope=None) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """The sweep of :meth:`antenna_visibility` from one antenna, node by node of the lattice.

        Returns ``tau`` (nu, nw), each node's elevation tangent from the antenna, and for each
        node's ray the horizon before its slab: ``H`` (the largest ``tau`` met) and where it
        stands, its ``u`` offset from the antenna (read linearly across where the ray crosses a
        slab, as ``H``). [-], [m]

        With ``plane_slope`` ``(du, dw)`` the sweep ranks the nodes by their height above the plane
        of that slope through the ground under the antenna instead of by ``tau`` (the highest
        point of the ground on the way, for the knife edge).
        """
        ua, wa, za = antenna
        u, w, z = self.u_m, self.w_m, self.z_m.T  # z: (nu, nw)
        du = u - ua
        ahead = du > 1e-6
        tau = np.full(z.shape, _NONE)
        if plane_slope is None:
            tau[ahead] = (z[ahead] - za) / np.hypot(du[ahead, None], w[None, :] - wa)
        else:
            above = z - (plane_slope[0] * du[:, None] + plane_slope[1] * (w[None, :] - wa))
            tau[ahead] = above[ahead]
        behind = np.full(z.shape, _NONE)  # H: the horizon of each node's ray, before its slab
        behind_u = np.zeros(z.shape)
        for i in range(1, u.size):
            if ahead[i - 1]:
                crossing = wa + (w - wa) * (du[i - 1] / du[i])
                earlier = np.interp(crossing, w, behind[i - 1])
                here = np.interp(crossing, w, tau[i - 1])
                this = here >= earlier
                behind[i] = np.where(this, here, earlier)
                behind_u[i] = np.where(this, du[i - 1], np.interp(crossing, w, behind_u[i - 1]))
        return tau, behind, behind_u

    def _facet_horizons(self, antenna, near_m: float, plane_slope=None) -> dict:
        """Per facet (nu - 1, nw - 1), seen from one antenna: its own tangent, range, and the horizon of its ray.

        The horizon is read where the ray crosses the last slab at least ``near_m`` before the
        facet's centre (``near_m = 0``: the facet's own first slab, half a facet before its centre):
        ``horizon`` (tangent), ``obstacle_u`` (its ``u`` offset), ``obstacle_z`` (the ground on
        the facet's own ray there, bilinear: exact on a plane); ``valid`` where there is ground
        ahead of the antenna on the way. [-], [m]
        """
        ua, wa, za = antenna
        u = self.u_m
        uc, wc, zc = self._centres()
        tau, behind, behind_u = self._horizon_sweep(antenna, plane_slope)
        du, duc = u - ua, uc - ua
        front = duc > 1e-6
        rows = np.arange(uc.size)  # slab i is the first slab of facet i
        if near_m > 0.0:
            rows = np.clip(np.searchsorted(u, uc - near_m, side="right") - 1, 0, rows)
        ratio = np.where(front, du[rows] / np.where(front, duc, 1.0), 0.0)  # (nu - 1,)
        j, t = self._across(wa + (wc[None, :] - wa) * ratio[:, None])  # (nu - 1, nw - 1)
        r = rows[:, None]

        def across(values):
            return values[r, j] * (1.0 - t) + values[r, j + 1] * t

        earlier, here = across(behind), across(tau)
        this = here >= earlier
        obstacle_u = np.where(this, du[rows][:, None], across(behind_u))
        along = obstacle_u / np.where(front, duc, 1.0)[:, None]
        range_m = np.hypot(duc[:, None], wc[None, :] - wa)
        return {
            "own": (zc - za) / np.where(range_m > 0.0, range_m, 1.0),
            "range_m": range_m,
            "horizon": np.maximum(earlier, here),
            "obstacle_u": obstacle_u,
            "obstacle_z": self._ground(ua + obstacle_u, wa + (wc[None, :] - wa) * along),
            "valid": (front & (du[rows] > 1e-6))[:, None] & np.ones(wc.size, dtype=bool)[None, :],
            "duc": np.where(front, duc, 1.0)[:, None],
            "zc": zc,
        }

    def antenna_visibility(self, antennas_m) -> np.ndarray:
        """Whether each antenna sees each facet of :meth:`facets` over the ground between them. (S, P) bool

        A sweep from the antenna outward, slab by slab of nodes along ``u`` [4]_: ``tau``, the
        tangent of a node's elevation seen from the antenna, and ``H``, the largest ``tau`` met
        so far along the ray to it. The ray to a node of slab ``i`` crosses slab ``i - 1``
        between two nodes, where ``H`` and ``tau`` of that slab are read linearly across, so
        ``H_i = max(H, tau)_{i-1}`` at the crossing. A facet is hidden when the horizon of its
        ray where it crosses the last slab before the facet stands above the facet's centre (by
        more than 1 mm at its range). Only the ground beyond the antenna's own ``u`` is swept
        (the antennas stand over the grid's first slab, the foot of the mast).
        """
        ants = np.atleast_2d(np.asarray(antennas_m, float))
        out = np.empty((ants.shape[0], (self.u_m.size - 1) * (self.w_m.size - 1)), dtype=bool)
        for s, antenna in enumerate(ants):
            f = self._facet_horizons(antenna, 0.0)
            seen = (f["own"] + 1e-3 / np.maximum(f["range_m"], 1e-3) >= f["horizon"]) | ~f["valid"]
            out[s] = seen.ravel()
        return out

    def antenna_weights(
        self, antennas_m, wavelength_m: float, shadowing: str = "knife-edge", plane_slope=(0.0, 0.0)
    ) -> np.ndarray:
        """Amplitude of each antenna's field at each facet of :meth:`facets` over the ground between them. (S, P)

        ``shadowing``: ``"knife-edge"`` (diffraction over the horizon of the facet's ray, below),
        ``"hard"`` (1 where :meth:`antenna_visibility` sees the facet, else 0) or ``"none"`` (1).

        Knife edge: the obstacle is the highest point of the ground on the ray above the plane of
        slope ``plane_slope`` (along ``u``, ``w``; the reflecting plane's), found by the sweep of
        :meth:`antenna_visibility` ranking heights instead of tangents (so that it stays the same
        obstacle across its shadow boundary), leaving out the last ``KNIFE_EDGE_NEAR_WAVELENGTHS``
        wavelengths before the facet (there the ground is the facet's own surface, and Fresnel's approximation needs
        distances of many wavelengths). The ground line is the chord from the ground under the
        antenna to the facet; the obstacle's excess ``t`` above it and its image below it form a
        strip, whose edges stand ``h`` and ``h - 2 t`` above the ray (``h`` the obstacle's height
        above the ray): the weight is ``|F(v_top) + 1 - F(v_bottom)|``
        (:func:`geo.radio.knife_edge.ridge_on_ground_amplitude`), exactly 1 where ``t <= 0``, so
        on any plane. Distances are horizontal. [-]

        References
        ----------
        .. [5] ITU-R P.526, sec. 4.1 (single knife edge); Born and Wolf (1999), sec. 8.7.
        """
        ants = np.atleast_2d(np.asarray(antennas_m, float))
        if shadowing == "hard":
            return self.antenna_visibility(ants).astype(float)
        count = (self.u_m.size - 1) * (self.w_m.size - 1)
        if shadowing == "none":
            return np.ones((ants.shape[0], count))
        _check_shadowing(shadowing)
        out = np.empty((ants.shape[0], count))
        near_m = KNIFE_EDGE_NEAR_WAVELENGTHS * wavelength_m
        for s, antenna in enumerate(ants):
            f = self._facet_horizons(antenna, near_m, tuple(plane_slope))
            out[s] = _source_ridge_weights(f, antenna, self._foot_height(antenna[0], antenna[1]), wavelength_m).ravel()
        return out

    def horizon_tangents(self) -> np.ndarray:
        """Tangent of each facet's horizon along the course (toward +u), for :meth:`facets`. (P,)

        The ground along a facet's column line (its ``w``) is linear between the lattice's slabs
        (the bilinear surface [3]_): read at 16 distances from 1 to 600 m ahead of the centre.
        """
        return self._course_horizon(1.0)[0].ravel()

    def _course_horizon(self, first_m: float, slope_u=None):
        """Along the course from each facet (16 distances from ``first_m`` to 600 m): tangent, distance, chord.

        Returns the horizon's tangent, its distance ahead, the ground there, and the chord's slope
        from the facet's centre to the ground at the last distance on the lattice (NaN where no
        ground lies ahead), each (nu - 1, nw - 1). [-], [m], [m], [-] With ``slope_u`` the point
        is the highest above the line of that slope through the facet's centre, not the horizon.
        """
        u = self.u_m
        uc, wc, zc = self._centres()
        z = self.z_m.T
        line = (z[:, :-1] + z[:, 1:]) / 2.0  # (nu, nw - 1): the ground along each column's centre line

        def ground_at(at):
            i = np.clip(np.searchsorted(u, at) - 1, 0, u.size - 2)
            f = np.clip((at - u[i]) / (u[i + 1] - u[i]), 0.0, 1.0)[:, None]
            return line[i] * (1.0 - f) + line[i + 1] * f

        best = np.full(zc.shape, -np.inf)
        rank = best.copy()
        distance, height = np.zeros(zc.shape), np.zeros(zc.shape)
        for step in np.geomspace(first_m, _HORIZON_REACH_M, 16):
            at = uc + step  # (nu - 1,)
            inside = at <= u[-1]
            ground = ground_at(at)
            tangent = np.where(inside[:, None], (ground - zc) / step, -np.inf)
            ranked = tangent if slope_u is None else np.where(inside[:, None], ground - slope_u * step, -np.inf)
            higher = ranked > rank
            rank = np.where(higher, ranked, rank)
            best = np.where(higher, tangent, best)
            distance = np.where(higher, step, distance)
            height = np.where(higher, ground, height)
        reach = np.minimum(uc + _HORIZON_REACH_M, u[-1]) - uc  # the chord's far end
        with np.errstate(invalid="ignore", divide="ignore"):
            chord = np.where((reach >= first_m)[:, None], (ground_at(uc + reach) - zc) / reach[:, None], np.nan)
        return best, distance, height, chord

    def horizon_obstacles(self, wavelength_m: float, slope_u: float = 0.0) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Each facet's obstacle along the course toward the receivers, for the knife edge. Each (P,)

        As :meth:`horizon_tangents`, from ``KNIFE_EDGE_NEAR_WAVELENGTHS`` wavelengths to 600 m ahead
        (:meth:`antenna_weights` says why not nearer), the highest point above the line of slope
        ``slope_u`` (the reflecting plane's along the course) through the facet's centre: its
        tangent, its distance, and its excess ``t`` above the chord from the facet's centre to the
        ground at the last distance on the lattice (0 where no ground lies ahead, or on a plane). The kernel
        (:func:`geo.optics.kernel.ground_fields`) makes each receiver's weight from them as
        :meth:`antenna_weights` does for the antennas. [-], [m], [m]
        """
        best, distance, height, chord = self._course_horizon(KNIFE_EDGE_NEAR_WAVELENGTHS * wavelength_m, slope_u)
        _, _, zc = self._centres()
        found = np.isfinite(best) & np.isfinite(chord)
        excess = np.where(found, height - (zc + np.where(found, chord, 0.0) * distance), 0.0)
        return np.where(found, best, 0.0).ravel(), np.where(found, distance, 1.0).ravel(), excess.ravel()


SHADOWING = ("knife-edge", "hard", "none")


def _check_shadowing(shadowing: str) -> None:
    if shadowing not in SHADOWING:
        raise ValueError(f"shadowing {shadowing!r} is not a valid option, must be one of {', '.join(SHADOWING)}")


def _source_ridge_weights(f: dict, antenna, foot_z_m: float, wavelength_m: float) -> np.ndarray:
    """The knife-edge weights of :meth:`SurfaceGrid.antenna_weights` from one antenna's facet horizons. [-]"""
    za = antenna[2]
    range_m = f["range_m"]
    d1 = range_m * f["obstacle_u"] / f["duc"]  # horizontal distance of the obstacle from the antenna
    d2 = range_m - d1
    share = d1 / np.where(range_m > 0.0, range_m, 1.0)
    excess = f["obstacle_z"] - (foot_z_m + (f["zc"] - foot_z_m) * share)  # t, above the chord
    above_ray = f["obstacle_z"] - (za + (f["zc"] - za) * share)  # h
    counts = f["valid"] & (excess > _EXCESS_TOLERANCE_M) & (d1 > 0.0) & (d2 > 0.0)
    weight = np.ones(range_m.shape)
    if np.any(counts):
        k = np.sqrt(2.0 * range_m[counts] / (wavelength_m * d1[counts] * d2[counts]))
        v_top = above_ray[counts] * k
        weight[counts] = ridge_on_ground_amplitude(v_top, v_top - 2.0 * excess[counts] * k)
    return weight


def _split(nodes: np.ndarray, parts: np.ndarray) -> np.ndarray:
    """Each interval of ``nodes`` cut into ``parts[i]`` equal ones. [m]"""
    pieces = [np.linspace(lo, hi, int(n) + 1)[:-1] for lo, hi, n in zip(nodes[:-1], nodes[1:], parts)]
    return np.concatenate([*pieces, nodes[-1:]])


def _detail_parts(deviation_m: np.ndarray, tolerance_m: float, most: int) -> np.ndarray:
    """Parts per interval so that the deviation from linear, falling as the square of the side, meets the tolerance."""
    dev = np.nan_to_num(deviation_m, nan=0.0)
    need = np.sqrt(np.maximum(dev, 0.0) / tolerance_m)
    parts = 2.0 ** np.ceil(np.log2(np.maximum(need, 1.0)))
    return np.minimum(parts, most).astype(int)


def _deviations(heights, u, w, z):
    """Largest departure of the ground from the line between neighbouring nodes, per interval along and across. [m]"""
    uu, ww = np.meshgrid((u[:-1] + u[1:]) / 2.0, w)
    mid_u = np.asarray(heights(uu.ravel(), ww.ravel()), float).reshape(uu.shape) - (z[:, :-1] + z[:, 1:]) / 2.0
    uu, ww = np.meshgrid(u, (w[:-1] + w[1:]) / 2.0)
    mid_w = np.asarray(heights(uu.ravel(), ww.ravel()), float).reshape(uu.shape) - (z[:-1, :] + z[1:, :]) / 2.0
    with np.errstate(all="ignore"):
        along = np.nanmax(np.abs(np.where(np.isfinite(mid_u), mid_u, 0.0)), axis=0) if w.size else np.zeros(u.size - 1)
        across = np.nanmax(np.abs(np.where(np.isfinite(mid_w), mid_w, 0.0)), axis=1) if u.size else np.zeros(w.size - 1)
    return along, across


def surface_grid(
    limits: AreaLimits, heights, wavelength_m: float, cell_m: float, antennas_m, receivers_m, refine=1.0,
    detail_tolerance_m: float | None = None, most_parts: int = 4,
):  # fmt: skip
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
        Divides every facet side (the doubled-sampling check uses 2). Where ``detail_tolerance_m``
        is given, the grid of ``refine`` 1 is cut into ``refine`` equal parts per interval (so
        that the finer grids hold the coarser one's nodes).
    detail_tolerance_m : float, optional
        Where the ground between two neighbouring nodes departs from the straight line between
        them by more than this (a ditch, a bank), the interval along or across is cut into up to
        ``most_parts`` equal parts, so that the departure, which falls as the square of the side
        [3]_, meets it: the facets are refined where the ground asks for it, not everywhere. [m]
    most_parts : int
        The most parts an interval is cut into for detail.

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

    base = 1.0 if detail_tolerance_m is not None else refine

    def side(axis):
        largest = max(cell_m, _FINEST_CELL_M)
        return lambda x: min(math.sqrt(wavelength_m * nearest(x, axis) / _PHASE_DIVISOR), largest) / base

    u = graded_nodes(limits.u0_m, limits.u1_m, side(0))
    w_pos = graded_nodes(0.0, max(limits.w1_m, 0.0), side(1))
    w_neg = -graded_nodes(0.0, max(-limits.w0_m, 0.0), side(1))[::-1]
    w = np.concatenate([w_neg[:-1], w_pos])
    w = w[(w >= limits.w0_m - 1e-9) & (w <= limits.w1_m + 1e-9)]
    uu, ww = np.meshgrid(u, w)
    z = np.asarray(heights(uu.ravel(), ww.ravel()), dtype=float).reshape(uu.shape)
    if detail_tolerance_m is None:
        return SurfaceGrid(u, w, z, limits)
    along, across = _deviations(heights, u, w, z)
    times = max(int(round(refine)), 1)
    u = _split(u, _detail_parts(along, detail_tolerance_m, most_parts) * times)
    w = _split(w, _detail_parts(across, detail_tolerance_m, most_parts) * times)
    uu, ww = np.meshgrid(u, w)
    z = np.asarray(heights(uu.ravel(), ww.ravel()), dtype=float).reshape(uu.shape)
    return SurfaceGrid(u, w, z, limits)
