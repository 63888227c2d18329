"""Physical optics: the field that flat facets scatter from an antenna to receivers.

One core serves every scatterer mastplan models: the ground in front of the mast (facets cut
from the DEM surface) and objects near it (plates of a tail fin or a vehicle body). Each facet
is a flat parallelogram; its physical-optics surface current, induced by a horizontally
polarised point source, radiates to each receiver. The integral over one facet is taken with
the phase linearised about its centre, which gives the familiar sinc factors of a flat plate,
so facets need only be small enough that the quadratic part of the phase stays small.

For a perfect conductor the physical-optics current is ``J = 2 n x H_i`` on the lit side [1]_
[2]_. With the incident field ``E_i = e exp(-j k r1) / r1`` (``e`` horizontal, normal to the ray
``s1`` from the source) and a receiving antenna of horizontal polarisation ``e_r`` (normal to the
ray ``r2`` toward it), the received field of that current is ``-(j k / 4 pi) F ...`` with
``F = 2 [(s1 . e_r)(n . e) - (e . e_r)(n . s1)]``. That form is not reciprocal off the specular
and back-scatter directions (a known property of physical optics), so the coupling used here is
its average with the swapped problem (receiver as source), which is reciprocal by construction
and equal to it at specular, in back-scatter and in the forward (shadow) direction::

    E_s = -(j k / 4 pi) sum_p F_p A_p S(g.a_p) S(g.b_p) exp(-j k (r1 + r2)) / (r1 r2)
    F_p = (s1 . e_r)(n . e) - t (r2 . e)(n . e_r) + (e . e_r)(|n . s1| + |n . r2|)
    g = k (s1 - r2_hat),  S(t) = sin(t / 2) / (t / 2)

with ``n`` the facet normal turned toward the source and ``t = +1`` when the receiver is on the
source's side of the facet, ``-1`` behind it. Over horizontal ground ``F = 2 sin psi`` at the
specular point, the scalar Kirchhoff obliquity factor [3]_. For ground of finite conductivity
the current is weighted by the Fresnel coefficient (``F -> -Gamma F``; ``Gamma = -1`` is the
conductor), taken at the mean of the local grazing angles toward source and receiver (equal at
the specular point, symmetric under the swap): the tangent-plane (Kirchhoff) approximation [3]_.
Over an infinite flat plane the integral reduces by stationary phase to the image wave
``Gamma exp(-j k R') / R'`` [3]_ [4]_, which the tests check. Ground facets are one-sided (lit
from above, seen from above); plates are two-sided and also scatter forward, which forms
their shadow.

Coordinates are any right-handed metric frame with ``z`` up. [m]

References
----------
.. [1] Knott, E. F., Shaeffer, J. F. and Tuley, M. T., *Radar Cross Section*, 2nd ed., Artech
       House, 1993, ch. 5 (physical optics; flat plate, peak ``4 pi A^2 / lambda^2``).
.. [2] Balanis, C. A., *Advanced Engineering Electromagnetics*, Wiley, 1989, sec. 7.10
       (physical-optics current ``2 n x H_i``) and sec. 6.6 (radiation of a surface current).
.. [3] Beckmann, P. and Spizzichino, A., *The Scattering of Electromagnetic Waves from Rough
       Surfaces*, Pergamon, 1963, ch. 3 (Kirchhoff tangent-plane approximation).
.. [4] Born, M. and Wolf, E., *Principles of Optics*, 7th ed., Cambridge, 1999, app. III
       (method of stationary phase).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from geo.ground import reflection_coefficient_h

__all__ = ["Facets", "scattered_field", "ground_fields", "direct_field", "horizontal_polarisation", "mirror_points"]

#: Facet-receiver pairs handled at once (bounds the memory of one chunk: about 16 bytes x 12 arrays each).
_PAIRS_PER_CHUNK = 400_000


@dataclass(frozen=True)
class Facets:
    """Flat parallelogram facets ``centre + alpha a + beta b``, ``alpha, beta`` in [-1/2, 1/2].

    Attributes
    ----------
    centres_m, edge_a_m, edge_b_m : numpy.ndarray, shape (P, 3)
        Centres and edge vectors. [m]
    two_sided : bool
        ``False`` for ground (lit and seen from the side of ``a x b`` only); ``True`` for plates.
    weights : numpy.ndarray, shape (P,), optional
        A real factor per facet (1 by default), e.g. a taper at the edge of an integration area.
    """

    centres_m: np.ndarray
    edge_a_m: np.ndarray
    edge_b_m: np.ndarray
    two_sided: bool = False
    weights: np.ndarray | None = None

    @property
    def normals(self) -> np.ndarray:
        """Unit normals ``a x b / |a x b|``."""
        n = np.cross(self.edge_a_m, self.edge_b_m)
        return n / np.linalg.norm(n, axis=1)[:, None]

    @property
    def areas_m2(self) -> np.ndarray:
        """Facet areas ``|a x b|``. [m2]"""
        return np.linalg.norm(np.cross(self.edge_a_m, self.edge_b_m), axis=1)

    def __len__(self) -> int:
        return self.centres_m.shape[0]

    def subset(self, index) -> Facets:
        """The facets selected by ``index`` (a mask or indices)."""
        w = None if self.weights is None else self.weights[index]
        return Facets(self.centres_m[index], self.edge_a_m[index], self.edge_b_m[index], self.two_sided, w)


def horizontal_polarisation(direction: np.ndarray) -> np.ndarray:
    """Unit horizontal vectors normal to propagation directions, ``z x d / |z x d|``.

    Parameters
    ----------
    direction : numpy.ndarray, shape (..., 3)
        Directions of propagation (need not be unit vectors; not vertical).
    """
    d = np.asarray(direction, dtype=float)
    e = np.stack([-d[..., 1], d[..., 0], np.zeros(d.shape[:-1])], axis=-1)
    return e / np.linalg.norm(e, axis=-1, keepdims=True)


def mirror_points(points_m: np.ndarray, normal: np.ndarray, origin_m=(0.0, 0.0, 0.0)) -> np.ndarray:
    """Mirror images of points in the plane through ``origin_m`` with unit normal ``normal`` [3]_."""
    p = np.asarray(points_m, dtype=float) - np.asarray(origin_m, dtype=float)
    n = np.asarray(normal, dtype=float) / np.linalg.norm(normal)
    return np.asarray(origin_m, dtype=float) + p - 2.0 * (p @ n)[..., None] * n


def direct_field(source_m: np.ndarray, receivers_m: np.ndarray, wavelength_m: float) -> np.ndarray:
    """Free-space field ``exp(-j k r) / r`` of an isotropic source at receivers (R, 3)."""
    k = 2.0 * math.pi / wavelength_m
    r = np.linalg.norm(np.asarray(receivers_m, dtype=float) - np.asarray(source_m, dtype=float), axis=1)
    return np.exp(-1j * k * r) / r


def _sinc_half(t: np.ndarray) -> np.ndarray:
    """``sin(t / 2) / (t / 2)``: the integral of ``exp(-j t alpha)`` over alpha in [-1/2, 1/2]."""
    return np.sinc(t / (2.0 * math.pi))


def scattered_field(
    source_m,
    facets: Facets,
    receivers_m,
    wavelength_m: float,
    relative_permittivity: float | None = None,
    conductivity_s_m: float | None = None,
    receiver_visible=None,
    groups=None,
) -> np.ndarray:
    """Field scattered by ``facets`` from an isotropic horizontally polarised source (see module notes).

    Parameters
    ----------
    source_m : array_like, shape (3,)
        The antenna. [m]
    facets : Facets
    receivers_m : array_like, shape (R, 3)
        [m]
    wavelength_m : float
        [m]
    relative_permittivity, conductivity_s_m : float or None
        Constants of the facets' material (:func:`geo.ground.reflection_coefficient_h`);
        ``None``: a perfect conductor.
    receiver_visible : callable, optional
        ``receiver_visible(facet_index, receiver_index) -> bool array (p, r)``: whether each
        facet of the chunk sees each receiver (terrain shadowing); every pair by default.

    Returns
    -------
    numpy.ndarray of complex, shape (R,)
        In the units of the direct field ``exp(-j k r) / r`` of the same source.
    """
    k = 2.0 * math.pi / wavelength_m
    src = np.asarray(source_m, dtype=float)
    rx = np.atleast_2d(np.asarray(receivers_m, dtype=float))
    group_of = None if groups is None else np.asarray(groups, dtype=np.int64)
    count = 0 if group_of is None or group_of.size == 0 else int(group_of[-1]) + 1
    out = np.zeros(rx.shape[0] if group_of is None else (count, rx.shape[0]), dtype=complex)
    if len(facets) == 0:
        return out
    # Source side: everything per facet.
    d1 = facets.centres_m - src
    r1 = np.linalg.norm(d1, axis=1)
    s1 = d1 / r1[:, None]
    n = facets.normals
    ns1 = np.einsum("ij,ij->i", n, s1)
    if facets.two_sided:
        n = np.where((ns1 > 0.0)[:, None], -n, n)  # turn each plate's normal toward the source
        ns1 = -np.abs(ns1)
    keep = np.flatnonzero(ns1 < 0.0)
    if keep.size == 0:
        return out
    n, s1, ns1 = n[keep], s1[keep], ns1[keep]
    e_inc = horizontal_polarisation(s1)
    ne = np.einsum("ij,ij->i", n, e_inc)
    weight = facets.areas_m2[keep] * (1.0 if facets.weights is None else facets.weights[keep])
    amp_src = weight * np.exp(-1j * k * r1[keep]) / r1[keep]  # (p,)
    centres, a, b = facets.centres_m[keep], facets.edge_a_m[keep], facets.edge_b_m[keep]
    chunk = max(1, _PAIRS_PER_CHUNK // max(rx.shape[0], 1))
    for start in range(0, keep.size, chunk):
        sl = slice(start, start + chunk)
        # Component form of the vector products (the same formulas, without (p, R, 3) temporaries).
        c, ns, es, s1s = centres[sl], n[sl], e_inc[sl], s1[sl]
        dx, dy, dz = (rx[None, :, i] - c[:, i, None] for i in range(3))
        r2 = np.sqrt(dx * dx + dy * dy + dz * dz)
        inv = 1.0 / r2
        ux, uy, uz = dx * inv, dy * inv, dz * inv  # r2_hat
        inv_h = 1.0 / np.sqrt(ux * ux + uy * uy)  # e_rx = (-uy, ux, 0) / h
        nr2 = ns[:, 0, None] * ux + ns[:, 1, None] * uy + ns[:, 2, None] * uz
        s1_erx = (s1s[:, 1, None] * ux - s1s[:, 0, None] * uy) * inv_h
        n_erx = (ns[:, 1, None] * ux - ns[:, 0, None] * uy) * inv_h
        e_erx = (es[:, 1, None] * ux - es[:, 0, None] * uy) * inv_h
        r2_e = es[:, 0, None] * ux + es[:, 1, None] * uy
        same_side = np.where(nr2 > 0.0, 1.0, -1.0)
        coupling = s1_erx * ne[sl, None] - same_side * r2_e * n_erx + e_erx * (np.abs(nr2) - ns1[sl, None])
        if relative_permittivity is not None:
            grazing = 0.5 * (np.arcsin(np.clip(-ns1[sl, None], 0.0, 1.0)) + np.arcsin(np.clip(np.abs(nr2), 0.0, 1.0)))
            coupling = coupling * -reflection_coefficient_h(
                grazing, relative_permittivity, conductivity_s_m, wavelength_m
            )
        # g = k (s1 - r2_hat); its products with the edges a and b.
        aa, bb = a[sl], b[sl]
        ga = k * ((s1s * aa).sum(axis=1)[:, None] - (aa[:, 0, None] * ux + aa[:, 1, None] * uy + aa[:, 2, None] * uz))
        gb = k * ((s1s * bb).sum(axis=1)[:, None] - (bb[:, 0, None] * ux + bb[:, 1, None] * uy + bb[:, 2, None] * uz))
        # term = coupling S S exp(-j k r2) / r2 * amp_src, with the source's phase folded in.
        real = coupling * _sinc_half(ga) * _sinc_half(gb) * inv * np.abs(amp_src[sl])[:, None]
        phase = k * r2 - np.angle(amp_src[sl])[:, None]
        if np.iscomplexobj(real):  # lossy ground: a complex coupling
            term = real * np.exp(-1j * phase)
        else:
            term = np.empty(real.shape, dtype=complex)
            term.real = real * np.cos(phase)
            term.imag = -real * np.sin(phase)
        if not facets.two_sided:
            term = np.where(nr2 > 0.0, term, 0.0)  # a ground facet radiates only upward
        if receiver_visible is not None:
            term = np.where(receiver_visible(keep[sl], np.arange(rx.shape[0])), term, 0.0)
        if group_of is None:
            out += term.sum(axis=0)
        else:
            g = group_of[keep[sl]]
            starts = np.flatnonzero(np.r_[True, g[1:] != g[:-1]])
            out[g[starts]] += np.add.reduceat(term, starts, axis=0)
    return -1j * k / (4.0 * math.pi) * out


#: Facet-receiver pairs of one chunk in :func:`ground_fields` (about 30 arrays of this size live at once).
_GROUND_PAIRS_PER_CHUNK = 100000
#: Grazing angles of the table the lossy-ground Fresnel coefficient is interpolated from. [rad]
_GAMMA_TABLE_RAD = np.linspace(0.0, math.pi / 2.0, 2049)


#: Adding and subtracting 1.5 * 2**52 rounds a double to the nearest integer (IEEE 754 round-to-even).
_ROUND = 1.5 * 2.0**52


def _sin_over(x: np.ndarray) -> np.ndarray:
    """``sin(x) / x`` (1 at 0), in the precision of ``x``.

    Taken as ``sin(|x| + t) / (|x| + t)`` (even, like the function) with a tiny ``t`` (1e-30, far
    below the precision of any argument that matters), which needs no test for 0.
    """
    ax = np.abs(x)
    ax += ax.dtype.type(1e-30)
    return np.sin(ax) / ax


def ground_fields(
    sources_m,
    facets: Facets,
    receivers_m,
    wavelength_m: float,
    relative_permittivity: float | None = None,
    conductivity_s_m: float | None = None,
    source_visible=None,
    horizon_tan=None,
    pair_weight=None,
    far: bool = False,
) -> np.ndarray:
    """:func:`scattered_field` for one-sided ground facets and several sources at once, faster.

    The same physics and the same coupling ``F_p`` (see the module notes), specialised to ground
    facets (one-sided, lit and seen from above, so ``t = +1``) and written component by component:
    with ``X = (s1 x r2)_z`` and ``D = s1_h . r2_h`` (horizontal parts) the coupling is
    ``[D (n . r2 - n . s1) - X (h1 (n . e) + h2 (n . e_r))] / (h1 h2)``, ``h1, h2`` the horizontal
    lengths of ``s1`` and ``r2``. Everything on the receiver side (distances, directions, the
    spherical wave ``exp(-j k r2) / r2``) is computed once per facet-receiver pair and shared by
    the sources; the sum over facets is a matrix product. For lossy ground the Fresnel
    coefficient is interpolated from a table of 2,049 grazing angles (its error is below 1e-6).

    Parameters
    ----------
    sources_m : array_like, shape (S, 3)
        Antennas. [m]
    facets : Facets
        Ground facets (``two_sided`` must be False).
    receivers_m : array_like, shape (R, 3)
        [m]
    wavelength_m : float
        [m]
    relative_permittivity, conductivity_s_m : float or None
        Ground constants; ``None``: a perfect conductor.
    source_visible : numpy.ndarray of bool, shape (S, P), optional
        Whether each facet is lit by each source (terrain shadowing); all by default.
    horizon_tan : numpy.ndarray, shape (P,), optional
        Tangent of each facet's horizon toward the receivers: a receiver whose elevation seen from
        the facet has a smaller tangent is hidden from it. None: every receiver is seen.
    pair_weight : callable, optional
        ``pair_weight(facet_slice) -> (receiver_index, weights)``: the receivers the facets of a
        chunk count for, and the real weights (p, len(receiver_index)) of each pair (e.g. a taper
        at the edge of each receiver's own integration area); the other receivers are skipped
        for that chunk, so facets ordered by position make it pay.
    far : bool
        ``receivers_m`` are unit directions toward distant receivers: the field is returned in
        far-field units (``exp(-j k r) / r`` times ``r exp(j k r)``, ``r`` from the origin), where
        the receiver's wave is ``exp(j k d . c)`` and its direction ``d`` the same for every facet
        (the limit of large range, in which the spherical form loses nothing but time).

    Returns
    -------
    numpy.ndarray of complex, shape (S, R)
        In the units of each source's direct field ``exp(-j k r) / r`` (far-field units with
        ``far``).

    References
    ----------
    See the module notes ([1]_ to [4]_).
    """
    if facets.two_sided:
        raise ValueError("ground_fields takes one-sided ground facets; use scattered_field for plates")
    k = 2.0 * math.pi / wavelength_m
    src = np.atleast_2d(np.asarray(sources_m, dtype=float))
    rx = np.atleast_2d(np.asarray(receivers_m, dtype=float))
    out = np.zeros((src.shape[0], rx.shape[0]), dtype=complex)
    if len(facets) == 0:
        return out
    lossy = relative_permittivity is not None
    if lossy:
        gamma_table = -reflection_coefficient_h(_GAMMA_TABLE_RAD, relative_permittivity, conductivity_s_m, wavelength_m)
    n = facets.normals
    a, b = facets.edge_a_m, facets.edge_b_m
    weight = facets.areas_m2 * (1.0 if facets.weights is None else facets.weights)
    # Source side, per source and facet.
    d1 = facets.centres_m[None, :, :] - src[:, None, :]  # (S, P, 3)
    r1 = np.linalg.norm(d1, axis=2)
    s1 = d1 / r1[..., None]
    ns1 = np.einsum("pj,spj->sp", n, s1)
    h1 = np.hypot(s1[..., 0], s1[..., 1])
    ne = (n[None, :, 1] * s1[..., 0] - n[None, :, 0] * s1[..., 1]) / h1  # n . e_inc
    lit = ns1 < 0.0
    if source_visible is not None:
        lit &= np.asarray(source_visible, dtype=bool)
    amp = np.where(lit, weight[None, :] * np.exp(-1j * k * r1) / r1, 0.0)  # (S, P)
    s1a = np.einsum("spj,pj->sp", s1, a)
    s1b = np.einsum("spj,pj->sp", s1, b)
    f32 = np.float32
    s1_32, ns1_32, h1_32, ne_32 = s1.astype(f32), ns1.astype(f32), h1.astype(f32), ne.astype(f32)
    s1a_32, s1b_32 = (0.5 * k * s1a).astype(f32), (0.5 * k * s1b).astype(f32)
    n32, a32, b32 = n.astype(f32), (0.5 * k * a).astype(f32), (0.5 * k * b).astype(f32)
    cycles_per_m = 1.0 / wavelength_m
    chunk = max(1, _GROUND_PAIRS_PER_CHUNK // max(rx.shape[0], 1))
    for start in range(0, len(facets), chunk):
        sl = slice(start, start + chunk)
        if not np.any(amp[:, sl]):
            continue
        c = facets.centres_m[sl]
        cols = slice(None)
        if pair_weight is not None:
            cols, pair = pair_weight(sl)
            if len(cols) == 0:
                continue
            pair = np.asarray(pair, dtype=f32)
        # The phase reduced to [-pi, pi] in double precision (rounding by the 1.5 * 2**52 trick,
        # far faster than rint), then single precision for the rest of the pair's work.
        if far:
            d = rx[cols]
            turns = -(c @ d.T) * cycles_per_m  # exp(-j k r2) -> exp(+j k d . c)
            inv_r2 = np.ones(turns.shape, dtype=f32)
            x, y, z = (np.broadcast_to(d[None, :, i].astype(f32), turns.shape) for i in range(3))
        else:
            dx = rx[None, cols, 0] - c[:, 0, None]
            dy = rx[None, cols, 1] - c[:, 1, None]
            dz = rx[None, cols, 2] - c[:, 2, None]
            r2 = np.sqrt(dx * dx + dy * dy + dz * dz)
            turns = r2 * cycles_per_m
            inv = 1.0 / r2
            inv_r2 = inv.astype(f32)
            x, y, z = (dx * inv).astype(f32), (dy * inv).astype(f32), (dz * inv).astype(f32)
        turns -= (turns + _ROUND) - _ROUND
        phase = (2.0 * math.pi * turns).astype(f32)
        h2 = np.sqrt(x * x + y * y)
        nn = n32[sl]
        nr2 = nn[:, 0, None] * x + nn[:, 1, None] * y + nn[:, 2, None] * z
        seen = nr2 > 0.0  # a ground facet radiates only upward
        if horizon_tan is not None:
            seen &= z > horizon_tan[sl, None].astype(f32) * h2
        ne_rx = nn[:, 1, None] * x - nn[:, 0, None] * y  # h2 (n . e_r)
        ra = a32[sl, 0, None] * x + a32[sl, 1, None] * y + a32[sl, 2, None] * z
        rb = b32[sl, 0, None] * x + b32[sl, 1, None] * y + b32[sl, 2, None] * z
        inv_r2 = np.where(seen, inv_r2, f32(0.0))
        if pair_weight is not None:
            inv_r2 *= pair
        wave_re = np.cos(phase) * inv_r2
        wave_im = -np.sin(phase) * inv_r2
        for s in range(src.shape[0]):
            amp_s = amp[s, sl]
            if not np.any(amp_s):
                continue
            sx, sy = s1_32[s, sl, 0, None], s1_32[s, sl, 1, None]
            cross = sx * y - sy * x
            dot = sx * x + sy * y
            h1s = h1_32[s, sl, None]
            coupling = (dot * (nr2 - ns1_32[s, sl, None]) - cross * (h1s * ne_32[s, sl, None] + ne_rx)) / (h1s * h2)
            coupling *= _sin_over(s1a_32[s, sl, None] - ra) * _sin_over(s1b_32[s, sl, None] - rb)
            if lossy:
                grazing = 0.5 * (np.arcsin(np.clip(-ns1_32[s, sl, None], 0.0, 1.0)) + np.arcsin(np.clip(nr2, 0.0, 1.0)))
                g_re = np.interp(grazing, _GAMMA_TABLE_RAD, gamma_table.real).astype(f32)
                g_im = np.interp(grazing, _GAMMA_TABLE_RAD, gamma_table.imag).astype(f32)
                m_re = coupling * (g_re * wave_re - g_im * wave_im)
                m_im = coupling * (g_re * wave_im + g_im * wave_re)
            else:
                m_re = coupling * wave_re
                m_im = coupling * wave_im
            m_re, m_im = m_re.astype(float), m_im.astype(float)
            ar, ai = amp_s.real, amp_s.imag
            out[s, cols] += (ar @ m_re - ai @ m_im) + 1j * (ar @ m_im + ai @ m_re)
    return -1j * k / (4.0 * math.pi) * out
