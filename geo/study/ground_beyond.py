"""The ground along the approach beyond the surface prediction's integration area, against the plane.

The surface prediction (:mod:`geo.optics.surface_prediction`) integrates the ground in a box in
front of the mast and counts the ground beyond it as the reflecting plane (its difference method,
``E_image(plane) + [PO(surface) - PO(plane)]``). Where the real ground beyond departs from that plane
by more than the Rayleigh criterion at the path's grazing angle, the prediction may miss what it
reflects. :func:`ground_beyond_area` samples the ground on lines from the mast's line to the centre
line (the band the specular points of receivers on the course lie in), from the area's far edge to
10 NM before the threshold or where the DEM stops, and gives the largest departure from the plane
and where it is; :func:`ground_beyond_finding` says it.

Frame: that of :mod:`geo.radio.prediction`, ``u`` from the mast's foot toward the approach, ``w``
toward the runway, ``Z`` from the plane's elevation at the foot; the plane is
``Z = gu u + gw w`` (:class:`geo.ground.terrain.PlaneFit`).

References
----------
.. [1] Beckmann, P. and Spizzichino, A., *The Scattering of Electromagnetic Waves from Rough
       Surfaces*, Pergamon, 1963, ch. 1 (Rayleigh criterion: height departures below
       lambda / (8 sin psi) leave the reflection specular).
.. [2] ICAO Annex 10, Volume I, 3.1.5.3.1: coverage to at least 10 NM (seen in quotation).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from geo.study.findings import Finding
from geo.units import format_length

__all__ = ["GroundBeyond", "ground_beyond_area", "ground_beyond_for_study", "ground_beyond_finding"]

#: How far before the threshold the ground is sampled: the coverage limit [2]_. [m]
REACH_M = 10 * 1852.0
#: Lines sampled between the mast's line (w = 0) and the centre line (w = offset).
LINES = 5
#: Smallest spacing of the samples along each line. [m]
MIN_STEP_M = 5.0


@dataclass(frozen=True)
class GroundBeyond:
    """The ground beyond the integration area against the reflecting plane.

    Attributes
    ----------
    from_u_m, to_u_m : float
        Sampled from the area's far edge to here (the last sample on the DEM). [m]
    reach_u_m : float
        Where the samples were meant to reach (10 NM before the threshold). [m]
    setback_m, offset_m : float
        The mast's position, to say where a point is. [m]
    limit_m : float
        Rayleigh criterion at the path's grazing angle [1]_. [m]
    grazing_deg : float
        [deg]
    largest_m : float
        Largest departure from the plane (signed: positive above). NaN without samples. [m]
    largest_u_m, largest_w_m : float
        Where. [m]
    first_beyond_u_m : float or None
        Nearest ``u`` where a departure exceeds the limit. [m]
    samples : int
        Samples on the DEM.
    """

    from_u_m: float
    to_u_m: float
    reach_u_m: float
    setback_m: float
    offset_m: float
    limit_m: float
    grazing_deg: float
    largest_m: float
    largest_u_m: float
    largest_w_m: float
    first_beyond_u_m: float | None
    samples: int

    @property
    def beyond_limit(self) -> bool:
        """Whether the largest departure exceeds the limit."""
        return bool(math.isfinite(self.largest_m) and abs(self.largest_m) > self.limit_m)


def ground_beyond_area(
    heights, area_m, setback_m, offset_m, forward_gradient, lateral_gradient, wavelength_m, grazing_deg, step_m
) -> GroundBeyond:
    """The largest departure of the ground from the plane beyond the area's far edge [1]_.

    Parameters
    ----------
    heights : callable
        ``heights(u, w) -> Z`` of the ground in the prediction's frame, NaN off the DEM. [m]
    area_m : tuple of float
        ``(u0, u1, w0, w1)`` of the integration area (:attr:`SurfacePrediction.area_m`). [m]
    setback_m, offset_m : float
        The mast's position. [m]
    forward_gradient, lateral_gradient : float
        The plane's ``gu`` and ``gw``. [m/m]
    wavelength_m : float
        [m]
    grazing_deg : float
        Grazing angle of the path over the plane (theta minus the forward slope). [deg]
    step_m : float
        Spacing of the samples along each line (at least :data:`MIN_STEP_M`). [m]

    Returns
    -------
    GroundBeyond
    """
    u_start = float(area_m[1])
    reach = setback_m + REACH_M
    step = max(float(step_m), MIN_STEP_M)
    u = np.arange(u_start, reach + step / 2, step) if reach > u_start else np.array([u_start])
    w = np.linspace(0.0, offset_m, LINES)
    gu, gw = np.meshgrid(u, w)
    ground = np.asarray(heights(gu.ravel(), gw.ravel()), float).reshape(gu.shape)
    departure = ground - (forward_gradient * gu + lateral_gradient * gw)
    limit = wavelength_m / (8.0 * math.sin(math.radians(grazing_deg)))  # Rayleigh [1]
    valid = np.isfinite(departure)
    if not valid.any():
        return GroundBeyond(
            u_start, u_start, reach, setback_m, offset_m, limit, grazing_deg, math.nan, math.nan, math.nan, None, 0
        )
    size = np.where(valid, np.abs(departure), -1.0)
    j, i = np.unravel_index(int(np.argmax(size)), size.shape)
    over = np.flatnonzero(np.any(valid & (size > limit), axis=0))
    return GroundBeyond(
        u_start,
        float(u[np.flatnonzero(valid.any(axis=0))[-1]]),
        reach,
        setback_m,
        offset_m,
        limit,
        grazing_deg,
        float(departure[j, i]),
        float(u[i]),
        float(w[j]),
        float(u[over[0]]) if over.size else None,
        int(valid.sum()),
    )


def ground_beyond_for_study(spec, runway, side, setback_m, offset_m, terrain, area_m, wavelength_m) -> GroundBeyond:
    """:func:`ground_beyond_area` on the study's DEM (its tiles and vertical datum, as the study opens it).

    Parameters
    ----------
    spec : geo.site.site_file.SiteSpec
    runway : geo.study.site_study.Runway
    side : {"left", "right"}
    setback_m, offset_m : float
        [m]
    terrain : geo.ground.terrain.TerrainResult
    area_m : tuple of float
        The integration area. [m]
    wavelength_m : float
        [m]
    """
    from geo.ground.dem import Dem

    plane = terrain.plane
    sign = 1.0 if side == "right" else -1.0
    with Dem.open(spec.terrain) as dem:

        def heights(u, w):
            along = setback_m - np.asarray(u, float)
            cross = sign * (offset_m - np.asarray(w, float))
            return dem.sample_frame(runway.frame, along, cross) - plane.elevation_at_mast_m

        return ground_beyond_area(
            heights, area_m, setback_m, offset_m, plane.forward_gradient, plane.lateral_gradient, wavelength_m,
            terrain.grazing_deg, terrain.cell_size_m,
        )  # fmt: skip


def ground_beyond_finding(beyond: GroundBeyond, unit: str = "m") -> Finding:
    """Info, or a warning where the ground beyond the area departs from the plane beyond the Rayleigh limit."""
    before = beyond.from_u_m - beyond.setback_m
    span = (
        f"from the integration area's far edge ({format_length(before, unit, 0)} before the threshold) to "
        f"{format_length(beyond.to_u_m - beyond.setback_m, unit, 0)} before it"
    )
    short = (
        f" (the DEM stops short of 10 NM, {format_length(beyond.reach_u_m - beyond.setback_m, unit, 0)})"
        if beyond.to_u_m < beyond.reach_u_m - 1.0
        else ""
    )
    rule = (
        f"the Rayleigh limit lambda / (8 sin psi) = {format_length(beyond.limit_m, unit)} at the path's grazing "
        f"angle {beyond.grazing_deg:.2f} deg (Beckmann and Spizzichino 1963)"
    )
    why = "The surface prediction counts the ground beyond its integration area as the reflecting plane"
    if beyond.samples == 0:
        return Finding(
            "surface-ground-beyond",
            "info",
            f"{why}; the DEM has no ground beyond the area along the approach to compare with it.",
        )
    where = (
        f"{format_length(beyond.largest_u_m - beyond.setback_m, unit, 0)} before the threshold, "
        f"{format_length(beyond.offset_m - beyond.largest_w_m, unit, 0)} from the centre line toward the mast"
    )
    largest = f"{format_length(beyond.largest_m, unit, signed=True)} ({where})"
    if not beyond.beyond_limit:
        return Finding(
            "surface-ground-beyond",
            "info",
            f"{why}; sampled {span}{short}, between the mast's line and the centre line, the ground departs from "
            f"that plane by at most {largest}, within {rule}.",
        )
    first = format_length(beyond.first_beyond_u_m - beyond.setback_m, unit, 0)
    return Finding(
        "surface-ground-beyond",
        "warning",
        f"{why}, but sampled {span}{short}, between the mast's line and the centre line, the ground departs from "
        f"that plane by up to {largest}, beyond {rule}, first {first} before the threshold: the predicted path "
        "may miss what that ground reflects (a prediction, confirmed only by flight inspection).",
    )
