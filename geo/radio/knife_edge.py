"""Diffraction over a single knife edge: the Fresnel-Kirchhoff parameter, the field factor, the loss.

A straight edge (a screen, or a ridge taken as one) stands ``h`` above the straight ray between two
points ``d1`` and ``d2`` from it (``h > 0`` when it blocks the ray). In the Fresnel approximation
the field behind it, relative to free space, depends on one number, the Fresnel-Kirchhoff
parameter [1]_ [2]_::

    v = h sqrt(2 (d1 + d2) / (lambda d1 d2))
    F(v) = (1 + j) / 2  integral_v^inf exp(-j pi s^2 / 2) ds
         = (1 + j) / 2  [(1/2 - C(v)) - j (1/2 - S(v))]

with ``C, S`` the Fresnel integrals ``C(v) = int_0^v cos(pi s^2 / 2) ds``, ``S(v) = int_0^v sin(pi s^2 / 2) ds``
(scipy's convention) [2]_. ``|F(0)| = 1/2`` (6.02 dB) on the shadow boundary, ``F -> 1`` far in the
lit region (with a ripple that peaks at ``|F| = 1.17`` near ``v = -1.2``) and ``|F| -> 1 / (pi v sqrt 2)``
deep in the shadow. ITU-R P.526 gives the loss ``J(v) = -20 log10 |F(v)|`` by a closed
approximation, 0 dB for ``v <= -0.78`` [1]_.

**An obstacle on reflecting ground.** Where the obstacle stands on ground that reflects (the
ground the physical optics integrates), the obstacle and its image in that ground form a strip from
``t`` below the ground line to ``t`` above it, ``t`` the obstacle's height above the ground line
(image theory [3]_). The aperture is the whole plane but the strip, so its field factor is
``F(v_top) + 1 - F(v_bottom)``, ``v_top`` and ``v_bottom`` the parameters of the strip's two
edges: exactly 1 for ``t = 0`` (no obstacle: flat ground changes nothing), about ``F(v_top)`` for
a tall obstacle, continuous in between (:func:`ridge_on_ground_field`).

The fast forms interpolate ``F`` from a table of ``v`` in [-40, 40] (step 1/512, linear; error
below 5e-5, measured in ``tests/radio/test_knife_edge.py``) and use the leading term of the
asymptotic series beyond [2]_.

References
----------
.. [1] ITU-R Recommendation P.526, "Propagation by diffraction", sec. 4.1 (single knife edge: the
       parameter ``v`` and the approximation ``J(v) = 6.9 + 20 log10(sqrt((v - 0.1)^2 + 1) + v - 0.1)``
       for ``v > -0.78``).
.. [2] Born, M. and Wolf, E., *Principles of Optics*, 7th ed., Cambridge, 1999, sec. 8.7 (Fresnel
       diffraction at a straight edge; the Fresnel integrals and Cornu's spiral).
.. [3] Balanis, C. A., *Advanced Engineering Electromagnetics*, Wiley, 1989, sec. 7.4 (image
       theory over a conducting plane).
"""

from __future__ import annotations

import math

import numpy as np

__all__ = [
    "fresnel_parameter",
    "knife_edge_field",
    "knife_edge_field_fast",
    "knife_edge_loss_db",
    "exact_loss_db",
    "ridge_on_ground_field",
    "ridge_on_ground_amplitude",
    "TABLE_LIMIT",
]

#: The table covers ``v`` in [-TABLE_LIMIT, TABLE_LIMIT]; the asymptotic series beyond.
TABLE_LIMIT = 40.0
#: Table steps per unit of ``v``.
_STEPS_PER_UNIT = 512
#: Below this ``v`` the P.526 approximation gives no loss [1]_.
_P526_LIT_LIMIT = -0.78


def fresnel_parameter(clearance_m, d1_m, d2_m, wavelength_m: float):
    """The Fresnel-Kirchhoff parameter ``v = h sqrt(2 (d1 + d2) / (lambda d1 d2))`` [1]_.

    Parameters
    ----------
    clearance_m : array_like
        ``h``, the edge's height above the straight ray, positive when it blocks. [m]
    d1_m, d2_m : array_like
        Distances from the two ends to the edge (positive). [m]
    wavelength_m : float
        [m]

    Returns
    -------
    numpy.ndarray
        ``v`` [-]

    References
    ----------
    .. [1] ITU-R P.526, sec. 4.1 (single knife edge).

    Examples
    --------
    >>> round(float(fresnel_parameter(1.0, 100.0, 100.0, 1.0)), 4)
    0.2
    """
    d1, d2 = np.asarray(d1_m, dtype=float), np.asarray(d2_m, dtype=float)
    return np.asarray(clearance_m, dtype=float) * np.sqrt(2.0 * (d1 + d2) / (wavelength_m * d1 * d2))


def knife_edge_field(v):
    """The complex field factor ``F(v)`` behind a knife edge, from the Fresnel integrals (module notes).

    Parameters
    ----------
    v : array_like
        Fresnel-Kirchhoff parameter. [-]

    Returns
    -------
    numpy.ndarray of complex
        ``F(v)``, relative to the free-space field (same phase reference as the straight ray).

    References
    ----------
    .. [1] Born and Wolf (1999), sec. 8.7; ``scipy.special.fresnel`` for ``S`` and ``C``.

    Examples
    --------
    >>> round(abs(complex(knife_edge_field(0.0))), 6)
    0.5
    """
    from scipy.special import fresnel

    s, c = fresnel(np.asarray(v, dtype=float))
    return (1.0 + 1.0j) / 2.0 * ((0.5 - c) - 1.0j * (0.5 - s))


def _fresnel_integrals_on_grid(steps: int, step: float) -> np.ndarray:
    """``C(v) + j S(v)`` at ``v = 0, step, ..., steps * step``: the integral of ``exp(j pi s^2 / 2)``.

    Six-point Gauss-Legendre quadrature on every step, summed from 0 [1]_ (the phase turns by at
    most ``pi v step`` in a step, 0.25 rad at ``v = 40``: the rule's error is far below the
    interpolation's). Numpy only, so that a study does not import scipy.special (about 0.35 s).

    References
    ----------
    .. [1] Abramowitz, M. and Stegun, I. A., *Handbook of Mathematical Functions*, NBS, 1964,
           25.4.30 (Gauss-Legendre integration); 7.3.1-7.3.2 (the Fresnel integrals).
    """
    nodes, weights = np.polynomial.legendre.leggauss(6)
    starts = np.arange(steps) * step
    s = starts[:, None] + 0.5 * step * (nodes[None, :] + 1.0)
    pieces = np.exp(0.5j * math.pi * s * s) @ (0.5 * step * weights)
    return np.r_[0.0, np.cumsum(pieces)]


def _table():
    """``F`` on the table's grid and its steps (complex), made once."""
    if not _TABLE:
        half = int(TABLE_LIMIT * _STEPS_PER_UNIT)
        positive = _fresnel_integrals_on_grid(half, 1.0 / _STEPS_PER_UNIT)
        cs = np.r_[-positive[:0:-1], positive]  # C and S are odd [2]_
        f = (1.0 + 1.0j) / 2.0 * ((0.5 - cs.real) - 1.0j * (0.5 - cs.imag))
        _TABLE.append((f, np.r_[np.diff(f), 0.0]))
    return _TABLE[0]


_TABLE: list = []


def _asymptotic_shadow(v):
    """``F(v)`` for large positive ``v``: ``(1 - j) exp(-j pi v^2 / 2) / (2 pi v)`` [2]_ (leading term)."""
    return (1.0 - 1.0j) * np.exp(-0.5j * math.pi * v * v) / (2.0 * math.pi * v)


def knife_edge_field_fast(v):
    """``F(v)`` as :func:`knife_edge_field`, interpolated from a table (fast; see the module notes).

    Beyond ``|v| > TABLE_LIMIT`` the leading asymptotic term, with ``F(-v) = 1 - F(v)`` [2]_.

    Parameters
    ----------
    v : array_like
        [-]

    Returns
    -------
    numpy.ndarray of complex

    References
    ----------
    .. [2] Born and Wolf (1999), sec. 8.7 (the symmetry of Cornu's spiral and its asymptotes).
    """
    v = np.asarray(v, dtype=float)
    shape, v = v.shape, v.reshape(-1)
    f, step = _table()
    at = np.clip(v, -TABLE_LIMIT, TABLE_LIMIT)
    at += TABLE_LIMIT
    at *= _STEPS_PER_UNIT
    i = at.astype(np.intp)
    np.minimum(i, f.size - 2, out=i)
    at -= i
    out = step[i]
    out *= at
    out += f[i]
    far = np.flatnonzero(np.abs(v) > TABLE_LIMIT)
    if far.size:
        x = v[far]
        tail = _asymptotic_shadow(np.abs(x))
        out[far] = np.where(x > 0.0, tail, 1.0 - tail)
    return out.reshape(shape)


def knife_edge_loss_db(v):
    """ITU-R P.526's approximation of the knife-edge loss ``J(v)``, 0 dB for ``v <= -0.78`` [1]_. [dB]

    Parameters
    ----------
    v : array_like
        [-]

    Returns
    -------
    numpy.ndarray
        ``6.9 + 20 log10(sqrt((v - 0.1)^2 + 1) + v - 0.1)`` for ``v > -0.78``, else 0. [dB]

    References
    ----------
    .. [1] ITU-R P.526, sec. 4.1, eq. (31).

    Examples
    --------
    >>> round(float(knife_edge_loss_db(0.0)), 2)
    6.03
    """
    v = np.asarray(v, dtype=float)
    x = v - 0.1
    loss = 6.9 + 20.0 * np.log10(np.sqrt(x * x + 1.0) + x)
    return np.where(v > _P526_LIT_LIMIT, loss, 0.0)


def exact_loss_db(v):
    """The knife-edge loss from the Fresnel integrals, ``-20 log10 |F(v)|`` (negative where ``|F| > 1``). [dB]"""
    return -20.0 * np.log10(np.abs(knife_edge_field(v)))


def ridge_on_ground_field(v_top, v_bottom, fast: bool = True):
    """Field factor of an obstacle and its image in the ground: a strip, ``F(v_top) + 1 - F(v_bottom)``.

    Parameters
    ----------
    v_top, v_bottom : array_like
        Parameters of the strip's upper edge (the obstacle's top) and lower edge (its image's),
        ``v_bottom <= v_top`` (module notes). [-]
    fast : bool
        Interpolate (:func:`knife_edge_field_fast`) rather than evaluate the Fresnel integrals.

    Returns
    -------
    numpy.ndarray of complex
        1 where ``v_bottom = v_top`` (no obstacle).

    References
    ----------
    .. [2] Born and Wolf (1999), sec. 8.7 (Fresnel diffraction; the complementary aperture).
    .. [3] Balanis (1989), sec. 7.4 (image theory).
    """
    field = knife_edge_field_fast if fast else knife_edge_field
    return field(v_top) + 1.0 - field(v_bottom)


def ridge_on_ground_amplitude(v_top, v_bottom):
    """``|F(v_top) + 1 - F(v_bottom)|`` (:func:`ridge_on_ground_field`, interpolated): an amplitude weight. [-]"""
    return np.abs(ridge_on_ground_field(v_top, v_bottom))
