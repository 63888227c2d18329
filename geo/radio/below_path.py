"""Below the path: the DDM must rise smoothly to 0.22 and stay there down to 0.45 theta.

Annex 10 Vol I 3.1.5.6.5 (from memory; confirm the edition in force) asks that the DDM below the
glide path increase smoothly for decreasing angle until 0.22 DDM is reached; that this value be
reached at an angle not less than 0.30 theta; and, where it is reached above 0.45 theta, that the
DDM stay at or above 0.22 at least down to 0.45 theta, or down to such lower angle, not below
0.30 theta, as the promulgated glide path intercept procedure needs [1]_. The lower edge of the
band is ``prediction.below_path_down_to`` in the site file (a fraction of theta, 0.30-0.45,
default 0.45).

The check works on any far-field DDM, so the image-theory prediction
(:func:`geo.radio.prediction.far_field_ddm`), the combined course and clearance DDM of a capture-effect
array (:mod:`geo.radio.clearance`) and a surface (physical-optics) prediction can all call it.

Contract of the DDM callable
----------------------------
``ddm_of_elevation(elevation_rad) -> ddm``: ``elevation_rad`` is a 1-D numpy array of
elevations above the horizontal, in radians, of distant receivers on the course (azimuth 0);
the callable returns a numpy array of the same shape with the DDM there, positive when 150 Hz
dominates (below the path), with the SBO level the prediction uses. It is called a few times
with arrays of a few hundred elevations, and with single-element arrays while the angle where
0.22 is reached is refined; it must be deterministic. An optional ``carrier_of_elevation`` of
the same form returns the carrier (CSB) amplitude, any common scale; its level relative to the
path angle is reported, to show where a weak carrier leaves the DDM to multipath.

References
----------
.. [1] ICAO Annex 10, Volume I, 3.1.5.6.5 (DDM below the glide path: smooth rise to 0.22 DDM,
       reached not below 0.30 theta; not less than 0.22 down to 0.45 theta, or down to 0.30 theta
       where the intercept procedure needs it); from memory, confirm the edition in force.
.. [2] ICAO Annex 10, Volume I, 3.1.5.3.1 (coverage 0.45 theta to 1.75 theta).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = [
    "BELOW_PATH_DDM",
    "DOWN_TO_FRACTION",
    "LOWEST_FRACTION",
    "WEAK_CARRIER_DB",
    "BelowPathCheck",
    "check_below_path",
    "sampled_ddm",
]

#: DDM the signal below the path must reach [1]_ (from memory).
BELOW_PATH_DDM = 0.22
#: Default lower edge of the band, fraction of theta [1]_ [2]_.
DOWN_TO_FRACTION = 0.45
#: The angle 0.22 DDM must be reached at or above, and the lowest edge of the band, fraction of theta [1]_.
LOWEST_FRACTION = 0.30
#: Carrier this far below its level on the path is flagged weak: mastplan's choice, no source. [dB]
WEAK_CARRIER_DB = 10.0


@dataclass(frozen=True)
class BelowPathCheck:
    """The DDM below the path against Annex 10 Vol I 3.1.5.6.5 [1]_.

    Attributes
    ----------
    down_to_fraction : float
        Lower edge of the band, fraction of theta.
    path_angle_deg : float
        Upper end of the search (the predicted path angle). [deg]
    reach_deg : float or None
        Highest elevation below the path where the DDM reaches 0.22 (searched from the path down
        to 0.30 theta); ``None`` when it never does. [deg]
    reach_fraction : float or None
        ``reach_deg / theta``.
    smooth : bool
        The DDM does not fall anywhere between the path and ``reach_deg`` (as the angle decreases).
    lowest_ddm : float
        Lowest DDM in the band from ``reach_deg`` down to ``down_to_fraction * theta`` (the DDM at
        the band's lower edge when 0.22 is reached below it or never).
    lowest_at_deg : float
        Where ``lowest_ddm`` was found. [deg]
    ddm_at_down_to : float
        DDM at the band's lower edge.
    carrier_at_down_to_db : float or None
        Carrier at the band's lower edge relative to the carrier at the path angle. [dB]
    weak_carrier_below_deg : float or None
        Highest elevation below the path where the carrier is more than ``WEAK_CARRIER_DB`` below
        its level on the path (``None`` when it never is down to 0.30 theta). [deg]
    passed : bool
        Smooth, 0.22 reached at or above 0.30 theta and, when reached above the band's lower
        edge, never below 0.22 down to it.
    samples : int
        Elevations sampled between the path and 0.30 theta.
    """

    down_to_fraction: float
    path_angle_deg: float
    reach_deg: float | None
    reach_fraction: float | None
    smooth: bool
    lowest_ddm: float
    lowest_at_deg: float
    ddm_at_down_to: float
    carrier_at_down_to_db: float | None
    weak_carrier_below_deg: float | None
    passed: bool
    samples: int


def _refine(func, lo: float, hi: float, steps: int = 50) -> float:
    """Bisection for ``func = 0`` between ``lo`` (negative side) and ``hi``. [rad]"""
    f_lo = func(lo)
    for _ in range(steps):
        mid = 0.5 * (lo + hi)
        f_mid = func(mid)
        if (f_mid >= 0.0) == (f_lo >= 0.0):
            lo, f_lo = mid, f_mid
        else:
            hi = mid
    return 0.5 * (lo + hi)


def check_below_path(
    ddm_of_elevation,
    angle_deg: float,
    path_angle_deg: float | None = None,
    down_to_fraction: float = DOWN_TO_FRACTION,
    carrier_of_elevation=None,
    samples: int = 701,
    tolerance_ddm: float = 1e-9,
) -> BelowPathCheck:
    """Check the DDM below the path against Annex 10 Vol I 3.1.5.6.5 [1]_.

    Parameters
    ----------
    ddm_of_elevation : callable
        Far-field DDM against elevation (see the module's contract).
    angle_deg : float
        Design path angle theta. [deg]
    path_angle_deg : float, optional
        Predicted path angle, where the search starts (default ``angle_deg``). [deg]
    down_to_fraction : float
        Lower edge of the band, fraction of theta (0.30-0.45).
    carrier_of_elevation : callable, optional
        Carrier amplitude against elevation (same contract), to report weak-carrier angles.
    samples : int
        Elevations sampled from the path down to 0.30 theta.
    tolerance_ddm : float
        A fall of the DDM smaller than this counts as smooth (numerical noise).

    Returns
    -------
    BelowPathCheck

    Raises
    ------
    ValueError
        When ``down_to_fraction`` is outside 0.30-0.45 or the path angle is below 0.30 theta.
    """
    if not LOWEST_FRACTION - 1e-12 <= down_to_fraction <= DOWN_TO_FRACTION + 1e-12:
        raise ValueError(f"down_to_fraction must be within {LOWEST_FRACTION}-{DOWN_TO_FRACTION}")
    theta = math.radians(angle_deg)
    top = math.radians(path_angle_deg if path_angle_deg is not None else angle_deg)
    bottom = LOWEST_FRACTION * theta
    if top <= bottom:
        raise ValueError("the path angle must lie above 0.30 theta")
    e = np.linspace(top, bottom, samples)  # from the path downward
    d = np.asarray(ddm_of_elevation(e), dtype=float)

    above = np.flatnonzero(d >= BELOW_PATH_DDM)
    if above.size:
        i = int(above[0])
        if i == 0:
            reach = float(top)
        else:
            reach = _refine(
                lambda x: float(ddm_of_elevation(np.array([x]))[0]) - BELOW_PATH_DDM, float(e[i - 1]), float(e[i])
            )
        rising = d[: i + 1]
        smooth = bool(np.all(np.diff(rising) >= -tolerance_ddm))
    else:
        reach, i = None, samples - 1
        smooth = bool(np.all(np.diff(d) >= -tolerance_ddm))

    low_edge = down_to_fraction * theta
    at_edge = float(ddm_of_elevation(np.array([low_edge]))[0])
    if reach is not None and reach > low_edge:
        band = (e <= reach) & (e >= low_edge)
        eb = np.r_[e[band], reach, low_edge]
        db = np.r_[d[band], BELOW_PATH_DDM, at_edge]
        k = int(np.argmin(db))
        lowest, lowest_at = float(db[k]), float(eb[k])
        holds = lowest >= BELOW_PATH_DDM - tolerance_ddm
    else:
        lowest, lowest_at = at_edge, low_edge
        holds = reach is not None  # reached between 0.30 theta and the band's lower edge
    passed = bool(smooth and reach is not None and reach >= bottom and holds)

    carrier_db = weak_below = None
    if carrier_of_elevation is not None:
        ref = float(np.abs(carrier_of_elevation(np.array([top])))[0])
        with np.errstate(divide="ignore", invalid="ignore"):
            level = 20.0 * np.log10(np.abs(np.asarray(carrier_of_elevation(e))) / ref)
            edge_db = float(20.0 * np.log10(float(np.abs(carrier_of_elevation(np.array([low_edge])))[0]) / ref))
        carrier_db = edge_db if math.isfinite(edge_db) else None
        weak = np.flatnonzero(level < -WEAK_CARRIER_DB)
        weak_below = math.degrees(float(e[weak[0]])) if weak.size and math.isfinite(ref) and ref > 0 else None

    return BelowPathCheck(
        down_to_fraction,
        math.degrees(top),
        None if reach is None else math.degrees(reach),
        None if reach is None else reach / theta,
        smooth,
        lowest,
        math.degrees(lowest_at),
        at_edge,
        carrier_db,
        weak_below,
        passed,
        samples,
    )


def sampled_ddm(elevation_rad, ddm_values):
    """A DDM callable of the module's contract from samples: cubic through the four nearest [3]_.

    For a DDM that costs much per elevation (the surface prediction): computed once at a few
    tens of elevations, read anywhere between them. Each value comes from the Lagrange cubic
    through the two samples on either side (the end intervals use the four end samples), exact
    for cubics, with an error of order ``h^4`` for a smooth DDM (``h`` the sample spacing).

    Parameters
    ----------
    elevation_rad : array_like
        Increasing elevations, at least 4. [rad]
    ddm_values : array_like
        DDM there.

    Returns
    -------
    callable
        ``ddm_of_elevation(elevation_rad) -> ddm``; clamped at the end samples outside them.

    References
    ----------
    .. [3] Press, W. H. et al., *Numerical Recipes*, 3rd ed., 2007, sec. 3.2 (polynomial
           interpolation through neighbouring points).
    """
    xs = np.asarray(elevation_rad, dtype=float)
    ys = np.asarray(ddm_values, dtype=float)
    if xs.ndim != 1 or xs.size < 4 or xs.shape != ys.shape or np.any(np.diff(xs) <= 0.0):
        raise ValueError("sampled_ddm needs at least 4 increasing elevations and one DDM each")

    def ddm_of_elevation(e):
        x = np.clip(np.asarray(e, dtype=float), xs[0], xs[-1])
        first = np.clip(np.searchsorted(xs, x) - 2, 0, xs.size - 4)
        out = np.zeros(x.shape)
        for j in range(4):
            term = ys[first + j]
            for m in range(4):
                if m != j:
                    term = term * (x - xs[first + m]) / (xs[first + j] - xs[first + m])
            out += term
        return out

    return ddm_of_elevation
