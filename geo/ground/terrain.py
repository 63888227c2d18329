"""The reflecting ground from a DEM: plane fit, slopes, roughness.

The image array forms its path from the wave reflected by the ground in
front of the mast, so the ground that matters is the reflection zone of the
antennas whose feeds set the path (the union of their zones; for every array
type mastplan knows that is all its antennas: a null-reference path forms where
the upper antenna's SBO null meets the lower's CSB, and that zone reaches
further). The zone depends on the antenna heights, which depend on the
forward slope of the ground: the slope is a fixed point, which
:func:`analyse_terrain` finds by bracketing (:mod:`geo.ground.plane_solve`) with the
DEM sampled on the runway-frame grid of :mod:`geo.ground.zone_grid`, the same grid
and zone rule as the sweep's (:mod:`geo.study.sweep`).

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
from dataclasses import dataclass, field

import numpy as np

from geo.errors import TerrainError
from geo.ground.plane_solve import LOWEST_SLOPE_DEG, STEEP_MARGIN_DEG, solve_forward_slope
from geo.ground.roughness import RoughnessVerdict, roughness_verdicts
from geo.ground.zone_grid import FIT_RECEIVERS, FrameGrid, zone_rows
from geo.radio.arrays import antenna_heights_m, path_setting_antennas
from geo.radio.fresnel import exact_ellipses
from geo.radio.zones import ZoneShape, path_receivers, united_zone

__all__ = ["PlaneFit", "TerrainResult", "fit_plane", "analyse_terrain", "solve_plane", "SolvedPlane", "fit_zone"]

#: Rows of the fit zone's polygon: fine, so that its edge follows the ellipses closely.
_FIT_ROWS = 480


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
    height_m,
    wavelength_m: float,
    angle_deg: float,
    setback_m: float,
    offset_m: float,
    forward_gradient: float,
    lateral_gradient: float,
) -> ZoneShape:
    """The ground the plane is fitted in.

    The exact first Fresnel zones for receivers on the path (at theta) along the course, from the
    threshold to 10 NM (:mod:`geo.radio.zones`), of an antenna at ``height_m`` or, for a sequence of
    heights, the union of those antennas' zones (the antennas that set the path,
    :func:`geo.radio.arrays.path_setting_antennas`).
    """
    receivers = path_receivers(
        setback_m, offset_m, angle_deg, FIT_RECEIVERS, forward_gradient, lateral_gradient, fractions=(1.0,)
    )
    receivers = receivers[receivers[:, 2] > 0.0]  # at or below the plane: no zone (as geo.ground.zone_grid)
    heights = np.atleast_1d(np.asarray(height_m, dtype=float))
    centres, quadratics = zip(*(exact_ellipses([0.0, 0.0, h], receivers, wavelength_m) for h in heights))
    return united_zone(np.concatenate(centres), np.concatenate(quadratics), rows=_FIT_ROWS, blocks=heights.size)


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
        The fit zone: the union of the zones of the antennas that set the path (:func:`fit_zone`).
    roughness : list of RoughnessVerdict
    iterations : int
        Evaluations of the plane by the solve (the same as ``evaluations``).
    cell_size_m : float
        DEM cell near the site. [m]
    sample_spacing_m : float
        Spacing of the samples in the zone. [m]
    u_m, w_m, residual_m : numpy.ndarray
        The samples in local coordinates and their residuals. [m]
    solve_status : str
        ``"settled"`` (a fixed point: heights for the zone and for the plane agree within 0.1 mm),
        ``"bracket"`` (no fixed point: the solve stopped on the narrowest bracket of a jump) or
        ``"budget"`` (stopped on a bracket at the evaluation budget); see :mod:`geo.ground.plane_solve`.
    zone_slope_deg : float
        Trial slope whose heights the zone was taken for (the plane's own slope when settled). [deg]
    zone_heights_m : list of float
        Heights for ``zone_slope_deg``. [m]
    slope_bracket_deg : tuple of float
        Trial slopes at the two ends of the last bracket (equal when settled). [deg]
    bracket_plane_slopes_deg : tuple of float
        Forward slopes of the planes fitted at those ends. [deg]
    height_spread_mm : float
        How far the antenna heights for the two ends' planes differ, largest over the antennas
        (settled: between the zone's heights and the plane's). [mm]
    evaluations : int
        Evaluations of the plane in the zone, all passes.
    lateral_passes : int
        Solves with the zone's lateral gradient updated.
    zone_lateral_gradient : float
        Lateral gradient the zone's receivers were measured from (the plane's, within 1e-5, unless
        three passes did not settle it). [m/m]
    fit_antennas : tuple of int
        Antennas (lowest first, by index) whose zones are united into the fit zone: those that set
        the path (:func:`geo.radio.arrays.path_setting_antennas`).
    lowest_zone_forward_slope_deg : float
        Forward slope of the plane fitted in the lowest antenna's zone alone (the former choice),
        at the same zone slope, for comparison. [deg]
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
    solve_status: str = "settled"
    zone_slope_deg: float = 0.0
    zone_heights_m: list[float] = field(default_factory=list)
    slope_bracket_deg: tuple[float, float] = (0.0, 0.0)
    bracket_plane_slopes_deg: tuple[float, float] = (0.0, 0.0)
    height_spread_mm: float = 0.0
    evaluations: int = 0
    lateral_passes: int = 0
    zone_lateral_gradient: float = 0.0
    fit_antennas: tuple[int, ...] = (0,)
    lowest_zone_forward_slope_deg: float = math.nan


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
    """Fit the reflecting plane in the zone of the antennas that set the path, its slope solved with the heights.

    Parameters
    ----------
    dem : geo.ground.dem.Dem
    frame : geo.airfield.frame.RunwayFrame
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
        :func:`solve_plane`, then :meth:`SolvedPlane.result`.

    Raises
    ------
    TerrainError
        When the mast or its zone is off the DEM or on nodata, or the ground rises to within
        0.5 deg of the path angle. Real ground never ends in an error of the solve: where no
        fixed point exists the result reports the bracket and the heights' spread.
    """
    return solve_plane(dem, frame, side, setback_m, offset_m, array, wavelength_m, angle_deg).result()


def solve_plane(
    dem,
    frame,
    side: str,
    setback_m: float,
    offset_m: float,
    array: str,
    wavelength_m: float,
    angle_deg: float,
) -> SolvedPlane:
    """The reflecting plane of one mast position, its slope solved with the heights; the report's figures later.

    What a search over setbacks needs of each trial (the plane and its intercept on the centre
    line); :meth:`SolvedPlane.result` adds the fit zone, the lowest antenna's plane and the
    roughness for the position kept. Parameters and errors: :func:`analyse_terrain`.
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
    planes = _ZonePlanes(FrameGrid(dem, frame, spacing), sign, setback_m, offset_m, array, wavelength_m, angle_deg)
    solve = solve_forward_slope(planes, array, wavelength_m, angle_deg, 1)
    status = str(solve.status[0])
    if status in ("steep", "falls"):
        raise _slope_error(status, float(solve.plane_slope_deg[0]), angle_deg)
    if status == "no-plane":
        planes.raise_for_samples(frame)
    zone_slope, zone_gw = float(solve.slope_deg[0]), float(solve.lateral_gradient[0])
    u, w, z, rows = planes.samples(zone_slope, zone_gw)
    missing = ~np.isfinite(z)
    if missing.any():
        raise _missing_error(frame, sign, setback_m, offset_m, u, w, missing)
    plane, residuals = fit_plane(u, w, z)
    slope_deg = math.degrees(math.atan(plane.forward_gradient))
    if slope_deg >= angle_deg - STEEP_MARGIN_DEG:
        raise _slope_error("steep", slope_deg, angle_deg)
    return SolvedPlane(
        plane=plane,
        residuals_m=residuals,
        slope_deg=slope_deg,
        ground_at_mast_m=ground,
        rpi_elevation_m=plane.elevation_at_mast_m + plane.lateral_gradient * offset_m,
        planes=planes,
        solve=solve,
        status=status,
        zone_slope_deg=zone_slope,
        zone_lateral_gradient=zone_gw,
        u_m=u,
        w_m=w,
        cell_size_m=cell,
        sample_spacing_m=spacing,
        array=array,
        wavelength_m=wavelength_m,
        angle_deg=angle_deg,
        setback_m=setback_m,
        offset_m=offset_m,
    )


@dataclass(frozen=True)
class SolvedPlane:
    """The plane solved at one mast position (:func:`solve_plane`), before the report's figures.

    Attributes
    ----------
    plane : PlaneFit
    rpi_elevation_m : float
        Plane extended to the centre line abeam the mast. [m]

    The other attributes are the solve's workings, kept for :meth:`result` (as in
    :class:`TerrainResult`).
    """

    plane: PlaneFit
    residuals_m: np.ndarray
    slope_deg: float
    ground_at_mast_m: float
    rpi_elevation_m: float
    planes: object
    solve: object
    status: str
    zone_slope_deg: float
    zone_lateral_gradient: float
    u_m: np.ndarray
    w_m: np.ndarray
    cell_size_m: float
    sample_spacing_m: float
    array: str
    wavelength_m: float
    angle_deg: float
    setback_m: float
    offset_m: float

    def result(self) -> TerrainResult:
        """The full result: heights, the fit zone, the lowest antenna's plane, roughness."""
        plane, slope_deg, solve, zone_slope, zone_gw = (
            self.plane,
            self.slope_deg,
            self.solve,
            self.zone_slope_deg,
            self.zone_lateral_gradient,
        )
        array, wavelength_m, angle_deg = self.array, self.wavelength_m, self.angle_deg
        heights = antenna_heights_m(array, wavelength_m, angle_deg, slope_deg)
        zone_heights = antenna_heights_m(array, wavelength_m, angle_deg, zone_slope)
        antennas = path_setting_antennas(array)
        zone = fit_zone(
            np.take(zone_heights, antennas),
            wavelength_m,
            angle_deg,
            self.setback_m,
            self.offset_m,
            math.tan(math.radians(zone_slope)),
            zone_gw,
        )
        # The plane of the lowest antenna's zone alone (the former choice), for the report.
        lu, lw, lz, _ = self.planes.samples(zone_slope, zone_gw, antennas=(0,))
        ok = np.isfinite(lz)
        lowest_slope_deg = (
            math.degrees(math.atan(fit_plane(lu[ok], lw[ok], lz[ok])[0].forward_gradient))
            if ok.sum() >= 3
            else math.nan
        )
        grazing_deg = angle_deg - slope_deg
        return TerrainResult(
            plane=plane,
            forward_slope_deg=slope_deg,
            lateral_slope_deg=math.degrees(math.atan(plane.lateral_gradient)),
            ground_at_mast_m=self.ground_at_mast_m,
            rpi_elevation_m=self.rpi_elevation_m,
            grazing_deg=grazing_deg,
            heights_m=heights,
            zone=zone,
            roughness=roughness_verdicts(plane.rms_residual_m, wavelength_m, grazing_deg),
            iterations=int(solve.evaluations[0]),
            cell_size_m=self.cell_size_m,
            sample_spacing_m=self.sample_spacing_m,
            u_m=self.u_m,
            w_m=self.w_m,
            residual_m=self.residuals_m,
            solve_status=self.status,
            zone_slope_deg=zone_slope,
            zone_heights_m=zone_heights,
            slope_bracket_deg=(float(solve.bracket_deg[0, 0]), float(solve.bracket_deg[0, 1])),
            bracket_plane_slopes_deg=(
                float(solve.bracket_plane_slope_deg[0, 0]),
                float(solve.bracket_plane_slope_deg[0, 1]),
            ),
            height_spread_mm=1000.0 * float(solve.spread_m[0]),
            evaluations=int(solve.evaluations[0]),
            lateral_passes=int(solve.passes[0]),
            zone_lateral_gradient=zone_gw,
            fit_antennas=tuple(antennas),
            lowest_zone_forward_slope_deg=lowest_slope_deg,
        )


def _slope_error(status: str, slope_deg: float, angle_deg: float) -> TerrainError:
    if status == "falls":
        return TerrainError(
            f"terrain: the ground in front of the mast falls more than {-LOWEST_SLOPE_DEG:g} deg toward the "
            "approach, too steep for a reflecting plane; choose another site"
        )
    return TerrainError(
        f"terrain: the ground in front of the mast rises at {slope_deg:.2f} deg, too "
        f"close to the {angle_deg:g} deg path for an image array; choose another site"
    )


class _ZonePlanes:
    """``g`` of one mast for :func:`geo.ground.plane_solve.solve_forward_slope`.

    The plane fitted to the grid samples in the zone of the heights for a trial slope (samples off
    the DEM left out; the answer's zone must have none).
    """

    def __init__(self, grid: FrameGrid, sign, setback_m, offset_m, array, wavelength_m, angle_deg):
        self.grid, self.sign, self.setback, self.offset = grid, sign, setback_m, offset_m
        self.array, self.lam, self.angle = array, wavelength_m, angle_deg
        self.last = None

    def samples(self, slope_deg: float, lateral_gradient: float, antennas=None):
        """(u, w, z, zone rows) of the grid samples in the zone for a trial slope. [m]

        ``antennas``: indices of the antennas whose zones are united (default: those that set the path).
        """
        antennas = path_setting_antennas(self.array) if antennas is None else antennas
        height = np.take(antenna_heights_m(self.array, self.lam, self.angle, slope_deg), antennas)
        gu = math.tan(math.radians(slope_deg))
        sp = self.grid.sp
        zone = zone_rows(height, self.setback, self.offset, self.sign, self.angle, self.lam, gu, lateral_gradient, sp)
        self.grid.cover(*zone.bounds())
        rows, cols = self.grid.cells(zone)
        z = self.grid.heights(rows, cols)
        u = self.setback - sp * cols
        w = np.repeat(zone.w_m[0], zone.lengths[0])
        self.last = (u, w, z)
        return u, w, z, zone

    def __call__(self, slope_deg, lateral_gradient, index):
        u, w, z, _ = self.samples(float(slope_deg[0]), float(lateral_gradient[0]))
        ok = np.isfinite(z)
        if np.count_nonzero(ok) < 3:
            return np.array([np.nan]), np.array([np.nan])
        plane, _ = fit_plane(u[ok], w[ok], z[ok])
        return np.array([plane.forward_gradient]), np.array([plane.lateral_gradient])

    def raise_for_samples(self, frame):
        """The error of a zone without a plane: samples off the DEM, or too few."""
        u, w, z = self.last
        missing = ~np.isfinite(z)
        if missing.any():
            raise _missing_error(frame, self.sign, self.setback, self.offset, u, w, missing)
        raise TerrainError("terrain: fewer than 3 DEM samples in the reflection zone; use a finer DEM")
