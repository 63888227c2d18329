"""The low-pass filter that stands for the flight-inspection receiver and recorder, and its response.

A flight-inspection aircraft records the DDM through its receiver and recorder, whose output
follows the DDM with a lag set by their time constant; flown at a ground speed ``v`` a time
constant ``tau`` is a length ``L = v tau`` along the approach. We take the filter as first order
(one pole, an RC filter) running in the direction of flight, from the coverage limit toward the
threshold:

    dy/dx = (u(x) - y(x)) / L

with ``x`` the distance flown, ``u`` the DDM and ``y`` the recorded DDM. Its response to a
sinusoidal bend of period ``P`` (the steady state) is ``H = 1 / (1 + i 2 pi L / P)``, so the
filter keeps the fraction ``|H| = 1 / sqrt(1 + (2 pi L / P)^2)`` of the bend's amplitude
(:func:`kept_fraction`); to a step of the DDM it answers ``1 - exp(-x / L)``.

**Default length.** ICAO Annex 10 Vol I Attachment C (2.1.5 ff.) discusses how bends are
evaluated and gives the filter in terms of the aircraft's speed; we do not have the text at hand.
From memory, the corner frequency is ``V / 92.6`` rad/s for a ground speed ``V`` in km/h; a
first-order filter with that corner is ``L = (V / 3.6) / (V / 92.6) = 92.6 / 3.6 = 25.7 m``
long at any speed (0.36 s at 140 kt). ``FILTER_LENGTH_M`` is that value, from memory: confirm it
against the edition in force and the flight-inspection manual; every function takes the length as
a parameter (:func:`filter_length_m` turns a time constant and a speed into one).

**Discretisation.** The DDM is taken linear between its samples, interpolated to a uniform grid
of at most ``GRID_STEP_M``, and the filter is solved exactly for a piecewise-linear input on that
grid (the recursion below), so its response is that of the continuous filter to the interpolated
DDM. The interpolation itself keeps a bend only if it is sampled well enough: the samples should
be at most ``MAX_GAP_M`` apart (a 100 m bend then has 5 samples a period).

References
----------
.. [1] ICAO Annex 10, Volume I, Attachment C, 2.1.5 ff. (evaluation of localizer and glide path
       bends; the filter set by the aircraft's speed); from memory, text not at hand.
.. [2] Oppenheim, A. V. and Willsky, A. S., *Signals and Systems*, 2nd ed., Prentice Hall, 1997,
       sec. 6.5 (first-order continuous-time systems, frequency response ``1 / (1 + i omega tau)``).
"""

from __future__ import annotations

import math

import numpy as np

__all__ = [
    "FILTER_LENGTH_M",
    "GRID_STEP_M",
    "MAX_GAP_M",
    "FILTER_NOTE",
    "filter_length_m",
    "kept_fraction",
    "low_pass",
]

#: Length of the first-order filter: corner V / 92.6 rad/s at V km/h (Annex 10 Att. C; from memory). [m]
FILTER_LENGTH_M = 92.6 / 3.6
#: Largest step of the uniform grid the DDM is interpolated to. [m]
GRID_STEP_M = 2.0
#: Largest gap between DDM samples inside a segment for a well-sampled verdict. [m]
MAX_GAP_M = 20.0


def filter_length_m(time_constant_s: float, speed_m_s: float) -> float:
    """The filter's length along the approach: a time constant flown at a ground speed. [m]

    Parameters
    ----------
    time_constant_s : float
        Time constant of the receiver and recorder. [s]
    speed_m_s : float
        Ground speed of the inspection aircraft. [m/s]

    Returns
    -------
    float
        ``speed_m_s * time_constant_s``. [m]

    References
    ----------
    .. [1] Oppenheim and Willsky (module References), sec. 6.5.
    """
    return float(time_constant_s) * float(speed_m_s)


def kept_fraction(period_m, filter_m: float = FILTER_LENGTH_M):
    """Fraction of a sinusoidal bend's amplitude the filter keeps: ``1 / sqrt(1 + (2 pi L / P)^2)``.

    The magnitude of the first-order filter's frequency response at the spatial frequency of the
    bend [1]_. The reference a segment's bends are taken about (a straight line or the mean over
    the segment, :mod:`geo.radio.structure`) removes in addition what a line or a constant over the
    segment follows of the bend: nothing much while the period is short against the segment, most
    of the bend once the period approaches the segment's length.

    Parameters
    ----------
    period_m : float or array_like
        Period of the bend along the approach (> 0). [m]
    filter_m : float
        Length of the filter (0: no filter). [m]

    Returns
    -------
    float or numpy.ndarray
        Between 0 and 1. [-]

    References
    ----------
    .. [1] Oppenheim and Willsky (module References), sec. 6.5: ``|H(i omega)| = 1 / sqrt(1 +
           (omega tau)^2)``, here with ``omega tau = 2 pi L / P``.
    """
    p = np.asarray(period_m, float)
    out = 1.0 / np.sqrt(1.0 + (2.0 * math.pi * float(filter_m) / p) ** 2)
    return float(out) if out.ndim == 0 else out


#: Samples the recursion takes in one matrix product (:func:`low_pass`).
_BLOCK = 64


def low_pass(values, step_m: float, filter_m: float = FILTER_LENGTH_M, initial=None) -> np.ndarray:
    """The first-order filter along the last axis, samples in the order flown, uniform step.

    Exact for an input linear between samples: with ``a = exp(-h / L)`` and ``c = (1 - a) L / h``,
    ``y[n] = a y[n-1] + (1 - c) u[n] + (c - a) u[n-1]`` [1]_. It starts settled on the line through
    the first two samples (``y[0] = u[0] - L (u[1] - u[0]) / h``, the steady state of a ramp), as a
    recorder that followed the approach before the grid begins: a DDM linear along the approach
    comes out as the same line moved by ``L`` (no transient).

    Parameters
    ----------
    values : array_like, shape (..., N)
        DDM on the uniform grid, in the order flown (coverage limit first).
    step_m : float
        Grid step (> 0). [m]
    filter_m : float
        Filter length (0: the values unchanged). [m]
    initial : array_like, shape (..., 1), optional
        The recorded DDM at the first sample (to continue a filter run over the grid before);
        default: settled on the first interval's ramp.

    Returns
    -------
    numpy.ndarray, shape (..., N)
        The recorded DDM.

    References
    ----------
    .. [1] Oppenheim and Willsky (module References), sec. 6.5; the recursion is the exact solution
           of ``dy/dx = (u - y) / L`` over one step for ``u`` linear in the step.
    """
    u = np.asarray(values, float)
    if filter_m <= 0.0 or u.shape[-1] < 2:
        return u.copy()
    a = math.exp(-step_m / filter_m)
    c = -math.expm1(-step_m / filter_m) * filter_m / step_m
    # Settled on the first interval's ramp: y[0] = u[0] - L (u[1] - u[0]) / h.
    if initial is None:
        first = u[..., 0] - filter_m * (u[..., 1] - u[..., 0]) / step_m
    else:
        first = np.asarray(initial, float)[..., 0]
    drive = (1.0 - c) * u[..., 1:] + (c - a) * u[..., :-1]
    y = np.empty_like(u)
    y[..., 0] = first
    # The recursion by blocks of samples (every row at once; numpy only, so that a study does not
    # import scipy.signal, about 0.8 s, for one first-order filter): within a block of B samples
    # after y0, y[j] = a^(j+1) y0 + sum_(i<=j) a^(j-i) x[i], a lower-triangular product; only the
    # blocks run in turn. Powers of a <= 1 only: no growth, the same sums to rounding.
    block = min(_BLOCK, drive.shape[-1])
    j = np.arange(block)
    powers = np.where(j[:, None] >= j[None, :], a ** np.maximum(j[:, None] - j[None, :], 0), 0.0)
    carry = a ** (j + 1)
    previous = y[..., 0]
    for start in range(0, drive.shape[-1], block):
        x = drive[..., start : start + block]
        n = x.shape[-1]
        out = x @ powers[:n, :n].T + previous[..., None] * carry[:n]
        y[..., 1 + start : 1 + start + n] = out
        previous = out[..., -1]
    return y


#: One line on the filter and its response, for the outputs.
FILTER_NOTE = (
    f"recorder filter: first order, {FILTER_LENGTH_M:.1f} m of flight (corner V/92.6 rad/s at V km/h, ICAO Annex 10 "
    "Vol I Attachment C, from memory, text not at hand); it keeps 1/sqrt(1 + (2 pi L/P)^2) of a bend of period P "
    f"(" + ", ".join(f"{kept_fraction(p):.2f} at {p:g} m" for p in (300.0, 500.0, 1000.0)) + "); DDM samples at most "
    f"{MAX_GAP_M:.0f} m apart"
)
