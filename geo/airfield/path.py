"""The glide path over the runway: RDH, path over the threshold, GPIP, setback.

Lengths along the runway are measured from the threshold, positive in the
landing direction. The straight portion of the path rises at the path angle
from the point abeam the mast where it meets the reflecting ground (the
reflection-plane intercept). The actual path near the runway is a cone around
the mast: at a horizontal distance ``r`` from the mast it stands
``r tan(theta)`` above the mast's ground.

References
----------
.. [1] ICAO Annex 10, Volume I, 3.1.1 (ILS reference datum, point "T") and
       3.1.5.1.4-3.1.5.1.5 (height of the reference datum, 15 m).
.. [2] FAA Order 6750.16, Siting Criteria for Instrument Landing Systems
       (threshold crossing height, glide path intercept point).
"""

from __future__ import annotations

import math

__all__ = [
    "rdh_m",
    "path_height_over_threshold_m",
    "gpip_along_m",
    "setback_for_rdh_m",
    "runway_gradient",
]


def rdh_m(
    intercept_elevation_m: float,
    setback_m: float,
    angle_deg: float,
    threshold_elevation_m: float,
) -> float:
    """Reference datum height: the straight path over the threshold [1]_.

    Parameters
    ----------
    intercept_elevation_m : float
        Elevation where the straight path meets the ground abeam the mast
        (the mast's ground on flat terrain). [m]
    setback_m : float
        Along-runway distance from the threshold to the point abeam the mast. [m]
    angle_deg : float
        Path angle. [deg]
    threshold_elevation_m : float
        Threshold elevation on the centre line. [m]

    Returns
    -------
    float
        ``z_i + s tan(theta) - z_thr``. [m]
    """
    return intercept_elevation_m + setback_m * math.tan(math.radians(angle_deg)) - threshold_elevation_m


def path_height_over_threshold_m(
    intercept_elevation_m: float,
    setback_m: float,
    offset_m: float,
    angle_deg: float,
    threshold_elevation_m: float,
) -> float:
    """Height of the actual (hyperbolic) path over the threshold [2]_.

    The surface of constant elevation angle around the mast is a cone, so at
    the threshold the path stands ``tan(theta) sqrt(s**2 + D**2)`` above the
    mast's ground.

    Parameters
    ----------
    intercept_elevation_m, setback_m, angle_deg, threshold_elevation_m
        As in :func:`rdh_m`. [m], [deg]
    offset_m : float
        Distance of the lowest antenna from the centre line. [m]

    Returns
    -------
    float
        Height above the threshold. [m]
    """
    slant = math.hypot(setback_m, offset_m)
    return intercept_elevation_m + slant * math.tan(math.radians(angle_deg)) - threshold_elevation_m


def runway_gradient(threshold_elevation_m: float, end_elevation_m: float, length_m: float) -> float:
    """Mean runway gradient, rise per unit length in the landing direction."""
    return (end_elevation_m - threshold_elevation_m) / length_m


def gpip_along_m(rdh: float, angle_deg: float, gradient: float) -> float:
    """Glide path intercept point: where the straight path meets the runway.

    The runway profile is the straight line ``z_thr + g x`` and the path
    ``z_thr + RDH - x tan(theta)``; they meet at ``x = RDH / (tan(theta) + g)``.

    Parameters
    ----------
    rdh : float
        Reference datum height. [m]
    angle_deg : float
        Path angle. [deg]
    gradient : float
        Runway gradient, positive uphill in the landing direction. [m/m]

    Returns
    -------
    float
        Along-runway distance from the threshold. [m]
    """
    denominator = math.tan(math.radians(angle_deg)) + gradient
    if denominator <= 0.0:
        raise ValueError("the runway falls faster than the path; the path never meets it")
    return rdh / denominator


def setback_for_rdh_m(
    target_rdh_m: float,
    intercept_elevation_m: float,
    angle_deg: float,
    threshold_elevation_m: float,
) -> float:
    """Setback that gives a target RDH (the inverse of :func:`rdh_m`).

    Returns
    -------
    float
        ``(RDH + z_thr - z_i) / tan(theta)``. [m]
    """
    return (target_rdh_m + threshold_elevation_m - intercept_elevation_m) / math.tan(math.radians(angle_deg))
