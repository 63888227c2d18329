"""One site study: validated inputs in, every result out.

:func:`run_study` places the mast in the runway frame, works out the channel,
the antenna heights and proximity shifts, the RDH, the actual path over the
threshold and the GPIP, and checks them. The result is one plain object that
the writers in :mod:`geo.outputs` read; nothing here writes a file.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from geo.airfield.frame import RunwayFrame, geodesic_inverse
from geo.airfield.path import (
    gpip_along_m,
    path_height_over_threshold_m,
    rdh_m,
    runway_gradient,
    setback_for_rdh_m,
)
from geo.airfield.protected import ZoneCover, zone_cover
from geo.airfield.surfaces import MastClearance, mast_clearance
from geo.errors import SiteFileError
from geo.ground.profile import PROFILE_RANGE_M, ApproachProfile, approach_profile
from geo.ground.roughness import ReceiverFamily, roughness_by_family
from geo.ground.terrain import TerrainResult, solve_plane
from geo.ground.tile_agreement import measure_tiles
from geo.optics.surface_prediction import SurfacePrediction
from geo.radio.arrays import antenna_heights_m, array_type, proximity_shifts_m
from geo.radio.below_path import BelowPathCheck, check_below_path
from geo.radio.clearance import CaptureEffectAssessment, assess_capture_effect
from geo.radio.prediction import PathPrediction, far_field_ddm, predict_path
from geo.radio.zones import ReflectionZone, reflection_zones
from geo.site.channels import Channel, channel_for_glide_path, channel_for_localizer, wavelength_m
from geo.site.named_errors import naming_site_file
from geo.site.site_file import SiteSpec
from geo.study import findings as checks
from geo.study.array_setup import array_model
from geo.study.dem_checks import check_dem_covers_site, check_runway_fall, dem_extent_in_errors, height_keys
from geo.study.designator import RunwayMagnetic, runway_magnetic
from geo.study.ground_beyond import GroundBeyond
from geo.study.surface_sector import SurfaceSector
from geo.study.tile_checks import tile_findings
from geo.units import format_length

__all__ = ["Antenna", "Runway", "Mast", "Gpip", "TerrainSource", "StudyResult", "run_study"]

_SIGN = {"right": 1.0, "left": -1.0}
#: Largest mean runway gradient accepted; Annex 14 allows 1-2 % (memory), beyond 5 % is a typing slip.
_MAX_GRADIENT = 0.05


@dataclass(frozen=True)
class Runway:
    """Runway geometry.

    Attributes
    ----------
    frame : RunwayFrame
        Plane coordinates along and across the runway.
    true_bearing_deg : float
        Geodesic azimuth from threshold to end at the threshold. [deg]
    length_m : float
        Geodesic length from threshold to end. [m]
    width_m : float
        Width. [m]
    gradient : float
        Mean gradient, positive uphill in the landing direction. [m/m]
    """

    frame: RunwayFrame
    true_bearing_deg: float
    length_m: float
    width_m: float
    gradient: float


@dataclass(frozen=True)
class Mast:
    """Where the mast stands (its lowest antenna) and its ground.

    Attributes
    ----------
    side : {"left", "right"}
        As seen by a pilot on approach.
    setback_m, offset_m : float
        Along from the threshold; across from the centre line. [m]
    base_elevation_m : float
        Ground elevation at the mast. [m]
    base_elevation_source : str
        ``"DEM"``, ``"site file"`` or ``"threshold elevation"``.
    setback_source : str
        ``"site file"``, ``"surveyed position"`` or ``"solved for target RDH"``.
    lat_deg, lon_deg : float
        WGS 84 position. [deg]
    plane_elevation_m : float
        Reflecting plane at the mast (the ground itself on flat terrain). [m]
    site_file_base_elevation_m : float or None
        ``base_elevation`` as the site file gave it. [m]
    """

    side: str
    setback_m: float
    offset_m: float
    base_elevation_m: float
    base_elevation_source: str
    setback_source: str
    lat_deg: float
    lon_deg: float
    plane_elevation_m: float
    site_file_base_elevation_m: float | None = None


@dataclass(frozen=True)
class Antenna:
    """One antenna of the array.

    Attributes
    ----------
    role : str
        ``"lower"``, ``"middle"`` or ``"upper"``.
    height_m : float
        Height above the reflecting plane at the mast (the ground on flat terrain). [m]
    shift_toward_runway_m : float
        Proximity shift toward the centre line. [m]
    offset_m : float
        Resulting distance from the centre line. [m]
    elevation_m : float
        Height above the vertical datum. [m]
    lat_deg, lon_deg : float
        WGS 84 position. [deg]
    """

    role: str
    height_m: float
    shift_toward_runway_m: float
    offset_m: float
    elevation_m: float
    lat_deg: float
    lon_deg: float


@dataclass(frozen=True)
class Gpip:
    """Glide path intercept point on the runway profile.

    Attributes
    ----------
    along_m : float
        Distance from the threshold in the landing direction. [m]
    elevation_m : float
        Runway profile elevation there. [m]
    lat_deg, lon_deg : float
        WGS 84 position on the centre line. [deg]
    """

    along_m: float
    elevation_m: float
    lat_deg: float
    lon_deg: float


@dataclass(frozen=True, kw_only=True)
class StudyResult:
    """Everything one site study computes (built by keyword: there are many fields).

    Attributes
    ----------
    spec : SiteSpec
        The inputs.
    channel : Channel
        Glide path frequency and localizer pair. [MHz]
    wavelength_m : float
        Carrier wavelength. [m]
    runway : Runway
    mast : Mast
    antennas : list of Antenna
        Lowest first.
    rdh_m : float
        Reference datum height. [m]
    path_height_over_threshold_m : float
        Actual (hyperbolic) path over the threshold. [m]
    gpip : Gpip
    findings : list of Finding
    intercept_elevation_m : float
        Where the straight path meets the ground abeam the mast (the RPI). [m]
    terrain : TerrainResult or None
    profile : ApproachProfile or None
    terrain_source : TerrainSource or None
    zones : list of ReflectionZone
        Path and coverage zones per antenna and for all antennas.
    zone_covers : list of ZoneCover
        The part of each kind's zone outside the site file's protected areas (empty without them).
    prediction, prediction_no_shift : PathPrediction or None
        The predicted path with the proximity shifts, and with the antennas unshifted.
    feeds : tuple
        (CSB feeds, SBO feeds, source) used for the prediction.
    mast_clearance : MastClearance
        Top of the mast against the Annex 14 surfaces.
    below_path : BelowPathCheck or None
        The course DDM below the path (Annex 10 Vol I 3.1.5.6.5, from memory; :mod:`geo.radio.below_path`).
    capture_effect : CaptureEffectAssessment or None
        Capture-effect arrays: the course with its clearance transmitter (:mod:`geo.radio.clearance`).
    roughness_families : list of ReceiverFamily or None
        Roughness per receiver family with its own grazing angle (with a DEM; :mod:`geo.ground.roughness`).
    surface : SurfacePrediction or None
        The path over the DEM surface by physical optics (None without a DEM).
    surface_sector : SurfaceSector or None
        That path's angle, half-sectors, asymmetry and RDH against the Annex 10 limits, with margins
        (:mod:`geo.study.surface_sector`; None without a surface prediction).
    ground_beyond : GroundBeyond or None
        The ground along the approach beyond the surface prediction's integration area against the
        plane it is counted as (:mod:`geo.study.ground_beyond`; None without a surface prediction).
    magnetic : RunwayMagnetic or None
        The landing direction's magnetic bearing and variation (:mod:`geo.study.designator`; None
        without ``runway.designator`` and ``runway.magnetic_date``).
    conditions : tuple of geo.study.conditions.ConditionPrediction
        The path under each condition of ``[conditions]`` (:mod:`geo.study.conditions`; empty without).
    buildings : geo.study.buildings.BuildingsResult or None
        The path with and without the site file's buildings (None without ``[[building]]``).
    """

    spec: SiteSpec
    channel: Channel
    wavelength_m: float
    runway: Runway
    mast: Mast
    antennas: list[Antenna]
    rdh_m: float
    path_height_over_threshold_m: float
    gpip: Gpip
    findings: list[checks.Finding] = field(default_factory=list)
    intercept_elevation_m: float = 0.0
    terrain: TerrainResult | None = None
    profile: ApproachProfile | None = None
    terrain_source: TerrainSource | None = None
    zones: list[ReflectionZone] = field(default_factory=list)
    zone_covers: list[ZoneCover] = field(default_factory=list)
    prediction: PathPrediction | None = None
    prediction_no_shift: PathPrediction | None = None
    feeds: tuple = ()
    mast_clearance: MastClearance | None = None
    below_path: BelowPathCheck | None = None
    capture_effect: CaptureEffectAssessment | None = None
    roughness_families: list[ReceiverFamily] | None = None
    surface: SurfacePrediction | None = None
    surface_sector: SurfaceSector | None = None
    ground_beyond: GroundBeyond | None = None
    magnetic: RunwayMagnetic | None = None
    conditions: tuple = ()
    buildings: object = None


def channel_of(spec: SiteSpec) -> Channel:
    """The glide path channel a site file asks for."""
    if spec.localizer_mhz is not None:
        return channel_for_localizer(spec.localizer_mhz)
    return channel_for_glide_path(spec.frequency_mhz)


def runway_of(spec: SiteSpec) -> Runway:
    """Runway geometry from the threshold and end."""
    thr, end = spec.threshold, spec.end
    bearing_deg, length_m = geodesic_inverse(thr.lat_deg, thr.lon_deg, end.lat_deg, end.lon_deg)
    if length_m < 100.0:
        raise SiteFileError(
            "runway.end", f"is only {format_length(length_m, spec.units, 1)} from the threshold; check both positions"
        )
    if length_m > 20_000.0:
        raise SiteFileError(
            "runway.end", f"is {format_length(length_m, spec.units, 0)} from the threshold; check both positions"
        )
    frame = RunwayFrame(thr.lat_deg, thr.lon_deg, end.lat_deg, end.lon_deg)
    gradient = runway_gradient(thr.elevation_m, end.elevation_m, length_m)
    if abs(gradient) > _MAX_GRADIENT:
        raise SiteFileError(
            "runway.end.elevation",
            f"gives a mean runway gradient of {100 * gradient:+.1f} % "
            f"(threshold {format_length(thr.elevation_m, spec.units, 1)}, "
            f"end {format_length(end.elevation_m, spec.units, 1)}); runways slope at most a few "
            "per cent: check both elevations and the units",
        )
    return Runway(frame, bearing_deg, length_m, spec.width_m, gradient)


@dataclass(frozen=True)
class TerrainSource:
    """What the study knows of its DEM.

    Attributes
    ----------
    dem_name : str
        File name of the DEM.
    vertical_unit_source : str
        Where the height unit came from.
    vertical_datum : str or None
        The raster's vertical datum, when it states one.
    vertical_offset_m : float
        Offset added to DEM heights. [m]
    datum_conversion : DatumConversion or None
        How DEM heights were moved into the site file's vertical datum.
    datum_shift_at_mast_m : float
        Size of that conversion at the mast (0 without one). [m]
    cells_in_zone : int or None
        DEM cell centres inside the zone the plane is fitted in.
    dem_threshold_m : float or None
        The DEM at the threshold (site's datum). [m]
    crs : str
        The rasters' CRS, each once (``EPSG:code (name)``).
    tile_agreement : geo.ground.tile_agreement.TileAgreement or None
        Overlap disagreement and seam steps of the tiles over the part of the DEM the study
        read (None for one raster).
    """

    dem_name: str
    vertical_unit_source: str
    vertical_datum: str | None
    vertical_offset_m: float
    datum_conversion: object = None
    datum_shift_at_mast_m: float = 0.0
    cells_in_zone: int | None = None
    dem_threshold_m: float | None = None
    crs: str = ""
    tile_agreement: object = None


def _placement(spec: SiteSpec, runway: Runway) -> tuple[str, float | None, float, str, str]:
    """Side, setback (None: to be solved), offset, the field that set the setback, its source."""
    mast = spec.mast
    if mast.position is not None:
        along, cross = runway.frame.to_plane(mast.position.lat_deg, mast.position.lon_deg)
        offset = abs(cross)
        if offset <= runway.width_m / 2.0:
            raise SiteFileError(
                "mast.position",
                f"is {format_length(offset, spec.units, 1)} from the centre line, on the runway "
                f"(half-width {format_length(runway.width_m / 2.0, spec.units, 1)}); check the position",
            )
        return ("right" if cross > 0 else "left"), along, offset, "mast.position", "surveyed position"
    if mast.setback_m is not None:
        return mast.side, mast.setback_m, mast.offset_m, "mast.setback", "site file"
    return mast.side, None, mast.offset_m, "glide_path.target_rdh", "solved for target RDH"


def _check_setback(setback_m: float, field_name: str, runway: Runway, unit: str = "m") -> None:
    if not 0.0 < setback_m < runway.length_m:
        raise SiteFileError(
            field_name,
            f"puts the mast {format_length(setback_m, unit, 1)} along the runway, outside the "
            f"{format_length(runway.length_m, unit, 1)} between threshold and end; the mast must stand "
            "beside the runway past the threshold",
        )


def _solve_on_terrain(spec, runway, dem, side, setback, offset, lam, field_name, solve):
    """Terrain analysis at the mast; with ``solve``, the setback whose RDH meets the target.

    The RDH rises with the setback (``tan(theta)`` per metre, plus the plane's change) but jumps
    where DEM samples cross the zone's edge, so the setback is bracketed, then refined by regula
    falsi with the Illinois modification and bisection (as :mod:`geo.ground.plane_solve`). It stops when
    the RDH is within 0.5 mm of the target, or on a bracket narrower than 1 mm (a jump: the end
    whose RDH is nearer the target is kept), or after 40 analyses (the nearest seen). Returns the
    setback and its :class:`geo.ground.terrain.SolvedPlane` (``.result()``: the report's figures).
    """
    thr = spec.threshold.elevation_m

    def analyse(x):
        _check_setback(x, field_name, runway, spec.units)
        ground = solve_plane(dem, runway.frame, side, x, offset, spec.array, lam, spec.angle_deg)
        if not solve:
            return [x, 0.0, ground]
        return [x, rdh_m(ground.rpi_elevation_m, x, spec.angle_deg, thr) - spec.target_rdh_m, ground]

    point = analyse(setback)
    if not solve:
        return setback, point[2]
    nearest = point
    below = above = None  # points with the RDH under and over the target
    kept = 0  # end kept last time: -1 below, +1 above (Illinois)
    width_before = math.inf
    last = None
    for _ in range(40):
        if abs(point[1]) < abs(nearest[1]):
            nearest = point
        if abs(point[1]) <= 5e-4:
            return point[0], point[2]
        if point[1] < 0:
            if kept == 1:
                above = [above[0], 0.5 * above[1], above[2]]
            below, kept = point, (1 if above is not None else 0)
        else:
            if kept == -1:
                below = [below[0], 0.5 * below[1], below[2]]
            above, kept = point, (-1 if below is not None else 0)
        if below is None or above is None:  # not bracketed yet: a secant step, else the step for a level plane
            x = setback_for_rdh_m(spec.target_rdh_m, point[2].rpi_elevation_m, spec.angle_deg, thr)
            if last is not None and last[1] != point[1]:
                secant = point[0] - point[1] * (point[0] - last[0]) / (point[1] - last[1])
                if (secant - point[0]) * (x - point[0]) > 0:  # the same way as the level-plane step
                    x = secant
        else:
            width = abs(above[0] - below[0])
            if width < 1e-3:
                return nearest[0], nearest[2]
            x = above[0] - above[1] * (above[0] - below[0]) / (above[1] - below[1])
            if width > 0.5 * width_before or not min(below[0], above[0]) < x < max(below[0], above[0]):
                x = 0.5 * (below[0] + above[0])
            width_before = width
        last, point = point, analyse(x)
    return nearest[0], nearest[2]


@dataclass(frozen=True)
class _Ground:
    """Where the terrain step left the mast: its setback, the ground under it and the antenna heights."""

    setback_m: float
    base_m: float
    base_source: str
    heights_m: list[float]
    plane_m: float
    intercept_m: float
    terrain: TerrainResult | None = None
    profile: ApproachProfile | None = None
    source: TerrainSource | None = None
    dem_finding: checks.Finding | None = None
    tile_findings: tuple = ()


@naming_site_file
def run_study(spec: SiteSpec, before_surface=None, surface_check: bool = True) -> StudyResult:
    """Run one site study, on flat ground or on the DEM of ``spec.terrain``.

    Parameters
    ----------
    spec : SiteSpec
        Validated inputs (see :func:`geo.site.site_file.load_site`).
    before_surface : callable, optional
        Called with the study without its surface prediction (``surface`` None and its findings
        left out) just before that prediction starts, when it will run: the outputs that do not
        depend on it can be written meanwhile. Not called when there is no surface prediction.
    surface_check : bool
        Run the surface prediction's convergence check (sampling doubled, area doubled); the sweep's
        re-judging of its top candidates leaves it out to stay affordable.

    Returns
    -------
    StudyResult

    Raises
    ------
    SiteFileError
        When the inputs are consistent one by one but not together (a mast
        past the runway end, a runway of zero length, ...).
    TerrainError
        When the DEM does not serve the site.
    """
    channel = channel_of(spec)
    lam = wavelength_m(channel.glide_path_mhz)
    runway = runway_of(spec)
    magnetic, designator_finding = runway_magnetic(spec, runway.true_bearing_deg)
    side, setback, offset, field_name, setback_source = _placement(spec, runway)
    solve = setback is None
    if spec.terrain is None:
        ground = _flat_ground(spec, runway, lam, setback, field_name, solve)
    else:
        ground = _dem_ground(spec, runway, lam, side, setback, offset, field_name, solve)
    setback, terrain, heights = ground.setback_m, ground.terrain, ground.heights_m
    shifts = proximity_shifts_m(heights, offset)
    roles = array_type(spec.array).roles
    antennas = _antennas(runway.frame, side, setback, offset, roles, ground, shifts)
    mast = _mast(spec, side, setback, offset, setback_source, ground, antennas[0])
    rdh, over_threshold, gpip = _path_over_runway(spec, runway, ground.intercept_m, setback, offset)
    found = [designator_finding, *_siting_findings(spec, channel, runway, rdh, setback, offset, solve, gpip)]
    if terrain is not None:
        found += _terrain_findings(spec, ground)
    gu, gw = (terrain.plane.forward_gradient, terrain.plane.lateral_gradient) if terrain else (0.0, 0.0)
    zones = reflection_zones(roles, heights, shifts, setback, offset, spec.angle_deg, lam, gu, gw)
    covers = _zone_covers(spec, zones)
    found += [checks.check_zone_cover(c, unit=spec.units) for c in covers]
    clearance = _top_of_mast_clearance(spec, runway, setback, antennas[-1])
    found.append(checks.check_mast_clearance(clearance, spec.surfaces, unit=spec.units))
    feeds = _feeds(spec)
    intercept_z = ground.intercept_m - ground.plane_m
    prediction, unshifted = _predictions(spec, heights, shifts, feeds, lam, gu, gw, setback, offset, intercept_z)
    found.append(checks.check_predicted_angle(prediction.path_angle_deg, spec.angle_deg))
    below, capture = _below_path(spec, heights, shifts, feeds, lam, gu, gw, prediction)
    found += checks.check_below_path(spec.array, below, capture)
    families = None
    if terrain is not None:
        families = _roughness_families(spec, terrain, lam, setback, offset)
        found.append(checks.check_roughness_families(families))
    result = StudyResult(
        spec=spec,
        channel=channel,
        wavelength_m=lam,
        runway=runway,
        mast=mast,
        antennas=antennas,
        rdh_m=rdh,
        path_height_over_threshold_m=over_threshold,
        gpip=gpip,
        findings=_in_order(found, ground.dem_finding, ground.tile_findings),
        intercept_elevation_m=ground.intercept_m,
        terrain=terrain,
        profile=ground.profile,
        terrain_source=ground.source,
        zones=zones,
        zone_covers=covers,
        prediction=prediction,
        prediction_no_shift=unshifted,
        feeds=feeds,
        mast_clearance=clearance,
        below_path=below,
        capture_effect=capture,
        roughness_families=families,
        surface=None,
        magnetic=magnetic,
    )
    if terrain is not None and spec.prediction.surface:
        result = _with_surface(result, found, ground, shifts, before_surface, surface_check)
    return _with_buildings(_with_conditions(result))  # the conditions after the surface: their own surfaces


def _with_buildings(result: StudyResult) -> StudyResult:
    """The study with the site file's buildings (:mod:`geo.study.buildings`), after its surface prediction."""
    if not result.spec.buildings:
        return result
    from dataclasses import replace

    from geo.study.buildings import building_findings, buildings_for_study

    found = buildings_for_study(result)
    more = building_findings(found, result.spec.units, result.spec.areas.critical_share)
    return replace(result, buildings=found, findings=[*result.findings, *more])


def _with_conditions(result: StudyResult) -> StudyResult:
    """The study with its path under each condition of ``[conditions]`` (:mod:`geo.study.conditions`)."""
    if not result.spec.conditions:
        return result
    from dataclasses import replace

    from geo.study.conditions import study_conditions

    return replace(result, conditions=study_conditions(result))


def _flat_ground(spec, runway, lam, setback, field_name, solve) -> _Ground:
    """The terrain step without a DEM: the ground is level at the mast's base elevation."""
    thr_elev = spec.threshold.elevation_m
    file_base = spec.mast.base_elevation_m
    base_m, base_source = (file_base, "site file") if file_base is not None else (thr_elev, "threshold elevation")
    if solve:
        setback = setback_for_rdh_m(spec.target_rdh_m, base_m, spec.angle_deg, thr_elev)
    _check_setback(setback, field_name, runway, spec.units)
    heights = antenna_heights_m(spec.array, lam, spec.angle_deg)
    return _Ground(setback, base_m, base_source, heights, base_m, base_m)


def _dem_ground(spec, runway, lam, side, setback, offset, field_name, solve) -> _Ground:
    """The terrain step on the DEM: its coverage, the reflecting plane (and setback) and the approach profile."""
    from geo.ground.dem import Dem

    frame = runway.frame
    thr_elev = spec.threshold.elevation_m
    t = spec.terrain
    with Dem.open(t) as dem, dem_extent_in_errors(dem):
        if solve:
            setback = setback_for_rdh_m(spec.target_rdh_m, thr_elev, spec.angle_deg, thr_elev)
        else:
            _check_setback(setback, field_name, runway)
        mast_at = [] if solve else [(setback, _SIGN[side] * offset)]
        keys = height_keys(dem, t, spec.units, frame)  # every DEM and datum check before the solve
        dem_finding, dem_threshold = check_dem_covers_site(dem, frame, thr_elev, mast_at, keys, solving=solve)
        setback, terrain = _solve_on_terrain(spec, runway, dem, side, setback, offset, lam, field_name, solve)
        terrain = terrain.result()  # the report's figures, for the setback kept only
        profile = approach_profile(
            dem,
            frame,
            runway.length_m,
            terrain.rpi_elevation_m,
            setback,
            offset,
            spec.angle_deg,
            min(terrain.cell_size_m, 10.0),
        )
        source = TerrainSource(t.dem_path.name, dem.vertical_unit_source, dem.vertical_datum(), t.vertical_offset_m)
        source = _dem_source_details(source, dem, frame, side, setback, offset, terrain, dem_threshold)
        fall = check_runway_fall(dem, frame, runway.length_m, thr_elev, spec.end.elevation_m, spec.units)
        tiles_found = () if fall is None else (fall,)
        if len(dem.mosaic.tiles) > 1:  # over the part of the DEM the study read
            from dataclasses import replace

            agreement = measure_tiles(dem.mosaic, dem.mosaic.asked_box)
            source = replace(source, tile_agreement=agreement)
            tiles_found += tuple(tile_findings(agreement, spec.units))
    return _Ground(
        setback,
        terrain.ground_at_mast_m,
        "DEM",
        terrain.heights_m,
        terrain.plane.elevation_at_mast_m,
        terrain.rpi_elevation_m,
        terrain,
        profile,
        source,
        dem_finding,
        tiles_found,
    )


def _antennas(frame, side, setback, offset, roles, ground, shifts) -> list[Antenna]:
    """The antennas of the array, lowest first, each moved toward the runway by its proximity shift."""
    sign = _SIGN[side]
    antennas = []
    for role, height, shift in zip(roles, ground.heights_m, shifts):
        lat, lon = frame.to_geographic(setback, sign * (offset - shift))
        antennas.append(Antenna(role, height, shift, offset - shift, ground.plane_m + height, lat, lon))
    return antennas


def _mast(spec, side, setback, offset, setback_source, ground, lowest) -> Mast:
    """The mast where its lowest antenna stands, with its ground."""
    return Mast(
        side,
        setback,
        offset,
        ground.base_m,
        ground.base_source,
        setback_source,
        lowest.lat_deg,
        lowest.lon_deg,
        ground.plane_m,
        spec.mast.base_elevation_m,
    )


def _path_over_runway(spec, runway, intercept_m, setback, offset) -> tuple[float, float, Gpip]:
    """The RDH, the actual path over the threshold and the GPIP."""
    thr_elev = spec.threshold.elevation_m
    rdh = rdh_m(intercept_m, setback, spec.angle_deg, thr_elev)
    over_threshold = path_height_over_threshold_m(intercept_m, setback, offset, spec.angle_deg, thr_elev)
    try:
        gpip_x = gpip_along_m(rdh, spec.angle_deg, runway.gradient)
    except ValueError:
        raise SiteFileError(
            "runway.end.elevation",
            "the runway falls faster than the path descends; the path "
            "never meets it: check the elevations and the path angle",
        ) from None
    gpip_lat, gpip_lon = runway.frame.to_geographic(gpip_x, 0.0)
    return rdh, over_threshold, Gpip(gpip_x, thr_elev + runway.gradient * gpip_x, gpip_lat, gpip_lon)


def _siting_findings(spec, channel, runway, rdh, setback, offset, solve, gpip) -> list:
    """The checks of the channel, the angle, the RDH, the siting and the GPIP."""
    found = [
        checks.check_channel(channel.glide_path_mhz, channel.localizer_mhz),
        checks.check_angle(spec.angle_deg),
        checks.check_rdh(rdh, spec.category, spec.runway_code, unit=spec.units),
        *checks.check_typical_siting(setback, offset, unit=spec.units),
        checks.check_length_unit(setback, offset, spec.units),
    ]
    if spec.target_rdh_m is not None and not solve:
        found.append(checks.check_target_rdh(rdh, spec.target_rdh_m, unit=spec.units))
    if solve and spec.target_rdh_m is not None:
        found.append(checks.check_solved_setback(rdh, spec.target_rdh_m))
    found.append(checks.check_gpip(gpip.along_m, runway.length_m, unit=spec.units))
    return found


def _terrain_findings(spec, ground) -> list:
    """The checks of the DEM study: base elevation, roughness, plane solve, resolution, approach clearance."""
    terrain, profile, file_base = ground.terrain, ground.profile, spec.mast.base_elevation_m
    found = [checks.check_datum_keys(spec.terrain.vertical_datum, spec.terrain.survey_vertical_datum)]
    if file_base is not None:
        found.append(checks.check_base_elevation(file_base, terrain.ground_at_mast_m, unit=spec.units))
    found += checks.check_roughness(terrain.roughness, unit=spec.units)
    plane_solve = checks.check_plane_solve(
        terrain.solve_status, terrain.height_spread_mm, terrain.slope_bracket_deg, terrain.bracket_plane_slopes_deg
    )
    if plane_solve is not None:
        found.append(plane_solve)
    found.append(
        checks.check_dem_resolution(ground.source.cells_in_zone, terrain.cell_size_m, terrain.zone.max_half_width_m)
    )
    found.append(
        checks.check_approach_clearance(
            profile.min_clearance_m,
            profile.min_clearance_along_m,
            spec.terrain.min_clearance_m,
            profile.approach_covered_m,
            PROFILE_RANGE_M,
            unit=spec.units,
        )
    )
    return found


def _zone_covers(spec, zones) -> list[ZoneCover]:
    """The part of each kind's zone for all antennas outside the protected areas (none without them)."""
    if not spec.protected_areas:
        return []
    return [zone_cover(z.shape.polygon, z.kind, spec.protected_areas) for z in zones if z.antenna == "all"]


def _top_of_mast_clearance(spec, runway, setback, top) -> MastClearance:
    """The top of the mast (the upper antenna and the allowance) against the Annex 14 surfaces."""
    return mast_clearance(
        top.offset_m,
        top.elevation_m + spec.surfaces.mast_allowance_m,
        spec.threshold.elevation_m + runway.gradient * setback,
        spec.surfaces,
        setback_m=setback,
        runway_length_m=runway.length_m,
        runway_gradient=runway.gradient,
    )


def _in_order(findings, dem_finding, tile_findings=()) -> list:
    """The findings as shown: the DEM's first, then its tiles', the checks that found nothing left out."""
    findings = [*tile_findings, *findings]
    if dem_finding is not None:  # the likely cause of every other odd height: shown first
        findings = [dem_finding, *findings]
    return [f for f in findings if f is not None]


def _with_surface(result, found, ground, shifts, before_surface, check=True) -> StudyResult:
    """The study with its surface prediction and its findings (``before_surface`` called first).

    Besides the bends and the DDM below the path (:func:`geo.study.surface.surface_findings`): the
    whole path's angle, half-sectors, asymmetry and RDH against the Annex 10 limits
    (:mod:`geo.study.surface_sector`) and the ground beyond the integration area
    (:mod:`geo.study.ground_beyond`).
    """
    from dataclasses import replace

    from geo.study.ground_beyond import ground_beyond_finding, ground_beyond_for_study
    from geo.study.surface import surface_findings, surface_for_study
    from geo.study.surface_sector import judge_surface_sector, sector_findings

    if before_surface is not None:
        before_surface(result)
    spec, mast = result.spec, result.mast
    surface = surface_for_study(
        spec,
        result.runway,
        mast.side,
        mast.setback_m,
        mast.offset_m,
        ground.terrain,
        ground.heights_m,
        shifts,
        result.feeds,
        result.wavelength_m,
        result.prediction,
        result.rdh_m,
        check=check,
    )
    thr = spec.threshold.elevation_m
    image_rdh = result.prediction.straight_fit[0] + mast.plane_elevation_m - thr
    sector = judge_surface_sector(
        surface, spec.angle_deg, spec.category, spec.runway_code, spec.prediction.half_sector,
        mast.plane_elevation_m, thr, image_rdh,
    )  # fmt: skip
    beyond = ground_beyond_for_study(
        spec, result.runway, mast.side, mast.setback_m, mast.offset_m, ground.terrain, surface.area_m,
        result.wavelength_m,
    )  # fmt: skip
    found = [
        *found,
        *surface_findings(surface, spec.category, spec.units),
        *sector_findings(sector, spec.units),
        ground_beyond_finding(beyond, spec.units),
    ]
    found = _in_order(found, ground.dem_finding, ground.tile_findings)
    return replace(result, surface=surface, surface_sector=sector, ground_beyond=beyond, findings=found)


def _feeds(spec: SiteSpec) -> tuple:
    kind = array_type(spec.array)
    p = spec.prediction
    source = kind.feeds_source if p.csb_feed is None and p.sbo_feed is None else "site file"
    return (p.csb_feed or kind.csb_feed, p.sbo_feed or kind.sbo_feed, source)


def _predictions(spec, heights, shifts, feeds, lam, gu, gw, setback, offset, intercept_z):
    """The predicted path with the proximity shifts and without them (same SBO level)."""
    p = spec.prediction
    try:
        shifted = predict_path(
            array_model(spec, heights, shifts, feeds, lam, gu, gw),
            spec.angle_deg,
            setback,
            offset,
            intercept_z,
            p.half_sector,
        )
        unshifted = predict_path(
            array_model(spec, heights, [0.0] * len(heights), feeds, lam, gu, gw),
            spec.angle_deg,
            setback,
            offset,
            intercept_z,
            p.half_sector,
            sbo_scale=shifted.sbo_scale,
        )
    except (ValueError, ZeroDivisionError, FloatingPointError):
        raise SiteFileError(
            "prediction",
            "the antennas and feeds give no path (DDM = 0) within 25 % of the "
            "path angle; check prediction.csb_feed and prediction.sbo_feed",
        ) from None
    return shifted, unshifted


def _dem_source_details(source, dem, frame, side, setback, offset, terrain, dem_threshold_m):
    """The DEM facts the outputs state: tiles, datum conversion and its size at the mast, cells in the zone."""
    from dataclasses import replace

    lat, lon = frame.to_geographic(setback, _SIGN[side] * offset)
    return replace(
        source,
        dem_name=dem.names,
        datum_conversion=dem.conversion,
        datum_shift_at_mast_m=dem.datum_shift_at(lat, lon),
        cells_in_zone=dem.cells_in_zone(frame, side, setback, offset, terrain.zone.polygon),
        dem_threshold_m=dem_threshold_m,
        crs=dem.crs_text,
    )


def _below_path(spec, heights, shifts, feeds, lam, gu, gw, prediction):
    """The course DDM below the path, and for capture-effect arrays the course with its clearance."""
    p = spec.prediction
    model = array_model(spec, heights, shifts, feeds, lam, gu, gw)
    kind = array_type(spec.array)
    if kind.clearance_csb_feed:
        try:
            capture = assess_capture_effect(
                model,
                prediction.sbo_scale,
                spec.angle_deg,
                prediction.path_angle_deg,
                kind.clearance_csb_feed,
                kind.clearance_sbo_feed,
                p.half_sector,
                p.below_path_down_to,
                kind.clearance_source,
            )
            return capture.course_only, capture
        except (ValueError, ZeroDivisionError, FloatingPointError):
            pass  # site-file feeds without a carrier where the clearance is levelled: course alone
    course = check_below_path(
        lambda e: far_field_ddm(model, e, prediction.sbo_scale),
        spec.angle_deg,
        prediction.path_angle_deg,
        p.below_path_down_to,
        carrier_of_elevation=lambda e: abs(model.far_fields(e)[0]),
    )
    return course, None


def _roughness_families(spec, terrain, lam, setback, offset):
    """Roughness per receiver family over the fitted plane, lowest antenna (:func:`roughness_by_family`)."""
    return roughness_by_family(
        terrain.plane.rms_residual_m,
        lam,
        spec.angle_deg,
        terrain.heights_m[0],
        setback,
        offset,
        terrain.plane.forward_gradient,
        terrain.plane.lateral_gradient,
        terrain.zone.polygon,
    )
