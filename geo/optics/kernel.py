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

One kernel (:func:`_pair_fields`) evaluates this sum for every caller: one-sided ground facets
and two-sided plates, several sources at once, facets summed per group, terrain shadowing, a
weight per facet-receiver pair, receivers at a distance or far away (plane waves), lossy ground.
:func:`scattered_field` (plates of objects, one source, double precision) and
:func:`ground_fields` (the DEM surface, every antenna, single precision after the phase) are its
two entry points. It works in chunks of facet-receiver pairs run in two threads; the pair work
shared by the sources is done once, and the products of facet vectors with the receiver's
position are small matrix products (see :func:`_pair_fields`).

Terrain shadowing enters as weights: an amplitude per source and facet (0 or 1 for hard shadows,
the knife-edge factor over the obstacle of the ray otherwise) multiplies the facet's source factor,
and per facet and receiver either a hard horizon (receivers seen below its tangent are dropped)
or the knife-edge factor over the facet's obstacle toward the receivers [5]_. The weights are
amplitudes: the diffracted wave's phase delay is left out.

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
.. [5] ITU-R Recommendation P.526, "Propagation by diffraction", sec. 4.1 (single knife edge);
       Born and Wolf, sec. 8.7 (Fresnel diffraction at a straight edge).
"""

from __future__ import annotations

import contextlib
import functools
import math
import threading
from collections.abc import Callable
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass

import numpy as np

from geo.radio.knife_edge import knife_edge_field_fast, ridge_on_ground_amplitude
from geo.radio.reflection import reflection_coefficient_h

__all__ = [
    "Facets",
    "scattered_field",
    "ground_fields",
    "direct_field",
    "horizontal_polarisation",
    "mirror_points",
    "thread_limit",
    "set_thread_limit",
]

#: Facet-receiver pairs of one chunk (each thread holds about 30 arrays of this size, reused). At most
#: 2**16, so that each matrix product of a chunk (inner size 4) stays below the size at which OpenBLAS
#: starts threads of its own (``m n k <= 4 x 65536`` runs on one thread), which spin against ours.
_PAIRS_PER_CHUNK = 65_536
#: Worker threads of the kernel (the machine the project targets has 2 cores).
_THREADS = 2
#: The limits in force: :func:`set_thread_limit`'s first, then those of :func:`thread_limit` blocks.
_LIMITS: list = []


def set_thread_limit(count: int | None) -> None:
    """For the rest of the process, a kernel call runs on at most ``count`` threads (None: no limit).

    For a process among others that keep the cores busy (a batch runs one study per core, each in
    its own process); :func:`thread_limit` sets a limit for a block instead.
    """
    _LIMITS[:] = [limit for limit in _LIMITS if not getattr(limit, "process_wide", False)]
    if count is not None:

        def limit() -> int:
            return count

        limit.process_wide = True
        _LIMITS.insert(0, limit)


@contextlib.contextmanager
def thread_limit(limit: Callable[[], int]):
    """Within the block, a kernel call runs on at most ``limit()`` threads, asked as it starts.

    For a caller that keeps other work on the machine's cores at times (``mastplan run`` draws
    its plots in other processes meanwhile): a second thread on a busy core adds work (the threads
    hand the interpreter lock to each other at every small array operation) and no speed. The
    result does not depend on the number of threads.

    Parameters
    ----------
    limit : callable
        ``limit() -> int``, at least 1 is used.
    """
    _LIMITS.append(limit)
    try:
        yield
    finally:
        _LIMITS.remove(limit)


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


#: Grazing angles of the table the lossy-ground Fresnel coefficient is interpolated from. [rad]
_GAMMA_TABLE_RAD = np.linspace(0.0, math.pi / 2.0, 2049)
#: Added to ``|x|`` in ``sin(x) / x`` so that 0 needs no test (far below any argument that matters).
_TINY = 1e-30


class _Workspace:
    """Arrays of one thread, reused from chunk to chunk (fresh large arrays cost page faults)."""

    def __init__(self, size: int):
        self.size = size
        self.flat = {}

    def take(self, name: str, shape: tuple, dtype) -> np.ndarray:
        """An uninitialised array of ``shape``, in the same memory each time."""
        key, need = (name, np.dtype(dtype)), math.prod(shape)
        if key not in self.flat or self.flat[key].size < need:
            self.flat[key] = np.empty(max(self.size, need), dtype=dtype)
        return self.flat[key][:need].reshape(shape)


def _dot(u: np.ndarray, v: np.ndarray) -> np.ndarray:
    """Dot products of vectors stored components first, ``(..., 3, p)`` (no reduction over a short axis)."""
    return u[..., 0, :] * v[..., 0, :] + u[..., 1, :] * v[..., 1, :] + u[..., 2, :] * v[..., 2, :]


def _run(index: np.ndarray):
    """``index`` as a slice when it is one run of consecutive numbers (no copy), else as it is."""
    return slice(index[0], index[-1] + 1) if index[-1] - index[0] + 1 == index.size else index


@dataclass(frozen=True)
class _Call:
    """The constants of one kernel call, read by its chunks in any thread (see :func:`_pair_fields`)."""

    src: np.ndarray  # (S, 3) sources [m]
    rx: np.ndarray  # (R, 3) receivers [m], or unit directions with ``far``
    wavelength_m: float
    far: bool
    dt: np.dtype  # precision of the pair work after the phase
    two_sided: bool
    homogeneous: np.ndarray  # (R, 4) receivers ``[q, 1]`` in wavelengths, or directions ``[d, 0]``
    centres: np.ndarray  # (P, 3) facet centres in wavelengths (as given with ``far``)
    group_of: np.ndarray  # (P,) group of each facet
    every_facet: dict  # :func:`_source_terms`
    lossy: bool
    table: np.ndarray | None  # (4, 2049) -Gamma and its steps, per grazing angle of the table
    per_rad: float | None  # table steps per radian
    ht: np.ndarray | None  # (P,) tangent of each facet's horizon
    obstacle: dict | None  # each facet's obstacle toward the receivers (knife edge), see _receiver_knife_edge
    tiny: np.generic  # ``_TINY`` in ``dt``
    pair_weight: Callable | None
    count_p: int
    count_r: int
    rows_per_chunk: int  # facets per chunk
    size: int  # pairs per chunk, the size of a workspace's arrays
    spaces: dict  # a :class:`_Workspace` per thread


class _PairSpace:
    """A thread's workspace seen through one chunk: arrays of (m receivers, p facets)."""

    __slots__ = ("ws", "shape", "dt")

    def __init__(self, ws: _Workspace, m: int, p: int, dt: np.dtype):
        self.ws, self.shape, self.dt = ws, (m, p), dt

    def take(self, name: str, dtype=None) -> np.ndarray:
        """An uninitialised (m, p) array, receivers by facets (per-facet factors broadcast along rows)."""
        return self.ws.take(name, self.shape, self.dt if dtype is None else dtype)


def _gamma_table(
    relative_permittivity: float, conductivity_s_m: float | None, wavelength_m: float, dt, reflection=None
):
    """``-Gamma`` (real, imaginary) and its steps on ``_GAMMA_TABLE_RAD``, in ``dt``, and steps per radian.

    ``reflection(grazing_rad) -> Gamma``, when given, instead of the half-space's coefficient (a layer on the ground).
    """
    if reflection is not None:
        gamma = -np.asarray(reflection(_GAMMA_TABLE_RAD), dtype=complex)
    else:
        gamma = -reflection_coefficient_h(_GAMMA_TABLE_RAD, relative_permittivity, conductivity_s_m, wavelength_m)
    table = np.stack([gamma.real, gamma.imag, np.r_[np.diff(gamma.real), 0.0], np.r_[np.diff(gamma.imag), 0.0]])
    table = table.astype(dt)
    per_rad = (_GAMMA_TABLE_RAD.size - 1) / _GAMMA_TABLE_RAD[-1]
    return table, per_rad


def _source_terms(facets: Facets, src: np.ndarray, k: float, dt, visible, lossy: bool) -> dict:
    """Per source and facet, for every facet at once, in double precision, components first.

    Computed once per call (a chunk takes its facets' columns): the same numbers as facet by
    facet, without the fixed cost of some forty small array operations per chunk.
    """
    half_k = 0.5 * k
    a, b = facets.edge_a_m.T, facets.edge_b_m.T  # (3, P)
    normal = np.cross(a, b, axis=0)
    area = np.sqrt(_dot(normal, normal))
    n = normal / area
    d1 = facets.centres_m.T[None, :, :] - (src[:, :, None] if src.ndim == 2 else src)  # (S, 3, P)
    r1 = np.sqrt(_dot(d1, d1))
    s1 = d1 / r1[:, None, :]
    ns1 = _dot(s1, n)
    lit = ns1 != 0.0 if facets.two_sided else ns1 < 0.0
    weight = area if facets.weights is None else area * facets.weights
    if visible is not None:  # the amplitude of each source's field at each facet (0: hidden)
        lit &= visible != 0.0
        weight = weight * visible
    terms = {"keep": np.any(lit & (weight != 0.0), axis=0)}
    terms["amp"] = np.where(lit, weight * np.exp(-1j * k * r1) / r1, 0.0)  # (S, P)
    sx, sy = s1[:, 0], s1[:, 1]
    h1 = np.hypot(sx, sy)
    a1 = np.abs(ns1)
    b1 = -np.sign(ns1) * (n[1] * sx - n[0] * sy)
    # Per source, F_p h1 h2 = s1x P + s1y Q + c1 x + c2 y (see _pair_fields), divided by h1.
    terms["coef"] = (np.stack([sx, sy, a1 * sx + b1 * sy, a1 * sy - b1 * sx], axis=1) / h1[:, None, :]).astype(dt)
    terms["s1a"] = (half_k * _dot(s1, a)).astype(dt)
    terms["s1b"] = (half_k * _dot(s1, b)).astype(dt)
    if lossy:
        terms["g1"] = np.arcsin(np.minimum(a1, 1.0)).astype(dt)  # the source's grazing angle
    zero = np.zeros(n.shape[1])
    terms["shared"] = np.stack([n, [n[1], -n[0], zero], half_k * a, half_k * b]).astype(dt)  # (4, 3, P)
    return terms


def _source_side(every_facet: dict, sl: slice, counted=None) -> dict | None:
    """The terms of the facets of a chunk lit by some source (and ``counted``: with a pair weight other than 0)."""
    keep = every_facet["keep"][sl]
    rows = np.flatnonzero(keep if counted is None else keep & counted)
    if rows.size == 0:
        return None
    idx = sl.start + rows
    side = {"rows": rows, "amp": every_facet["amp"][:, idx], "coef": every_facet["coef"][:, :, idx]}
    for name in ("s1a", "s1b", "g1"):
        if name in every_facet:
            side[name] = every_facet[name][:, idx]
    side["shared"] = every_facet["shared"][:, :, idx]
    return side


def _homogeneous_rows(rows: np.ndarray, centres_about: np.ndarray) -> None:
    """Complete rows ``[v, -v . c]`` (k, 4, p) from their ``v``.

    Times ``[q, 1]`` (a point) they give ``v . (q - c)``, times ``[d, 0]`` (a direction) ``v . d``.
    """
    np.multiply(rows[:, 0], centres_about[0], out=rows[:, 3])
    for i in (1, 2):
        rows[:, 3] += rows[:, i] * centres_about[i]
    np.negative(rows[:, 3], out=rows[:, 3])


def _chunk_receivers(pair_weight, sl: slice, dt):
    """``(receiver index, pair weights (p, m) or None, facets that count or None)``; None: no receiver counts."""
    if pair_weight is None:
        return slice(None), None, None
    cols, pair = pair_weight(sl)
    cols = np.asarray(cols, dtype=np.int64)
    if cols.size == 0:
        return None
    pair = np.asarray(pair, dtype=dt)
    counted = np.any(pair != 0.0, axis=1)  # facets that count for some receiver
    return cols, pair, counted


def _receiver_products(call: _Call, space: _PairSpace, idx: np.ndarray, shared: np.ndarray, cols):
    """The products shared by the sources, ``v . (q - c)`` (7, m, p), about the chunk's middle.

    Returns the centres ``c`` (3, p), the receivers ``q`` (m, 4) and the centres ``c_about`` (3, p)
    about the middle (in wavelengths, as given with ``far``), and the products for ``x, y, z``,
    ``n``, ``h2 (n . e_r)``, ``k a / 2`` and ``k b / 2`` (the receiver's half of the sinc).
    """
    dt, p = call.dt, idx.size
    c = call.centres[idx].T  # (3, p)
    middle = c.mean(axis=1)  # products about the chunk's middle, where single precision keeps its digits
    q = call.homogeneous[cols] if call.far else call.homogeneous[cols] - np.r_[middle, 0.0]
    q = q.astype(dt)
    c_about = (c - middle[:, None]).astype(dt)
    vectors = space.ws.take("vectors", (7, 4, p), dt)
    vectors[:3, :3] = np.eye(3, dtype=dt)[:, :, None]
    vectors[3:, :3] = shared
    _homogeneous_rows(vectors, c_about)
    lin = space.ws.take("lin", (7, space.shape[0], p), dt)
    for row, rows_k in zip(lin, vectors):
        np.matmul(q, rows_k, out=row)
    return c, q, c_about, lin


def _receiver_range(call: _Call, space: _PairSpace, c: np.ndarray, cols, ra: np.ndarray, rb: np.ndarray):
    """The phase ``r2`` in turns (m, p), double precision, and ``1 / r2`` (None with ``far``). [1/wavelength]

    A far receiver's phase is ``-d . c`` instead. Near receivers' sinc halves ``ra, rb`` become per unit range.
    """
    f64 = np.float64
    turns = space.take("turns", f64)
    if call.far:
        np.matmul(call.rx[cols] * (-1.0 / call.wavelength_m), c, out=turns)  # exp(-j k r2) -> exp(+j k d . c)
        return turns, None
    # r2 in turns, from the differences in double precision (each pair on its own)
    whole = space.take("whole", f64)
    dx, dy, dz = space.take("dx", f64), space.take("dy", f64), space.take("dz", f64)
    for i, d in enumerate((dx, dy, dz)):
        np.subtract(call.homogeneous[cols, i][:, None], c[i][None, :], out=d)
    np.multiply(dx, dx, out=turns)
    np.multiply(dy, dy, out=whole)
    turns += whole
    np.multiply(dz, dz, out=whole)
    turns += whole
    np.sqrt(turns, out=turns)
    inverse_r2 = space.take("inverse_r2")
    np.divide(1.0, turns, out=inverse_r2)
    ra *= inverse_r2
    rb *= inverse_r2
    return turns, inverse_r2


def _receiver_knife_edge(call: _Call, idx: np.ndarray, z: np.ndarray, rho: np.ndarray, turns: np.ndarray):
    """Knife-edge weights toward the receivers of the chunk's facets with an obstacle: ``(columns, (m, c))`` or None.

    Each facet's obstacle (``call.obstacle``) stands ``x`` ahead along the course with tangent ``H``
    seen from the facet and excess ``t`` above its ground line; a receiver seen at elevation
    tangent ``tau = z / rho`` passes ``h = x (H - tau)`` below it, so the strip of the obstacle and
    its image has ``v_top = h k``, ``v_bottom = (h - 2 t) k``, ``k = sqrt(2 D / (lambda x (D - x)))``
    (``D`` the range; ``sqrt(2 / (lambda x))`` far away; no obstacle where ``D <= x``), the rule
    of :meth:`geo.optics.surface_facets.SurfaceGrid.antenna_weights` [5]_.
    """
    ob = call.obstacle
    columns = np.flatnonzero(ob["active"][idx])
    if columns.size == 0:
        return None
    chosen = idx[columns]
    x, lam = ob["distance_m"][chosen], call.wavelength_m
    tau = z[:, columns] / np.maximum(rho[:, columns], call.tiny)
    above_ray = x * (ob["tangent"][chosen] - tau)  # (m, c) [m]
    if call.far:
        k = np.sqrt(2.0 / (lam * x))[None, :]
        beyond = None
    else:
        d = turns[:, columns] * lam  # the range [m]
        beyond = d <= x
        k = np.sqrt(2.0 * d / (lam * x * np.where(beyond, 1.0, d - x)))
    v_top = above_ray * k
    weight = ridge_on_ground_amplitude(v_top, v_top - 2.0 * ob["excess_m"][chosen] * k)
    if beyond is not None:
        weight[beyond] = 1.0
    return columns, weight.astype(call.dt)


def _receiver_weights(call: _Call, space: _PairSpace, idx: np.ndarray, lin: np.ndarray, inverse_r2, pair, turns):
    """The wave's amplitude per pair (m, p): ``1 / (r2 rho)``, 0 where hidden or below a ground facet.

    Times the knife-edge weights toward the receivers where the facets have obstacles. Also turns
    the products for ``n`` and ``h2 (n . e_r)`` by ``sign(N)`` on two-sided facets.
    """
    x, y, z, nl, el = lin[:5]
    tmp, wa = space.take("tmp"), space.take("wa")
    # rho = h2 times the range: the 1 / h2 of the coupling and the wave's 1 / r2 are 1 / (r2 rho / r2).
    np.multiply(x, x, out=wa)
    np.multiply(y, y, out=tmp)
    wa += tmp
    np.sqrt(wa, out=wa)
    mask = space.take("mask", np.bool_)
    if call.ht is not None:
        np.multiply(wa, call.ht[idx][None, :], out=tmp)
        np.greater(z, tmp, out=mask)
    soft = None if call.obstacle is None else _receiver_knife_edge(call, idx, z, wa, turns)
    np.divide(1.0 if call.far else inverse_r2, wa, out=wa)  # 1 / (r2 h2) times 1 / r2 (spherical wave)
    if call.ht is not None:
        wa *= mask
    if soft is not None:
        wa[:, soft[0]] *= soft[1]
    if not call.two_sided:
        np.greater(nl, 0.0, out=mask)
        wa *= mask  # a ground facet radiates only upward
    else:  # sign(N) on the products with n and e_r (module notes: P, Q)
        np.copysign(1.0, nl, out=tmp)
        nl *= tmp
        el *= tmp
    if pair is not None:
        wa *= pair
    return wa


def _receiver_wave(space: _PairSpace, turns: np.ndarray, wa: np.ndarray):
    """The receiver's wave ``wa exp(-j 2 pi turns)`` (real, imaginary), each (m, p); reduces ``turns`` to one turn."""
    whole = space.take("whole", np.float64)
    # The phase reduced to one turn in double precision, then in dt: exp(-j 2 pi turns).
    np.rint(turns, out=whole)
    turns -= whole
    phase = space.take("phase")
    np.multiply(turns, -2.0 * math.pi, out=phase)
    wave_re, wave_im = space.take("wave_re"), space.take("wave_im")
    np.cos(phase, out=wave_re)
    wave_re *= wa
    np.sin(phase, out=wave_im)
    wave_im *= wa
    return wave_re, wave_im


def _receiver_grazing(call: _Call, space: _PairSpace, nl: np.ndarray, inverse_r2) -> np.ndarray:
    """The grazing angle toward the receiver, ``arcsin |n . r2|`` (m, p). [rad]"""
    g2 = space.take("g2")
    np.abs(nl, out=g2)
    if not call.far:
        g2 *= inverse_r2
    np.minimum(g2, 1.0, out=g2)
    np.arcsin(g2, out=g2)
    return g2


def _group_members(groups: np.ndarray):
    """The groups of a chunk's facets and, per group, its facets (a slice where one run)."""
    local, inverse = np.unique(groups, return_inverse=True)
    members_of = [slice(None)]
    if local.size > 1:
        members_of = [_run(np.flatnonzero(inverse == g)) for g in range(local.size)]
    return local, members_of


def _linear_coupling(q, own, per_source, c_about, cs, nl, el, coupling, tmp) -> None:
    """One source's coupling before the sinc factors, ``coupling = sign(N) (N' G1 + E' G2) / r + G3`` (m, p).

    ``own`` (3, 4, p) and ``per_source`` (3, m, p) are work arrays for the rows and products ``G1, G2, G3``.
    """
    own[:, 2] = 0.0
    own[0, 0], own[0, 1], own[1, 0], own[2, 0], own[2, 1] = cs[0], cs[1], cs[1], cs[2], cs[3]
    np.negative(cs[0], out=own[1, 1])
    _homogeneous_rows(own, c_about)
    for row, rows_k in zip(per_source, own):
        np.matmul(q, rows_k, out=row)
    g_1, g_2, g_3 = per_source
    np.multiply(nl, g_1, out=coupling)
    np.multiply(el, g_2, out=tmp)
    coupling += tmp
    coupling += g_3


def _sinc_factors(coupling, receiver_halves, source_halves, u, v, tiny) -> None:
    """``coupling *= S(g . a) S(g . b)``, ``S(t) = sin(t / 2) / (t / 2)``, ``t / 2 = s1 . e - r2 . e``."""
    for r_e, s_e in zip(receiver_halves, source_halves):
        np.subtract(s_e[None, :], r_e, out=u)
        np.abs(u, out=u)
        u += tiny
        np.sin(u, out=v)
        coupling *= v
        coupling /= u


def _fresnel_coefficient(call: _Call, space: _PairSpace, g2, g1_s, u):
    """``-Gamma`` (real, imaginary) at the mean grazing angle of each pair (module notes), from the table.

    ``u`` is a work array (m, p).
    """
    np.add(g2, g1_s[None, :], out=u)
    u *= 0.5 * call.per_rad
    at = space.take("at", np.intp)
    np.copyto(at, u, casting="unsafe")  # floor: u >= 0
    np.minimum(at, _GAMMA_TABLE_RAD.size - 2, out=at)
    u -= at
    table = call.table
    g_re, g_im = space.take("g_re"), space.take("g_im")
    np.multiply(table[2][at], u, out=g_re)
    g_re += table[0][at]
    np.multiply(table[3][at], u, out=g_im)
    g_im += table[1][at]
    return g_re, g_im


def _lossy_terms(g_re, g_im, coupling, wave, terms, tmp) -> None:
    """``terms = -Gamma F`` times the wave (real, imaginary); ``g_re, g_im`` become ``-Gamma F``."""
    wave_re, wave_im = wave
    g_re *= coupling
    g_im *= coupling
    np.multiply(g_re, wave_re, out=terms[0])
    np.multiply(g_im, wave_im, out=tmp)
    terms[0] -= tmp
    np.multiply(g_re, wave_im, out=terms[1])
    np.multiply(g_im, wave_re, out=tmp)
    terms[1] += tmp


def _add_groups(result_s: np.ndarray, terms: np.ndarray, amp_s: np.ndarray, members_of: list, dt) -> None:
    """Set one source's fields per group (g, m): the pair terms summed over the facets, times their source factors."""
    factor = np.stack([amp_s.real, amp_s.imag], axis=1).astype(dt)  # (p, 2)
    for g, members in enumerate(members_of):
        summed = (terms[:, :, members] @ factor[members]).astype(float)  # (2, m, 2)
        result_s[g].real = summed[0, :, 0] - summed[1, :, 1]
        result_s[g].imag = summed[0, :, 1] + summed[1, :, 0]


def _source_fields(call: _Call, space: _PairSpace, side: dict, q, c_about, lin, wave, g2, members_of, result) -> None:
    """Each source's fields of a chunk, summed per group, into ``result`` (S, g, m) (sources lighting none: 0)."""
    dt, (m, p) = call.dt, space.shape
    nl, el, ra, rb = lin[3:]
    tmp, coupling, u, v = space.take("tmp"), space.take("coupling"), space.take("u"), space.take("v")
    terms = space.ws.take("terms", (2, m, p), dt)
    per_source = space.ws.take("per_source", (3, m, p), dt)
    own = space.ws.take("own", (3, 4, p), dt)
    for s in range(call.src.shape[0]):
        amp_s = side["amp"][s]
        if not np.any(amp_s):
            continue
        _linear_coupling(q, own, per_source, c_about, side["coef"][s], nl, el, coupling, tmp)
        _sinc_factors(coupling, (ra, rb), (side["s1a"][s], side["s1b"][s]), u, v, call.tiny)
        if call.lossy:
            g_re, g_im = _fresnel_coefficient(call, space, g2, side["g1"][s], u)
            _lossy_terms(g_re, g_im, coupling, wave, terms, tmp)
        else:
            np.multiply(coupling, wave[0], out=terms[0])
            np.multiply(coupling, wave[1], out=terms[1])
        _add_groups(result[s], terms, amp_s, members_of, dt)


def _chunk(call: _Call, start: int):
    """The fields of the chunk of facets from ``start``: ``(groups, receiver index, fields (S, g, m))``.

    None when no facet of the chunk is lit and counts for some receiver.
    """
    sl = slice(start, min(start + call.rows_per_chunk, call.count_p))
    picked = _chunk_receivers(call.pair_weight, sl, call.dt)
    if picked is None:
        return None
    cols, pair, counted = picked
    side = _source_side(call.every_facet, sl, counted)
    if side is None:
        return None
    if pair is not None:
        pair = np.ascontiguousarray(pair[side["rows"]].T)
    idx = sl.start + side["rows"]
    m = call.count_r if pair is None else cols.size
    ws = call.spaces.setdefault(threading.get_ident(), _Workspace(call.size))
    space = _PairSpace(ws, m, idx.size, call.dt)
    c, q, c_about, lin = _receiver_products(call, space, idx, side["shared"], cols)
    nl, el, ra, rb = lin[3:]  # x, y, z (lin[:3]): r2 times the range in turns (1 for far receivers)
    turns, inverse_r2 = _receiver_range(call, space, c, cols, ra, rb)
    wa = _receiver_weights(call, space, idx, lin, inverse_r2, pair, turns)
    wave = _receiver_wave(space, turns, wa)
    g2 = _receiver_grazing(call, space, nl, inverse_r2) if call.lossy else None
    if not call.far:  # x, y, z, n . r2 and h2 (n . e_r) were times the range
        nl *= inverse_r2
        el *= inverse_r2
    local, members_of = _group_members(call.group_of[idx])
    result = np.zeros((call.src.shape[0], local.size, m), dtype=complex)
    _source_fields(call, space, side, q, c_about, lin, wave, g2, members_of, result)
    return local, cols, result


def _obstacles(horizon_obstacle) -> dict | None:
    """The kernel's form of ``horizon_obstacle`` (:func:`_pair_fields`): facets with an excess above 0 are active."""
    if horizon_obstacle is None:
        return None
    tangent, distance_m, excess_m = (np.asarray(a, dtype=float) for a in horizon_obstacle)
    knife_edge_field_fast(0.0)  # the table, made before the threads start
    active = (excess_m > 0.0) & (distance_m > 0.0)
    return {"tangent": tangent, "distance_m": distance_m, "excess_m": excess_m, "active": active}


def _thread_count(threads: int | None, chunks: int) -> int:
    """The worker threads of a call: ``threads`` as given, or the default (:func:`_pair_fields`) within every limit."""
    if threads is None:
        threads = _THREADS if threading.current_thread() is threading.main_thread() and chunks > 1 else 1
        if _LIMITS and threads > 1:  # every limit in force: the process's and each block's
            threads = max(1, min(threads, *(int(limit()) for limit in _LIMITS)))
    return threads


def _add_chunks(out: np.ndarray, parts) -> None:
    """Add the chunks' fields to ``out`` (S, G, R), in chunk order: the same sum whatever the threads."""
    for part in parts:
        if part is not None:
            local, cols, result = part
            if isinstance(cols, slice):
                out[:, local, :] += result
            else:
                out[np.ix_(np.arange(out.shape[0]), local, cols)] += result


def _pair_fields(
    sources_m,
    facets: Facets,
    receivers_m,
    wavelength_m: float,
    *,
    dtype=np.float32,
    relative_permittivity: float | None = None,
    conductivity_s_m: float | None = None,
    groups=None,
    source_visible=None,
    horizon_tan=None,
    horizon_obstacle=None,
    pair_weight=None,
    far: bool = False,
    threads: int | None = None,
    reflection=None,
) -> np.ndarray:
    """The one physical-optics kernel: every source, facet group and receiver (see the module notes).

    The coupling ``F_p`` is written component by component. With ``x, y, z`` the direction
    ``r2`` toward the receiver, ``n`` the facet's normal as given (not turned), ``N = n . r2``,
    ``E = n_y x - n_x y`` (``h2 (n . e_r)``) and ``h1, h2`` the horizontal lengths of ``s1`` and
    ``r2``, turning ``n`` toward the source (sign ``sigma = -sign(n . s1)``) and the same-side sign
    ``t = sigma sign(N)`` cancel in pairs, leaving::

        F_p h1 h2 = s1x P + s1y Q + (|n . s1| s1x + b s1y) x + (|n . s1| s1y - b s1x) y
        P = x |N| - y sign(N) E,  Q = y |N| + x sign(N) E,  b = sigma (n_y s1x - n_x s1y)

    Every factor but ``|N|``, ``sign(N)`` and the sinc factors is linear in ``r2``, and ``r2`` times
    the range is ``q - c`` (receiver minus facet centre; a far receiver's direction ``d`` itself).
    So ``v . (q - c)`` for the facet vectors ``v`` (the axes, ``n``, ``(n_y, -n_x, 0)``, ``k a / 2``,
    ``k b / 2``, and per source ``(s1x, s1y, 0) / h1``, ``(s1y, -s1x, 0) / h1``,
    ``(c1, c2, 0) / h1``) are matrix products of rows ``[v, -v . c]`` with ``[q, 1]`` (``[d, 0]``),
    and ``F_p = (sign(N) (N' G1 + E' G2) / r + G3) / rho``, with ``G1, G2, G3`` the three per-source
    products, ``N', E'`` the products for ``n`` and ``(n_y, -n_x, 0)`` (``N, E`` times the range
    ``r``) and ``rho = h2 r`` the horizontal length of ``q - c``. The work shared by the sources
    (the phase, the wave, ``N``, ``E``, the receiver's half of the sinc arguments) is done once per
    facet-receiver pair; each source adds three products, its two sinc factors and, on lossy
    ground, its Fresnel coefficient, interpolated linearly from a table of 2,049 grazing angles.
    A one-sided (ground) facet radiates only where ``N > 0``. The range ``r2`` and the phase
    ``k r2``, reduced to one turn, are in double precision; the rest of the pair work in ``dtype``.
    The sum over the facets of a group, each weighted by its source factor
    ``A w exp(-j k r1) / r1`` (``A`` the area, ``w`` the weight), is a matrix product per chunk.

    Chunks of about ``_PAIRS_PER_CHUNK`` facet-receiver pairs run in ``threads`` threads (numpy
    releases the interpreter lock inside its array loops); each chunk's sum is added to the result
    in chunk order, so the result does not depend on the number of threads.

    Parameters
    ----------
    sources_m : array_like, shape (S, 3) or (S, 3, P)
        [m]; with shape (S, 3, P), each source's position for each facet (an image in the ground
        under that facet's own group).
    facets : Facets
    receivers_m : array_like, shape (R, 3)
        Points [m], or unit directions toward distant receivers with ``far``.
    wavelength_m : float
        [m]
    dtype : numpy dtype
        Precision of the pair work after the phase (``float32`` for the ground, ``float64`` where
        reciprocity or cancellation asks for it).
    relative_permittivity, conductivity_s_m : float or None
        Constants of the facets' material; ``None``: a perfect conductor.
    groups : array_like of int, shape (P,), optional
        Group of each facet (``0 .. G - 1``); the fields are summed per group.
    source_visible : numpy.ndarray of bool or float, shape (S, P), optional
        Whether each source lights each facet, or the amplitude of its field there (a knife-edge
        weight, :meth:`geo.optics.surface_facets.SurfaceGrid.antenna_weights`).
    horizon_tan : numpy.ndarray, shape (P,), optional
        Tangent of each facet's horizon: receivers seen lower from the facet are hidden.
    horizon_obstacle : tuple of numpy.ndarray, optional
        ``(tangent, distance_m, excess_m)`` per facet (P,)
        (:meth:`geo.optics.surface_facets.SurfaceGrid.horizon_obstacles`): each pair weighted by the
        knife edge over the facet's obstacle (:func:`_receiver_knife_edge`); not with ``horizon_tan``.
    pair_weight : callable, optional
        ``pair_weight(facet_slice) -> (receiver_index, weights (p, len(receiver_index)))``, called
        once per chunk, from the worker threads, in any order.
    far : bool
        ``receivers_m`` are unit directions; far-field units.
    reflection : callable, optional
        ``reflection(grazing_rad) -> Gamma`` of the ground (horizontal polarisation), e.g. a layer on it;
        instead of the half-space coefficient of ``relative_permittivity`` and ``conductivity_s_m``.
    threads : int, optional
        Worker threads; None: 2 when called from the main thread with more than one chunk, else 1
        (a caller that runs the kernel in a pool of its own already keeps the cores busy), and no
        more than a :func:`thread_limit` in force allows.

    Returns
    -------
    numpy.ndarray of complex, shape (S, G, R)
        ``G = 1`` without groups; in the units of each source's direct field ``exp(-j k r) / r``
        (far-field units with ``far``).

    References
    ----------
    See the module notes ([1]_ to [4]_).
    """
    k = 2.0 * math.pi / wavelength_m
    src = np.atleast_2d(np.asarray(sources_m, dtype=float))
    rx = np.atleast_2d(np.asarray(receivers_m, dtype=float))
    count_p, count_r = len(facets), rx.shape[0]
    group_of = np.zeros(count_p, dtype=np.int64) if groups is None else np.asarray(groups, dtype=np.int64)
    count_g = 1 if groups is None else (int(group_of.max()) + 1 if group_of.size else 0)
    out = np.zeros((src.shape[0], count_g, count_r), dtype=complex)
    if count_p == 0 or count_r == 0 or count_g == 0:
        return out
    dt = np.dtype(dtype)
    # Lengths in wavelengths for points (so r2 is in turns), as given for far directions.
    unit = 1.0 if far else 1.0 / wavelength_m
    visible = None if source_visible is None else np.asarray(source_visible, dtype=float)
    if horizon_tan is not None and horizon_obstacle is not None:
        raise ValueError("horizon_tan (hard) and horizon_obstacle (knife edge) exclude each other")
    lossy = relative_permittivity is not None or reflection is not None
    table, per_rad = None, None
    if lossy:
        table, per_rad = _gamma_table(relative_permittivity, conductivity_s_m, wavelength_m, dt, reflection)
    rows_per_chunk = max(1, _PAIRS_PER_CHUNK // count_r)
    call = _Call(
        src=src,
        rx=rx,
        wavelength_m=wavelength_m,
        far=far,
        dt=dt,
        two_sided=facets.two_sided,
        homogeneous=np.column_stack([rx * unit, np.full(count_r, 0.0 if far else 1.0)]),
        centres=facets.centres_m * unit,
        group_of=group_of,
        every_facet=_source_terms(facets, src, k, dt, visible, lossy),
        lossy=lossy,
        table=table,
        per_rad=per_rad,
        ht=None if horizon_tan is None else np.asarray(horizon_tan, dtype=dt),
        obstacle=_obstacles(horizon_obstacle),
        tiny=dt.type(_TINY),
        pair_weight=pair_weight,
        count_p=count_p,
        count_r=count_r,
        rows_per_chunk=rows_per_chunk,
        size=rows_per_chunk * count_r,
        spaces={},
    )
    starts = range(0, count_p, rows_per_chunk)
    threads = _thread_count(threads, len(starts))
    chunk = functools.partial(_chunk, call)
    if threads > 1:
        with ThreadPoolExecutor(max_workers=threads) as pool:
            parts = list(pool.map(chunk, starts))
    else:
        parts = map(chunk, starts)
    _add_chunks(out, parts)
    scale = -1j * k / (4.0 * math.pi) * unit
    return scale * out


def scattered_field(
    source_m,
    facets: Facets,
    receivers_m,
    wavelength_m: float,
    relative_permittivity: float | None = None,
    conductivity_s_m: float | None = None,
    receiver_visible=None,
    groups=None,
    source_weights=None,
) -> np.ndarray:
    """Field scattered by ``facets`` from an isotropic horizontally polarised source (see module notes).

    The kernel :func:`_pair_fields` in double precision, for one source (or several at once, sharing
    the pair work, with ``source_m`` of shape (S, 3)).

    Parameters
    ----------
    source_m : array_like, shape (3,), (S, 3) or (S, 3, P)
        The antenna (or antennas; or each antenna's position per facet, see :func:`_pair_fields`). [m]
    facets : Facets
        Plates (two-sided) or ground (one-sided).
    receivers_m : array_like, shape (R, 3)
        [m]
    wavelength_m : float
        [m]
    relative_permittivity, conductivity_s_m : float or None
        Constants of the facets' material (:func:`geo.radio.reflection.reflection_coefficient_h`);
        ``None``: a perfect conductor.
    receiver_visible : callable, optional
        ``receiver_visible(facet_index, receiver_index) -> bool array (p, r)``: whether each
        facet of a chunk sees each receiver (terrain shadowing); every pair by default.
    groups : array_like of int, shape (P,), optional
        Group of each facet (``0 .. G - 1``, e.g. one object position each).
    source_weights : numpy.ndarray, shape (S, P), optional
        A real factor per source and facet on the source's side (an element pattern toward each
        facet), besides the facets' own weights; 1 by default.

    Returns
    -------
    numpy.ndarray of complex, shape (R,), or (G, R) with ``groups``
        In the units of the direct field ``exp(-j k r) / r`` of the same source; with sources of
        shape (S, 3), a leading axis of length S.

    References
    ----------
    See the module notes ([1]_ to [4]_).
    """
    rx = np.atleast_2d(np.asarray(receivers_m, dtype=float))
    pair_weight = None
    if receiver_visible is not None:
        every = np.arange(rx.shape[0])

        def pair_weight(sl):
            return every, receiver_visible(np.arange(sl.start, sl.stop), every)

    several = np.ndim(source_m) >= 2
    source = np.atleast_2d(np.asarray(source_m, dtype=float))
    ground = dict(relative_permittivity=relative_permittivity, conductivity_s_m=conductivity_s_m)
    out = _pair_fields(
        source, facets, rx, wavelength_m, dtype=np.float64, groups=groups, pair_weight=pair_weight,
        source_visible=source_weights, **ground,
    )  # fmt: skip
    out = out if groups is not None else out[:, 0]
    return out if several else out[0]


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
    horizon_obstacle=None,
    reflection=None,
) -> np.ndarray:
    """Fields of one-sided ground facets for several sources at once, in single precision.

    The kernel :func:`_pair_fields` with ``float32`` pair work after the phase (its error is about
    1e-6 of the largest field; the sum of each chunk is added in double precision).

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
    source_visible : numpy.ndarray of bool or float, shape (S, P), optional
        Whether each facet is lit by each source (hard terrain shadowing), or the amplitude of each
        source's field at each facet (knife-edge weights); all lit fully by default.
    horizon_tan : numpy.ndarray, shape (P,), optional
        Tangent of each facet's horizon toward the receivers: a receiver whose elevation seen from
        the facet has a smaller tangent is hidden from it. None: every receiver is seen.
    reflection : callable, optional
        ``reflection(grazing_rad) -> Gamma`` of the ground instead of the half-space's (a layer on it).
    horizon_obstacle : tuple of numpy.ndarray, optional
        ``(tangent, distance_m, excess_m)`` of each facet's obstacle toward the receivers: each
        pair weighted by the knife edge over it instead (:func:`_receiver_knife_edge`).
    pair_weight : callable, optional
        ``pair_weight(facet_slice) -> (receiver_index, weights)``: the receivers the facets of a
        chunk count for, and the real weights (p, len(receiver_index)) of each pair (e.g. a taper
        at the edge of each receiver's own integration area); the other receivers are skipped
        for that chunk, so facets ordered by position make it pay. Called once per chunk, from
        worker threads, in any order.
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
    ground = dict(relative_permittivity=relative_permittivity, conductivity_s_m=conductivity_s_m, reflection=reflection)
    shading = dict(
        source_visible=source_visible,
        horizon_tan=horizon_tan,
        horizon_obstacle=horizon_obstacle,
        pair_weight=pair_weight,
    )
    fields = _pair_fields(sources_m, facets, receivers_m, wavelength_m, dtype=np.float32, far=far, **ground, **shading)
    return fields[:, 0, :]
