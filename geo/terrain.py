"""The reflecting ground from a DEM: plane fit, slopes, roughness.

The image array forms its path from the wave reflected by the ground in
front of the mast, so the ground that matters is the reflection zone of the
lowest antenna. The zone depends on the antenna height, which depends on the
forward slope of the ground; :func:`analyse_terrain` iterates
heights -> zone -> plane until the heights move less than 1 mm.

Local coordinates at the mast: ``u`` along the runway toward the approach
(from the mast's foot), ``w`` across toward the runway. Forward slope is
positive when the ground rises toward the approach, lateral slope positive
when it rises toward the runway.

References
----------
.. [1] FAA Order 6750.16, Siting Criteria for Instrument Landing Systems
       (reflection plane, forward and lateral slopes, slope-corrected antenna
       heights; memory).
.. [2] Bjorck, A., *Numerical Methods for Least Squares Problems*, SIAM,
       1996, ch. 1 (linear least squares).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from geo.arrays import antenna_heights_m
from geo.errors import TerrainError
from geo.roughness import RoughnessVerdict, roughness_verdicts
from geo.zones import ZoneShape, antenna_zone, path_receivers

__all__ = ["PlaneFit", "TerrainResult", "fit_plane", "analyse_terrain", "fit_zone"]

#: Receivers on the path (at theta) for the zone the plane is fitted in.
_RECEIVERS = 200
#: Rows of the fit zone's polygon: fine, so that its edge follows the ellipses closely.
_FIT_ROWS = 480
_MAX_ITERATIONS = 30
_CONVERGED_M = 1e-3


@dataclass(frozen=True)
class PlaneFit:
    """Least-squares plane ``z = z0 + gu u + gw w`` through ground samples [2]_.

    Attributes
    ----------
    elevation_at_mast_m : float
        ``z0``, the plane at the foot of the mast. [m]
    forward_gradient, lateral_gradient : float
        ``gu`` (rise toward the approach) and ``gw`` (rise toward the runway). [m/m]
    rms_residual_m, max_abs_residual_m : float
        Spread of the samples about the plane. [m]
    samples : int
    """

    elevation_at_mast_m: float
    forward_gradient: float
    lateral_gradient: float
    rms_residual_m: float
    max_abs_residual_m: float
    samples: int


def fit_plane(u_m: np.ndarray, w_m: np.ndarray, z_m: np.ndarray) -> tuple[PlaneFit, np.ndarray]:
    """Fit a plane through points by linear least squares [2]_.

    Returns
    -------
    PlaneFit
    residuals : numpy.ndarray
        ``z - plane`` at each point (positive above the plane: to cut). [m]
    """
    if z_m.size < 3:
        raise TerrainError("terrain: fewer than 3 DEM samples in the reflection zone; use a finer DEM")
    design = np.column_stack([np.ones_like(u_m), u_m, w_m])
    coef, *_ = np.linalg.lstsq(design, z_m, rcond=None)
    residuals = z_m - design @ coef
    fit = PlaneFit(
        float(coef[0]),
        float(coef[1]),
        float(coef[2]),
        float(np.sqrt(np.mean(residuals**2))),
        float(np.max(np.abs(residuals))),
        int(z_m.size),
    )
    return fit, residuals


def fit_zone(
    height_m: float,
    wavelength_m: float,
    angle_deg: float,
    setback_m: float,
    offset_m: float,
    forward_gradient: float,
    lateral_gradient: float,
) -> ZoneShape:
    """The ground the plane is fitted in.

    The lowest antenna's exact first Fresnel zones for receivers on the path (at theta) along
    the course, from the threshold to 10 NM (:mod:`geo.zones`).
    """
    receivers = path_receivers(
        setback_m, offset_m, angle_deg, _RECEIVERS, forward_gradient, lateral_gradient, fractions=(1.0,)
    )
    return antenna_zone(height_m, 0.0, receivers, wavelength_m, rows=_FIT_ROWS)


@dataclass(frozen=True)
class TerrainResult:
    """The reflecting ground of one mast position.

    Attributes
    ----------
    plane : PlaneFit
    forward_slope_deg, lateral_slope_deg : float
        Slopes of the plane. [deg]
    ground_at_mast_m : float
        DEM ground at the foot of the mast (bilinear). [m]
    rpi_elevation_m : float
        Plane extended to the centre line abeam the mast. [m]
    grazing_deg : float
        Path angle over the plane, ``theta - forward slope``. [deg]
    heights_m : list of float
        Slope-corrected antenna heights above the plane. [m]
    zone : ZoneShape
        The lowest antenna's zone used for the fit (:func:`fit_zone`).
    roughness : list of RoughnessVerdict
    iterations : int
    cell_size_m : float
        DEM cell near the site. [m]
    sample_spacing_m : float
        Spacing of the samples in the zone. [m]
    u_m, w_m, residual_m : numpy.ndarray
        The samples in local coordinates and their residuals. [m]
    """

    plane: PlaneFit
    forward_slope_deg: float
    lateral_slope_deg: float
    ground_at_mast_m: float
    rpi_elevation_m: float
    grazing_deg: float
    heights_m: list[float]
    zone: ZoneShape
    roughness: list[RoughnessVerdict]
    iterations: int
    cell_size_m: float
    sample_spacing_m: float
    u_m: np.ndarray
    w_m: np.ndarray
    residual_m: np.ndarray


class _GridSampler:
    """DEM heights on a regular (u, w) grid around the mast, read once and grown on demand."""

    def __init__(self, dem, frame, sign: float, setback_m: float, offset_m: float, spacing_m: float):
        self.dem, self.frame, self.sign = dem, frame, sign
        self.setback_m, self.offset_m, self.spacing = setback_m, offset_m, spacing_m
        self.box = None

    def heights(self, box):
        u0, u1, w0, w1 = box
        if self.box is None or u0 < self.box[0] or u1 > self.box[1] or w0 < self.box[2] or w1 > self.box[3]:
            pad_u, pad_w = 0.25 * (u1 - u0), 0.25 * (w1 - w0)
            sp = self.spacing
            self.box = (
                math.floor((u0 - pad_u) / sp) * sp,
                math.ceil((u1 + pad_u) / sp) * sp,
                math.floor((w0 - pad_w) / sp) * sp,
                math.ceil((w1 + pad_w) / sp) * sp,
            )
            uu = np.arange(self.box[0], self.box[1] + sp / 2, sp)
            ww = np.arange(self.box[2], self.box[3] + sp / 2, sp)
            self.u, self.w = (a.ravel() for a in np.meshgrid(uu, ww))
            along = self.setback_m - self.u
            cross = self.sign * (self.offset_m - self.w)
            self.z = self.dem.sample_frame(self.frame, along, cross)
        return self.u, self.w, self.z


def _missing_error(frame, sign, setback_m, offset_m, u, w, missing) -> TerrainError:
    along = setback_m - u[missing].mean()
    cross = sign * (offset_m - w[missing].mean())
    lat, lon = frame.to_geographic(along, cross)
    return TerrainError(
        f"terrain.dem: {missing.sum()} of {missing.size} samples ({100.0 * missing.mean():.1f} %) of the "
        f"reflection zone are off the DEM or on nodata, centred near lat {lat:.6f}, lon {lon:.6f} "
        f"({along:.0f} m along, {cross:.0f} m across the runway); give a DEM that covers the zone"
    )


def analyse_terrain(
    dem,
    frame,
    side: str,
    setback_m: float,
    offset_m: float,
    array: str,
    wavelength_m: float,
    angle_deg: float,
) -> TerrainResult:
    """Fit the reflecting plane in the lowest antenna's zone, iterating with the heights.

    Parameters
    ----------
    dem : geo.dem.Dem
    frame : geo.frame.RunwayFrame
    side : {"left", "right"}
    setback_m, offset_m : float
        Mast position in the runway frame. [m]
    array : str
        Array type.
    wavelength_m : float
        [m]
    angle_deg : float
        Path angle above the horizontal. [deg]

    Returns
    -------
    TerrainResult

    Raises
    ------
    TerrainError
        When the mast or its zone is off the DEM or on nodata.
    """
    sign = 1.0 if side == "right" else -1.0
    cell = dem.cell_size_m(frame)
    spacing = min(cell, 5.0)
    ground = float(dem.sample_frame(frame, np.array([setback_m]), np.array([sign * offset_m]))[0])
    if not math.isfinite(ground):
        lat, lon = frame.to_geographic(setback_m, sign * offset_m)
        raise TerrainError(
            f"terrain.dem: the mast at lat {lat:.6f}, lon {lon:.6f} is off the DEM or on "
            "nodata; give a DEM that covers the site"
        )
    import shapely

    sampler = _GridSampler(dem, frame, sign, setback_m, offset_m, spacing)
    slope_deg, gu, gw = 0.0, 0.0, 0.0
    heights = antenna_heights_m(array, wavelength_m, angle_deg, slope_deg)
    for iteration in range(1, _MAX_ITERATIONS + 1):  # noqa: B007 (the count is reported)
        zone = fit_zone(heights[0], wavelength_m, angle_deg, setback_m, offset_m, gu, gw)
        u0, w0, u1, w1 = zone.polygon.bounds
        u, w, z = sampler.heights((u0, u1, w0, w1))
        inside = shapely.contains_xy(zone.polygon, u, w)
        missing = inside & ~np.isfinite(z)
        if missing.any():
            raise _missing_error(frame, sign, setback_m, offset_m, u[inside], w[inside], missing[inside])
        plane, residuals = fit_plane(u[inside], w[inside], z[inside])
        gu, gw = plane.forward_gradient, plane.lateral_gradient
        slope_deg = math.degrees(math.atan(gu))
        if slope_deg >= angle_deg - 0.5:
            raise TerrainError(
                f"terrain: the ground in front of the mast rises at {slope_deg:.2f} deg, too "
                f"close to the {angle_deg:g} deg path for an image array; choose another site"
            )
        new_heights = antenna_heights_m(array, wavelength_m, angle_deg, slope_deg)
        moved = max(abs(a - b) for a, b in zip(new_heights, heights))
        heights = new_heights
        if moved < _CONVERGED_M:
            break
    else:
        raise TerrainError("terrain: the reflecting plane did not settle in 30 iterations; check the DEM")
    grazing_deg = angle_deg - slope_deg
    return TerrainResult(
        plane=plane,
        forward_slope_deg=slope_deg,
        lateral_slope_deg=math.degrees(math.atan(plane.lateral_gradient)),
        ground_at_mast_m=ground,
        rpi_elevation_m=plane.elevation_at_mast_m + plane.lateral_gradient * offset_m,
        grazing_deg=grazing_deg,
        heights_m=heights,
        zone=zone,
        roughness=roughness_verdicts(plane.rms_residual_m, wavelength_m, grazing_deg),
        iterations=iteration,
        cell_size_m=cell,
        sample_spacing_m=spacing,
        u_m=u[inside],
        w_m=w[inside],
        residual_m=residuals,
    )
