"""One site study: validated inputs in, every result out.

:func:`run_study` places the mast in the runway frame, works out the channel,
the antenna heights and proximity shifts, the RDH, the actual path over the
threshold and the GPIP, and checks them. The result is one plain object that
the writers in :mod:`geo.outputs` read; nothing here writes a file.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from geo import findings as checks
from geo.arrays import antenna_heights_m, array_type, proximity_shifts_m
from geo.channels import Channel, channel_for_glide_path, channel_for_localizer, wavelength_m
from geo.errors import SiteFileError, TerrainError
from geo.frame import RunwayFrame, geodesic_inverse
from geo.path import (
    gpip_along_m,
    path_height_over_threshold_m,
    rdh_m,
    runway_gradient,
    setback_for_rdh_m,
)
from geo.prediction import ArrayModel, PathPrediction, predict_path
from geo.profile import PROFILE_RANGE_M, ApproachProfile, approach_profile
from geo.protected import ZoneCover, zone_cover
from geo.site import SiteSpec
from geo.surfaces import MastClearance, mast_clearance
from geo.terrain import TerrainResult, analyse_terrain
from geo.zones import ReflectionZone, reflection_zones

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
        raise SiteFileError("runway.end", f"is only {length_m:.1f} m from the threshold; check both positions")
    if length_m > 20_000.0:
        raise SiteFileError("runway.end", f"is {length_m / 1000:.1f} km from the threshold; check both positions")
    frame = RunwayFrame(thr.lat_deg, thr.lon_deg, end.lat_deg, end.lon_deg)
    gradient = runway_gradient(thr.elevation_m, end.elevation_m, length_m)
    if abs(gradient) > _MAX_GRADIENT:
        raise SiteFileError(
            "runway.end.elevation",
            f"gives a mean runway gradient of {100 * gradient:+.1f} % "
            f"(threshold {thr.elevation_m:g} m, end {end.elevation_m:g} m); runways slope at most a few "
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
    """

    dem_name: str
    vertical_unit_source: str
    vertical_datum: str | None
    vertical_offset_m: float


def _placement(spec: SiteSpec, runway: Runway) -> tuple[str, float | None, float, str, str]:
    """Side, setback (None: to be solved), offset, the field that set the setback, its source."""
    mast = spec.mast
    if mast.position is not None:
        along, cross = runway.frame.to_plane(mast.position.lat_deg, mast.position.lon_deg)
        offset = abs(cross)
        if offset <= runway.width_m / 2.0:
            raise SiteFileError(
                "mast.position",
                f"is {offset:.1f} m from the centre line, on the runway "
                f"(half-width {runway.width_m / 2.0:g} m); check the position",
            )
        return ("right" if cross > 0 else "left"), along, offset, "mast.position", "surveyed position"
    if mast.setback_m is not None:
        return mast.side, mast.setback_m, mast.offset_m, "mast.setback", "site file"
    return mast.side, None, mast.offset_m, "glide_path.target_rdh", "solved for target RDH"


def _check_setback(setback_m: float, field_name: str, runway: Runway) -> None:
    if not 0.0 < setback_m < runway.length_m:
        raise SiteFileError(
            field_name,
            f"puts the mast {setback_m:.1f} m along the runway, outside the "
            f"{runway.length_m:.1f} m between threshold and end; the mast must stand "
            "beside the runway past the threshold",
        )


def _solve_on_terrain(spec, runway, dem, side, setback, offset, lam, field_name, solve):
    """Terrain analysis at the mast; with ``solve``, move the setback until the RDH settles."""
    thr = spec.threshold.elevation_m
    previous = None  # (setback, RDH error) of the last try, for a secant step
    for _ in range(30):
        _check_setback(setback, field_name, runway)
        ground = analyse_terrain(dem, runway.frame, side, setback, offset, spec.array, lam, spec.angle_deg)
        if not solve:
            return setback, ground
        error = rdh_m(ground.rpi_elevation_m, setback, spec.angle_deg, thr) - spec.target_rdh_m
        new = setback_for_rdh_m(spec.target_rdh_m, ground.rpi_elevation_m, spec.angle_deg, thr)
        if previous is not None and error != previous[1]:
            new = setback - error * (setback - previous[0]) / (error - previous[1])
        if abs(new - setback) < 1e-3:
            return setback, ground
        previous, setback = (setback, error), new
    raise TerrainError("terrain: the setback for the target RDH did not settle; give mast.setback instead")


def run_study(spec: SiteSpec) -> StudyResult:
    """Run one site study, on flat ground or on the DEM of ``spec.terrain``.

    Parameters
    ----------
    spec : SiteSpec
        Validated inputs (see :func:`geo.site.load_site`).

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
    frame = runway.frame
    thr_elev = spec.threshold.elevation_m
    side, setback, offset, field_name, setback_source = _placement(spec, runway)
    solve = setback is None
    file_base = spec.mast.base_elevation_m
    terrain = profile = source = None
    if spec.terrain is None:
        base_m, base_source = (file_base, "site file") if file_base is not None else (thr_elev, "threshold elevation")
        if solve:
            setback = setback_for_rdh_m(spec.target_rdh_m, base_m, spec.angle_deg, thr_elev)
        _check_setback(setback, field_name, runway)
        heights = antenna_heights_m(spec.array, lam, spec.angle_deg)
        plane_m = intercept_m = base_m
    else:
        from geo.dem import Dem

        t = spec.terrain
        with Dem.open(t.dem_path, t.vertical_offset_m, t.vertical_unit) as dem:
            if solve:
                setback = setback_for_rdh_m(spec.target_rdh_m, thr_elev, spec.angle_deg, thr_elev)
            setback, terrain = _solve_on_terrain(spec, runway, dem, side, setback, offset, lam, field_name, solve)
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
        base_m, base_source = terrain.ground_at_mast_m, "DEM"
        heights = terrain.heights_m
        plane_m, intercept_m = terrain.plane.elevation_at_mast_m, terrain.rpi_elevation_m

    sign = _SIGN[side]
    shifts = proximity_shifts_m(heights, offset)
    roles = array_type(spec.array).roles
    antennas = []
    for role, height, shift in zip(roles, heights, shifts):
        lat, lon = frame.to_geographic(setback, sign * (offset - shift))
        antennas.append(Antenna(role, height, shift, offset - shift, plane_m + height, lat, lon))
    mast = Mast(
        side,
        setback,
        offset,
        base_m,
        base_source,
        setback_source,
        antennas[0].lat_deg,
        antennas[0].lon_deg,
        plane_m,
        file_base,
    )

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
    gpip_lat, gpip_lon = frame.to_geographic(gpip_x, 0.0)
    gpip = Gpip(gpip_x, thr_elev + runway.gradient * gpip_x, gpip_lat, gpip_lon)

    found = [
        checks.check_channel(channel.glide_path_mhz, channel.localizer_mhz),
        checks.check_angle(spec.angle_deg),
        checks.check_rdh(rdh, spec.category, spec.runway_code),
        *checks.check_typical_siting(setback, offset),
    ]
    if spec.target_rdh_m is not None and not solve:
        found.append(checks.check_target_rdh(rdh, spec.target_rdh_m))
    found.append(checks.check_gpip(gpip_x, runway.length_m))
    if terrain is not None:
        if file_base is not None:
            found.append(checks.check_base_elevation(file_base, terrain.ground_at_mast_m))
        found += checks.check_roughness(terrain.roughness)
        found.append(
            checks.check_approach_clearance(
                profile.min_clearance_m,
                profile.min_clearance_along_m,
                spec.terrain.min_clearance_m,
                profile.approach_covered_m,
                PROFILE_RANGE_M,
            )
        )
    gu, gw = (terrain.plane.forward_gradient, terrain.plane.lateral_gradient) if terrain else (0.0, 0.0)
    zones = reflection_zones(roles, heights, shifts, setback, offset, spec.angle_deg, lam, gu, gw)
    covers = []
    if spec.protected_areas:
        covers = [zone_cover(z.shape.polygon, z.kind, spec.protected_areas) for z in zones if z.antenna == "all"]
        found += [checks.check_zone_cover(c) for c in covers]
    clearance = mast_clearance(
        antennas[-1].offset_m,
        antennas[-1].elevation_m + spec.surfaces.mast_allowance_m,
        thr_elev + runway.gradient * setback,
        spec.surfaces,
    )
    found.append(checks.check_mast_clearance(clearance, spec.surfaces))
    feeds = _feeds(spec)
    prediction, unshifted = _predictions(
        spec, heights, shifts, feeds, lam, gu, gw, setback, offset, intercept_m - plane_m
    )
    found.append(checks.check_predicted_angle(prediction.path_angle_deg, spec.angle_deg))
    found = [f for f in found if f is not None]
    return StudyResult(
        spec=spec,
        channel=channel,
        wavelength_m=lam,
        runway=runway,
        mast=mast,
        antennas=antennas,
        rdh_m=rdh,
        path_height_over_threshold_m=over_threshold,
        gpip=gpip,
        findings=found,
        intercept_elevation_m=intercept_m,
        terrain=terrain,
        profile=profile,
        terrain_source=source,
        zones=zones,
        zone_covers=covers,
        prediction=prediction,
        prediction_no_shift=unshifted,
        feeds=feeds,
        mast_clearance=clearance,
    )


def _feeds(spec: SiteSpec) -> tuple:
    kind = array_type(spec.array)
    p = spec.prediction
    source = kind.feeds_source if p.csb_feed is None and p.sbo_feed is None else "site file"
    return (p.csb_feed or kind.csb_feed, p.sbo_feed or kind.sbo_feed, source)


def _predictions(spec, heights, shifts, feeds, lam, gu, gw, setback, offset, intercept_z):
    """The predicted path with the proximity shifts and without them (same SBO level)."""
    p = spec.prediction
    build = dict(
        wavelength_m=lam,
        forward_gradient=gu,
        lateral_gradient=gw,
        relative_permittivity=p.relative_permittivity,
        conductivity_s_m=p.conductivity_s_m,
        phase_for_angle_deg=spec.angle_deg,
    )
    try:
        shifted = predict_path(
            ArrayModel.build(heights, shifts, feeds[0], feeds[1], **build),
            spec.angle_deg,
            setback,
            offset,
            intercept_z,
            p.half_sector,
        )
        unshifted = predict_path(
            ArrayModel.build(heights, [0.0] * len(heights), feeds[0], feeds[1], **build),
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
