"""The site file: TOML in, validated and typed inputs out (lengths in metres).

A site file says its length unit once (``units = "m"`` or ``"ft"``); every
length and elevation in it is in that unit, and every one is converted to
metres here. Angles are in degrees and frequencies in MHz, as their names
say. Unknown keys are errors, so a misspelt key never passes unnoticed.

Every problem raises :class:`geo.errors.SiteFileError` with the dotted field
name and one line saying what is allowed.
"""

from __future__ import annotations

import hashlib
import math
import tomllib
from dataclasses import dataclass, field, replace
from datetime import date, datetime
from datetime import time as time_of_day
from pathlib import Path
from typing import Any

from geo.airfield.magnetic import MODEL_SPAN_YEARS, decimal_year, parse_designator
from geo.airfield.surfaces import DEFAULT_SURFACES, SurfaceSpec, surfaces_for_code
from geo.errors import SiteFileError
from geo.radio.arrays import ARRAY_TYPES
from geo.site.buildings import BuildingSpec, parse_buildings
from geo.site.channels import CHANNEL_PAIRS_MHZ, GLIDE_PATH_BAND_MHZ
from geo.site.keys import keys_of
from geo.units import LENGTH_UNITS, format_length

__all__ = [
    "GeoPoint",
    "MastSpec",
    "TerrainSpec",
    "ProtectedArea",
    "PredictionSpec",
    "ReportSpec",
    "REPORT_PAGES",
    "SiteSpec",
    "ObjectSpec",
    "AreaSpec",
    "load_site",
    "parse_site",
]

SIDES = ("left", "right")
CATEGORIES = ("I", "II", "III")
#: Hard limits on the path angle; outside 2.5-3.5 deg is a finding, not an error.
ANGLE_LIMITS_DEG = (1.0, 6.0)
_ELEVATION_LIMITS_M = (-500.0, 9000.0)
#: Runway width: at least 10 m (the narrowest runways, code letter A, are 18 m wide: ICAO Annex 14 Vol I
#: 3.1.10, from memory), at most 200 m. [m]
_WIDTH_LIMITS_M = (10.0, 200.0)
_OFFSET_MAX_M = 1000.0
_TARGET_RDH_LIMITS_M = (0.0, 100.0)


@dataclass(frozen=True)
class GeoPoint:
    """A WGS 84 position with an optional elevation.

    Attributes
    ----------
    lat_deg, lon_deg : float
        Latitude and longitude. [deg]
    elevation_m : float or None
        Elevation in the site's vertical datum. [m]
    """

    lat_deg: float
    lon_deg: float
    elevation_m: float | None = None


@dataclass(frozen=True)
class MastSpec:
    """Where the mast stands: either side/offset/setback or a surveyed position.

    Attributes
    ----------
    side : {"left", "right"} or None
        Side of the runway as seen by a pilot on approach.
    offset_m : float or None
        Perpendicular distance from the centre line to the lowest antenna. [m]
    setback_m : float or None
        Along-runway distance from the threshold to the point abeam the mast;
        ``None`` asks the study to solve it from the target RDH. [m]
    base_elevation_m : float or None
        Ground elevation at the mast; ``None`` means the threshold elevation. [m]
    position : GeoPoint or None
        Surveyed position of the lowest antenna, instead of side/offset/setback.
    """

    side: str | None = None
    offset_m: float | None = None
    setback_m: float | None = None
    base_elevation_m: float | None = None
    position: GeoPoint | None = None


@dataclass(frozen=True)
class TerrainSpec:
    """Where the terrain comes from.

    Attributes
    ----------
    dem_path : Path
        Raster GDAL reads, any CRS (resolved against the site file's folder).
    vertical_offset_m : float
        Added to DEM heights to reach the surveyed datum. [m]
    vertical_unit : {"m", "ft"} or None
        Unit of the raster's heights; ``None``: from the raster, else metres.
    min_clearance_m : float
        Smallest acceptable height of the path above the approach terrain. [m]
    dem_paths : tuple of Path
        Every raster of ``terrain.dem`` (one, or the tiles in the order given); ``dem_path``
        is the first.
    vertical_datum : {"EGM96", "EGM2008", "WGS84"} or None
        Vertical datum of the DEM's heights.
    survey_vertical_datum : {"EGM96", "EGM2008", "WGS84"} or None
        Vertical datum of the site file's elevations (``runway.vertical_datum``).
    geoid_undulation_m : float or None
        Geoid undulation published at the threshold (``runway.geoid_undulation``). [m]
    """

    dem_path: Path
    vertical_offset_m: float = 0.0
    vertical_unit: str | None = None
    min_clearance_m: float = 0.0
    dem_paths: tuple[Path, ...] = ()
    vertical_datum: str | None = None
    survey_vertical_datum: str | None = None
    geoid_undulation_m: float | None = None


@dataclass(frozen=True)
class ProtectedArea:
    """An area the local rules protect, given relative to the mast.

    Coordinates: ``ahead`` along the course toward the approach from the mast, ``toward_runway``
    across from the mast toward the runway (negative: away from it). [m]

    Attributes
    ----------
    name : str
    kind : {"critical", "sensitive"}
    outline_m : tuple of (ahead_m, toward_runway_m)
        Corners of the area, in order. [m]
    """

    name: str
    kind: str
    outline_m: tuple[tuple[float, float], ...]


@dataclass(frozen=True)
class PredictionSpec:
    """Settings of the predicted path.

    Attributes
    ----------
    relative_permittivity, conductivity_s_m : float or None
        Ground constants; both ``None`` for a perfectly conducting ground. [-], [S/m]
    half_sector : float
        Fraction of theta below the path where the far-field DDM is 0.0875 (Annex 10 Vol I
        3.1.5.6: 0.12, within 0.07-0.14).
    csb_feed, sbo_feed : tuple of complex or None
        Feeds per antenna, lowest first; ``None`` uses the array type's defaults.
    below_path_down_to : float
        Lower edge of the below-path band, fraction of theta: 0.45, or lower down to 0.30 where
        the glide path intercept procedure needs it (Annex 10 Vol I 3.1.5.6.5, from memory).
    below_path_down_to_set : bool
        Whether the site file gave ``below_path_down_to``.
    surface : bool
        Predict the path over the DEM surface too (physical optics, :mod:`geo.study.surface`)
        when the site file gives a DEM; ``false`` skips it (a quicker study, e.g. in a batch).
    element : str
        The antennas' element pattern, ``"generic"`` or ``"isotropic"`` (:mod:`geo.radio.element`).
    element_front_to_back_db : float or None
        The generic element's front-to-back ratio; ``None``: its generic value. [dB]
    """

    relative_permittivity: float | None = None
    conductivity_s_m: float | None = None
    half_sector: float = 0.12
    csb_feed: tuple[complex, ...] | None = None
    sbo_feed: tuple[complex, ...] | None = None
    below_path_down_to: float = 0.45
    below_path_down_to_set: bool = False
    surface: bool = True
    element: str = "generic"
    element_front_to_back_db: float | None = None


#: Headings an object may take: parallel to the runway (holding, parked) or across it (taxiing).
OBJECT_HEADINGS = ("along", "across")


@dataclass(frozen=True)
class ObjectSpec:
    """A parked or moving object near the mast, scattering the glide path signal.

    Attributes
    ----------
    name : str
    height_m : float
        Top of the object above the ground. [m]
    length_m : float
        Along its heading (a fin's chord, a vehicle's length). [m]
    width_m : float
        Across its heading (a fin's thickness, a vehicle's width). [m]
    base_m : float
        Lowest edge above the ground (a fin above its fuselage; 0 for a vehicle). [m]
    headings : tuple of str
        Among :data:`OBJECT_HEADINGS`.
    source : str
        Where the sizes come from.
    code : str or None
        The design object's code (:data:`geo.site.design_objects.DESIGN_OBJECTS`) the sizes start from.
    """

    name: str
    height_m: float
    length_m: float
    width_m: float
    base_m: float = 0.0
    headings: tuple[str, ...] = OBJECT_HEADINGS
    source: str = "site file"
    code: str | None = None


@dataclass(frozen=True)
class TaxiwaySpec:
    """A taxiway near the mast (``[[taxiway]]``): its centre line and its largest user.

    Attributes
    ----------
    name : str
    line : tuple of (float, float)
        The centre line's points, (lat, lon) in WGS 84 degrees, at least two.
    code : str
        The design code of its largest user (:data:`geo.site.design_objects.DESIGN_OBJECTS`).
    """

    name: str
    line: tuple[tuple[float, float], ...]
    code: str


@dataclass(frozen=True)
class HoldingSpec:
    """A holding position to check (``[[holding_position]]``): where, and which aircraft holds there.

    Attributes
    ----------
    name : str
    lat, lon : float
        [deg]
    taxiway : str or None
        The taxiway it is on (its code and heading), or None.
    code : str or None
        The aircraft's design code (the taxiway's when None).
    """

    name: str
    lat: float
    lon: float
    taxiway: str | None = None
    code: str | None = None


@dataclass(frozen=True)
class AreaSpec:
    """How the critical and sensitive areas are derived from the disturbance (``[areas]``).

    Attributes
    ----------
    critical_share, sensitive_share : float
        Share of the segment's structure limit an object may take before its position is
        critical (sensitive). Defaults: common practice, no source.
    grid_m : float
        Spacing of the object positions. [m]
    ahead_m, behind_m : float
        Extent of the grid in front of the mast (toward the approach) and behind it. [m]
    away_m : float
        Extent beyond the mast, away from the runway. [m]
    beyond_m : float
        Extent past the centre line, on the far side of the runway. [m]
    shares_source : str
    max_extent_m : float
        The grid grows until every area closes, on no side farther than this from the mast. [m]
    """

    critical_share: float = 0.5
    sensitive_share: float = 0.2
    grid_m: float = 10.0
    ahead_m: float = 600.0
    behind_m: float = 50.0
    away_m: float = 100.0
    beyond_m: float = 100.0
    shares_source: str = "common practice, no source"
    max_extent_m: float = 1500.0


@dataclass(frozen=True)
class ReportSpec:
    """The optional ``[report]`` table: the report's title block and its page size.

    Attributes
    ----------
    prepared_by, checked_by, revision, date : str
        Texts of the title block, as the site file gives them ("" when absent); the date is never
        taken from the clock.
    page : {"A4", "Letter"}
        Page size of ``report.pdf``.
    distance_axis : {"linear", "log"}
        Scale of the distance axis of the plots along the approach that show only the approach
        (DDM along the path, surface structure); linear unless the site file asks for log.
    """

    prepared_by: str = ""
    checked_by: str = ""
    revision: str = ""
    date: str = ""
    page: str = "A4"
    distance_axis: str = "linear"


#: Page sizes of ``report.pdf`` (``[report] page``).
REPORT_PAGES = ("A4", "Letter")
#: Scales of the plots' distance axis along the approach (``[report] distance_axis``).
DISTANCE_AXES = ("linear", "log")


@dataclass(frozen=True)
class SiteSpec:
    """Validated inputs of one site study; every length in metres.

    Attributes
    ----------
    name : str
        Site name (free text, escaped wherever it is shown).
    threshold, end : GeoPoint
        Landing threshold and far end of the runway on the centre line.
    width_m : float
        Runway width. [m]
    angle_deg : float
        Path angle. [deg]
    array : str
        Array type, a key of :data:`geo.radio.arrays.ARRAY_TYPES`.
    mast : MastSpec
        Mast position.
    localizer_mhz, frequency_mhz : float or None
        Exactly one is given: a localizer frequency (the glide path is its
        pair) or the glide path frequency itself. [MHz]
    target_rdh_m : float or None
        Desired reference datum height. [m]
    category : {"I", "II", "III"}
        Operation category, for the RDH check.
    runway_code : int or None
        Aerodrome reference code number 1-4, for the RDH check.
    units : {"m", "ft"}
        Length unit the site file was written in.
    notes : str
        Free text.
    source : str
        File the inputs came from ("" when built in code).
    sha256 : str
        SHA-256 of the file's bytes ("" when built in code).
    base_dir : Path
        Folder that relative paths in the file are resolved against.
    terrain : TerrainSpec or None
        The DEM, when the study uses real terrain.
    protected_areas : tuple of ProtectedArea
        Critical and sensitive areas of the local rules.
    prediction : PredictionSpec
        Ground constants and feeds for the predicted path.
    surfaces : SurfaceSpec
        Obstacle limitation surface parameters for the mast clearance.
    vertical_datum : {"EGM96", "EGM2008", "WGS84"} or None
        Vertical datum of every elevation in the site file (``runway.vertical_datum``).
    geoid_undulation_m : float or None
        Geoid undulation N published with the threshold (ICAO Annex 15), ``h = H + N``. [m]
    report : ReportSpec
        The report's title block and page size (``[report]``).
    designator : str or None
        Runway designator of the landing direction, e.g. ``"27"`` or ``"09L"`` (``runway.designator``).
    magnetic_date : datetime.date or None
        Date of the magnetic variation the designator is checked with (``runway.magnetic_date``);
        None: the World Magnetic Model's epoch (:data:`geo.airfield.magnetic.DEFAULT_EPOCH_YEAR`).
    conditions : tuple of geo.site.conditions.ConditionSpec
        ``[conditions]``: snow and ground conditions predicted beside the study's own ground.
    """

    name: str
    threshold: GeoPoint
    end: GeoPoint
    width_m: float
    angle_deg: float
    array: str
    mast: MastSpec
    localizer_mhz: float | None = None
    frequency_mhz: float | None = None
    target_rdh_m: float | None = None
    category: str = "I"
    runway_code: int | None = None
    units: str = "m"
    notes: str = ""
    source: str = ""
    sha256: str = ""
    base_dir: Path = field(default_factory=Path)
    terrain: TerrainSpec | None = None
    protected_areas: tuple[ProtectedArea, ...] = ()
    prediction: PredictionSpec = field(default_factory=PredictionSpec)
    surfaces: SurfaceSpec = DEFAULT_SURFACES
    vertical_datum: str | None = None
    geoid_undulation_m: float | None = None
    objects: tuple[ObjectSpec, ...] = ()
    areas: AreaSpec = field(default_factory=AreaSpec)
    report: ReportSpec = field(default_factory=ReportSpec)
    designator: str | None = None
    magnetic_date: date | None = None
    conditions: tuple = ()
    buildings: tuple[BuildingSpec, ...] = ()
    taxiways: tuple[TaxiwaySpec, ...] = ()
    holding_positions: tuple[HoldingSpec, ...] = ()


def load_site(path: str | Path) -> SiteSpec:
    """Read and validate a site file.

    Parameters
    ----------
    path : str or Path
        TOML site file.

    Returns
    -------
    SiteSpec

    Raises
    ------
    SiteFileError
        With the file name, the field and what is allowed.
    """
    path = Path(path)
    name = str(path)
    try:
        data = path.read_bytes()
    except OSError as exc:
        raise SiteFileError("", f"cannot read the site file ({exc.strerror or exc})", name) from None
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError:
        raise SiteFileError("", "the site file is not UTF-8 text; save it as UTF-8", name) from None
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise SiteFileError("", f"not valid TOML: {exc}", name) from None
    try:
        return parse_site(doc, source=name, sha256=hashlib.sha256(data).hexdigest(), base_dir=path.parent)
    except SiteFileError as exc:
        raise exc.with_source(name) from None


def parse_site(doc: dict[str, Any], source: str = "", sha256: str = "", base_dir: Path | None = None) -> SiteSpec:
    """Validate a parsed site document (a dict as TOML gives it).

    Parameters
    ----------
    doc : dict
        The document.
    source, sha256 : str
        Recorded in the result.
    base_dir : Path, optional
        Folder for relative paths.

    Returns
    -------
    SiteSpec
    """
    if not isinstance(doc, dict):
        raise SiteFileError("", "the site document must be a TOML table")
    _only(doc, "", keys_of(""))
    units, scale = _units(doc)
    name, notes = _site_texts(doc)
    runway = _table(doc, "runway")
    threshold, end, width_m, code = _runway(runway, scale, units)
    designator, magnetic_date = _runway_magnetic(runway)
    angle_deg, localizer_mhz, frequency_mhz, array, target_rdh_m, category = _glide_path(doc, scale, units)
    mast = _mast(_table(doc, "mast"), scale, units, width_m, target_rdh_m)
    base_dir = base_dir if base_dir is not None else Path()
    survey_datum, undulation_m = _survey_datum(runway, scale, units)
    terrain = _terrain(doc["terrain"], scale, units, base_dir) if "terrain" in doc else None
    if terrain is not None:
        terrain = replace(terrain, survey_vertical_datum=survey_datum, geoid_undulation_m=undulation_m)
    protected = _protected_areas(doc.get("protected_area", []), scale, units)
    prediction = _prediction(doc.get("prediction", {}), len(ARRAY_TYPES[array].roles))
    surfaces = _surfaces(doc.get("surfaces"), scale, units, code)
    return SiteSpec(
        name=name,
        notes=notes,
        threshold=threshold,
        end=end,
        width_m=width_m,
        runway_code=code,
        angle_deg=angle_deg,
        localizer_mhz=localizer_mhz,
        frequency_mhz=frequency_mhz,
        array=array,
        target_rdh_m=target_rdh_m,
        category=category,
        mast=mast,
        units=units,
        source=source,
        sha256=sha256,
        base_dir=base_dir,
        terrain=terrain,
        protected_areas=protected,
        prediction=prediction,
        surfaces=surfaces,
        vertical_datum=survey_datum,
        geoid_undulation_m=undulation_m,
        objects=_objects(doc.get("object", []), scale, units),
        areas=_areas(doc.get("areas"), scale, units),
        report=_report(doc.get("report")),
        designator=designator,
        magnetic_date=magnetic_date,
        conditions=_conditions(doc, scale, units),
        buildings=parse_buildings(doc.get("building", []), scale, units, _reader_checks()),
        **_taxiway_tables(doc),
    )


def _conditions(doc: dict, scale: float, units: str) -> tuple:
    """``[conditions]``: snow and ground conditions predicted beside the study (:mod:`geo.site.conditions`)."""
    from geo.site.conditions import parse_conditions

    return parse_conditions(doc["conditions"], "conditions", scale, units) if "conditions" in doc else ()


def _reader_checks():
    """The checks ``[[building]]`` (:mod:`geo.site.buildings`) reads its keys with, as every other table's."""
    from types import SimpleNamespace

    return SimpleNamespace(_number=_number, _text=_text, _only=_only, _show=_show, _is_choice=_is_choice)


def _report(table) -> ReportSpec:
    """The optional ``[report]`` table: title block texts, the PDF's page size, the plots' distance axis."""
    if table is None:
        return ReportSpec()
    if not isinstance(table, dict):
        raise SiteFileError("report", f"must be a table [report] (got {_show(table)})")
    _only(table, "report", keys_of("report"))
    if isinstance(table.get("date"), (date, datetime, time_of_day)):
        raise SiteFileError(
            "report.date", f'must be a text in quotes, e.g. date = "2024-05-01" (got a TOML date {table["date"]})'
        )
    texts = {
        key: _text(table, "report", key, required=False) or ""
        for key in ("prepared_by", "checked_by", "revision", "date")
    }
    if any("\n" in value for value in texts.values()):
        bad = next(key for key, value in texts.items() if "\n" in value)
        raise SiteFileError(f"report.{bad}", "must be one line; remove the line breaks")
    page = table.get("page", "A4")
    if not _is_choice(page, REPORT_PAGES):
        raise SiteFileError("report.page", f'must be "A4" or "Letter" (got {_show(page)})')
    axis = table.get("distance_axis", "linear")
    if not _is_choice(axis, DISTANCE_AXES):
        raise SiteFileError("report.distance_axis", f'must be "linear" or "log" (got {_show(axis)})')
    return ReportSpec(**texts, page=page, distance_axis=axis)


def _units(doc: dict) -> tuple[str, float]:
    """The site file's length unit and its size in metres."""
    units = doc.get("units")
    if units is None:
        raise SiteFileError("units", 'missing; add units = "m" or units = "ft" at the top')
    if not _is_choice(units, LENGTH_UNITS):
        raise SiteFileError("units", f'must be "m" or "ft" (got {_show(units)})')
    return units, LENGTH_UNITS[units]


def _site_texts(doc: dict) -> tuple[str, str]:
    """The ``[site]`` table: the site's name and notes."""
    site = _table(doc, "site")
    _only(site, "site", keys_of("site"))
    name = _text(site, "site", "name", required=True)
    notes = _text(site, "site", "notes", required=False) or ""
    return name, notes


def _runway(runway: dict, scale: float, units: str) -> tuple[GeoPoint, GeoPoint, float, int | None]:
    """The ``[runway]`` table: threshold, end, width and aerodrome code number (its datum aside)."""
    _only(runway, "runway", keys_of("runway"))
    threshold = _point(runway, "runway", "threshold", scale, units, elevation="required")
    end = _point(runway, "runway", "end", scale, units, elevation="required")
    if abs(threshold.lat_deg - end.lat_deg) < 1e-9 and abs(_wrap(threshold.lon_deg - end.lon_deg)) < 1e-9:
        raise SiteFileError("runway.end", "is the same point as runway.threshold; give the far end")
    width_m = _number(
        runway,
        "runway",
        "width",
        scale,
        required=True,
        at_least=_WIDTH_LIMITS_M[0],
        at_most=_WIDTH_LIMITS_M[1],
        unit=units,
    )
    code = runway.get("code")
    if code is not None and (isinstance(code, bool) or not isinstance(code, int) or code not in (1, 2, 3, 4)):
        raise SiteFileError("runway.code", f"must be the aerodrome code number 1, 2, 3 or 4 (got {_show(code)})")
    return threshold, end, width_m, code


def _runway_magnetic(runway: dict) -> tuple[str | None, date | None]:
    """``runway.designator`` (01-36 and L, C or R) and ``runway.magnetic_date`` (within the magnetic models)."""
    designator = runway.get("designator")
    if designator is not None and (not isinstance(designator, str) or parse_designator(designator) is None):
        raise SiteFileError(
            "runway.designator",
            "must be the landing direction's designator in quotes: two digits 01 to 36, then optionally "
            f'L, C or R, e.g. "27" or "09L" (got {_show(designator)})',
        )
    day = runway.get("magnetic_date")
    if day is None:
        return designator, None
    fix = "a date YYYY-MM-DD, e.g. magnetic_date = 2025-06-01"
    if isinstance(day, str):
        try:
            day = date.fromisoformat(day) if len(day) == 10 else None
        except ValueError:
            day = None
        if day is None:
            raise SiteFileError("runway.magnetic_date", f"must be {fix} (got {_show(runway['magnetic_date'])})")
    if isinstance(day, datetime) or not isinstance(day, date):
        raise SiteFileError("runway.magnetic_date", f"must be {fix}, without a time (got {_show(day)})")
    first, last = int(MODEL_SPAN_YEARS[0]), int(MODEL_SPAN_YEARS[1]) - 1
    if not MODEL_SPAN_YEARS[0] <= decimal_year(day) < MODEL_SPAN_YEARS[1]:
        raise SiteFileError(
            "runway.magnetic_date",
            f"{day.isoformat()} is outside the World Magnetic Models mastplan has (WMM-2010 to WMM-2025, "
            f"{first}-01-01 to {last}-12-31); give a date within them",
        )
    return designator, day


def _glide_path(doc: dict, scale: float, units: str) -> tuple:
    """The ``[glide_path]`` table: angle, localizer or glide path frequency, array, target RDH, category."""
    gp = _table(doc, "glide_path")
    _only(gp, "glide_path", keys_of("glide_path"))
    angle_deg = _number(
        gp,
        "glide_path",
        "angle_deg",
        1.0,
        required=True,
        at_least=ANGLE_LIMITS_DEG[0],
        at_most=ANGLE_LIMITS_DEG[1],
        unit="deg",
    )
    localizer_mhz, frequency_mhz = _frequencies(gp)
    array = _array_type(gp)
    target_rdh_m = _number(
        gp,
        "glide_path",
        "target_rdh",
        scale,
        required=False,
        above=_TARGET_RDH_LIMITS_M[0],
        at_most=_TARGET_RDH_LIMITS_M[1],
        unit=units,
    )
    category = gp.get("category", "I")
    if not _is_choice(category, CATEGORIES):
        raise SiteFileError("glide_path.category", f'must be "I", "II" or "III" (got {_show(category)})')
    return angle_deg, localizer_mhz, frequency_mhz, array, target_rdh_m, category


def _frequencies(gp: dict) -> tuple[float | None, float | None]:
    """The localizer frequency or the glide path frequency, exactly one of them given. [MHz]"""
    has_loc, has_gp = "localizer_mhz" in gp, "frequency_mhz" in gp
    if has_loc == has_gp:
        raise SiteFileError(
            "glide_path",
            "give exactly one of localizer_mhz and frequency_mhz" + (" (both are given)" if has_loc else ""),
        )
    if has_loc:
        localizer_mhz = _number(gp, "glide_path", "localizer_mhz", 1.0, required=True, unit="MHz")
        if not any(abs(loc - localizer_mhz) < 0.001 for loc, _ in CHANNEL_PAIRS_MHZ):
            raise SiteFileError(
                "glide_path.localizer_mhz",
                f"{localizer_mhz:g} MHz is not one of the 40 paired localizer channels "
                "108.10-111.95 MHz (odd tenths, x.x0 or x.x5); or give frequency_mhz",
            )
        return localizer_mhz, None
    low, high = GLIDE_PATH_BAND_MHZ
    frequency_mhz = _number(
        gp, "glide_path", "frequency_mhz", 1.0, required=True, at_least=low, at_most=high, unit="MHz"
    )
    return None, frequency_mhz


def _array_type(gp: dict) -> str:
    """The array type, one of :data:`geo.radio.arrays.ARRAY_TYPES`."""
    array = gp.get("array")
    if array is None:
        raise SiteFileError("glide_path.array", "missing; " + _array_choices())
    if not _is_choice(array, ARRAY_TYPES):
        raise SiteFileError("glide_path.array", f"unknown array {_show(array)}; " + _array_choices())
    return array


def _surfaces(table, scale: float, units: str, runway_code: int | None = None) -> SurfaceSpec:
    d = surfaces_for_code(runway_code)
    if table is None:
        return d
    if not isinstance(table, dict):
        raise SiteFileError("surfaces", f"must be a table [surfaces] (got {_show(table)})")
    lengths = (
        "strip_half_width",
        "inner_transitional_start",
        "mast_allowance",
        "inner_approach_start",
        "inner_approach_length",
        "balked_landing_start",
        "inner_horizontal_height",
    )
    ratios = (
        "transitional_slope",
        "inner_transitional_slope",
        "inner_approach_slope",
        "balked_landing_divergence",
        "balked_landing_slope",
    )
    flag = "allow_in_obstacle_free_zone"
    _only(table, "surfaces", keys_of("surfaces"))
    length = {"unit": units, "required": False, "at_least": 0.0, "at_most": 2000.0}
    ratio = {"unit": "(rise per run)", "required": False, "above": 0.0, "at_most": 1.0}
    values = {f"{k}_m": _number(table, "surfaces", k, scale, **length) for k in lengths}
    values.update({k: _number(table, "surfaces", k, 1.0, **ratio) for k in ratios})
    allow = table.get(flag)
    if allow is not None and not isinstance(allow, bool):
        raise SiteFileError(f"surfaces.{flag}", f"must be true or false (got {_show(allow)})")
    values[flag] = allow
    source = _text(table, "surfaces", "source", required=False) or "site file [surfaces] (defaults where not given)"
    return SurfaceSpec(**{k: (v if v is not None else getattr(d, k)) for k, v in values.items()}, source=source)


def _prediction(table, antennas: int) -> PredictionSpec:
    if not isinstance(table, dict):
        raise SiteFileError("prediction", f"must be a table [prediction] (got {_show(table)})")
    _only(table, "prediction", keys_of("prediction"))
    surface = table.get("surface", True)
    if not isinstance(surface, bool):
        raise SiteFileError("prediction.surface", f"must be true or false (got {_show(surface)})")
    eps = _number(
        table,
        "prediction",
        "relative_permittivity",
        1.0,
        required=False,
        at_least=1.0,
        at_most=100.0,
        unit="(relative)",
    )
    sigma = _number(table, "prediction", "conductivity", 1.0, required=False, at_least=0.0, at_most=100.0, unit="S/m")
    if (eps is None) != (sigma is None):
        raise SiteFileError(
            "prediction", "give both relative_permittivity and conductivity, or neither (a perfectly conducting ground)"
        )
    half = _number(
        table, "prediction", "half_sector", 1.0, required=False, at_least=0.07, at_most=0.14, unit="(fraction of theta)"
    )
    feeds = {}
    for key in ("csb_feed", "sbo_feed"):
        if key not in table:
            feeds[key] = None
            continue
        value = table[key]
        fix = f"a list of {antennas} [amplitude, phase_deg] pairs, lowest antenna first"
        if not isinstance(value, list) or len(value) != antennas:
            raise SiteFileError(f"prediction.{key}", f"must be {fix} (got {_show(value)})")
        out = []
        for pair in value:
            ok = (
                isinstance(pair, list)
                and len(pair) == 2
                and all(isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v) for v in pair)
            )
            if not ok or not 0.0 <= pair[0] <= 1000.0:
                raise SiteFileError(f"prediction.{key}", f"must be {fix}, amplitude 0-1000 (got {_show(pair)})")
            out.append(pair[0] * complex(math.cos(math.radians(pair[1])), math.sin(math.radians(pair[1]))))
        if not any(abs(v) > 0 for v in out):
            raise SiteFileError(f"prediction.{key}", "feeds every antenna with zero; give at least one amplitude")
        feeds[key] = tuple(out)
    down_to = _number(
        table,
        "prediction",
        "below_path_down_to",
        1.0,
        required=False,
        at_least=0.30,
        at_most=0.45,
        unit="(fraction of theta)",
    )
    return PredictionSpec(
        eps,
        sigma,
        half if half is not None else 0.12,
        feeds["csb_feed"],
        feeds["sbo_feed"],
        below_path_down_to=down_to if down_to is not None else 0.45,
        below_path_down_to_set=down_to is not None,
        surface=surface,
        **_element(table),
    )


def _element(table) -> dict:
    """``[prediction] element`` and ``element_front_to_back_db``: the antennas' element pattern."""
    from geo.radio.element import ELEMENT_CHOICES

    name = table.get("element", "generic")
    if name not in ELEMENT_CHOICES:
        choices = " or ".join(f'"{c}"' for c in ELEMENT_CHOICES)
        raise SiteFileError("prediction.element", f"must be {choices} (got {_show(name)})")
    ratio = _number(
        table, "prediction", "element_front_to_back_db", 1.0, required=False, at_least=0.0, at_most=60.0, unit="dB"
    )
    if ratio is not None and name != "generic":
        raise SiteFileError(
            "prediction.element_front_to_back_db", 'applies to element = "generic" only; remove it or the element'
        )
    return {"element": name, "element_front_to_back_db": ratio}


def _protected_areas(items, scale: float, units: str) -> tuple[ProtectedArea, ...]:
    if not isinstance(items, list):
        raise SiteFileError("protected_area", "must be an array of tables: write each as [[protected_area]]")
    out = []
    for i, item in enumerate(items):
        prefix = f"protected_area {i + 1}"  # counted from 1, as a reader counts
        if not isinstance(item, dict):
            raise SiteFileError(prefix, f"must be a table [[protected_area]] (got {_show(item)})")
        _only(item, prefix, keys_of("protected_area"))
        name = _text(item, prefix, "name", required=True)
        kind = item.get("kind")
        if not _is_choice(kind, ("critical", "sensitive")):
            raise SiteFileError(f"{prefix}.kind", f'must be "critical" or "sensitive" (got {_show(kind)})')
        if "outline" in item:
            clash = [k for k in ("ahead", "behind", "toward_runway", "away") if k in item]
            if clash:
                raise SiteFileError(f"{prefix}.outline", "give either outline or ahead/behind/toward_runway/away")
            outline = _outline(item["outline"], f"{prefix}.outline", scale, units)
        else:
            kw = {"required": True, "unit": units, "above": 0.0, "at_most": 20_000.0}
            ahead = _number(item, prefix, "ahead", scale, **kw)
            toward = _number(item, prefix, "toward_runway", scale, **kw)
            kw = {"required": False, "unit": units, "at_least": 0.0, "at_most": 20_000.0}
            behind = _number(item, prefix, "behind", scale, **kw) or 0.0
            away = _number(item, prefix, "away", scale, **kw) or 0.0
            outline = ((-behind, -away), (ahead, -away), (ahead, toward), (-behind, toward))
        out.append(ProtectedArea(name, kind, outline))
    return tuple(out)


def _outline(value, name: str, scale: float, units: str) -> tuple[tuple[float, float], ...]:
    fix = f"a list of at least 3 [ahead, toward_runway] pairs in {units}, e.g. [[0, -30], [600, -30], [600, 150]]"
    if not isinstance(value, list) or len(value) < 3:
        raise SiteFileError(name, f"must be {fix}")
    points = []
    for pair in value:
        ok = (
            isinstance(pair, list)
            and len(pair) == 2
            and all(
                isinstance(v, (int, float))
                and not isinstance(v, bool)
                and math.isfinite(v)
                and abs(v) <= 20_000 / scale
                for v in pair
            )
        )
        if not ok:
            raise SiteFileError(name, f"must be {fix} (got {_show(pair)})")
        points.append((float(pair[0]) * scale, float(pair[1]) * scale))
    return tuple(points)


def _terrain(table, scale: float, units: str, base_dir: Path) -> TerrainSpec:
    if not isinstance(table, dict):
        raise SiteFileError("terrain", f"must be a table [terrain] (got {_show(table)})")
    _only(table, "terrain", keys_of("terrain"))
    paths = _dem_paths(table, base_dir)
    dem_datum = _datum(table, "terrain")
    offset = (
        _number(
            table,
            "terrain",
            "vertical_offset",
            scale,
            required=False,
            at_least=-1000.0,
            at_most=1000.0,
            unit=units,
        )
        or 0.0
    )
    vertical_unit = table.get("vertical_unit")
    if vertical_unit is not None and not _is_choice(vertical_unit, LENGTH_UNITS):
        raise SiteFileError("terrain.vertical_unit", f'must be "m" or "ft" (got {_show(vertical_unit)})')
    clearance = _number(
        table, "terrain", "min_clearance", scale, required=False, at_least=0.0, at_most=1000.0, unit=units
    )
    return TerrainSpec(paths[0], offset, vertical_unit, clearance if clearance is not None else 0.0, paths, dem_datum)


def _mast(mast: dict, scale: float, units: str, width_m: float, target_rdh_m) -> MastSpec:
    _only(mast, "mast", keys_of("mast"))
    base = _number(
        mast,
        "mast",
        "base_elevation",
        scale,
        required=False,
        at_least=_ELEVATION_LIMITS_M[0],
        at_most=_ELEVATION_LIMITS_M[1],
        unit=units,
    )
    if "position" in mast:
        clash = [k for k in ("side", "offset", "setback") if k in mast]
        if clash:
            raise SiteFileError(
                "mast.position",
                f"give either position or side/offset/setback, not both "
                f"(remove {', '.join('mast.' + k for k in clash)})",
            )
        position = _point(mast, "mast", "position", scale, units, elevation="absent")
        return MastSpec(position=position, base_elevation_m=base)
    side = mast.get("side")
    if side is None:
        raise SiteFileError(
            "mast.side", 'missing; "left" or "right" as seen by a pilot on approach (or give mast.position)'
        )
    if not _is_choice(side, SIDES):
        raise SiteFileError("mast.side", f'must be "left" or "right" (got {_show(side)})')
    offset_m = _number(mast, "mast", "offset", scale, required=True, above=0.0, at_most=_OFFSET_MAX_M, unit=units)
    if offset_m <= width_m / 2.0:
        raise SiteFileError(
            "mast.offset",
            f"{format_length(offset_m, units, 1)} puts the mast on the runway "
            f"(half-width {format_length(width_m / 2.0, units, 1)}); give the distance from the centre line",
        )
    setback_m = _number(
        mast,
        "mast",
        "setback",
        scale,
        required=target_rdh_m is None,
        above=0.0,
        unit=units,
        missing="missing; give mast.setback, or glide_path.target_rdh to solve it",
    )
    return MastSpec(side=side, offset_m=offset_m, setback_m=setback_m, base_elevation_m=base)


def _is_choice(value, allowed) -> bool:
    """True when ``value`` is a text among ``allowed`` (other types are never a choice)."""
    return isinstance(value, str) and value in allowed


def _array_choices() -> str:
    return "use one of " + ", ".join(f'"{n}"' for n in ARRAY_TYPES)


def _wrap(delta_lon_deg: float) -> float:
    return (delta_lon_deg + 180.0) % 360.0 - 180.0


def _show(value: Any) -> str:
    text = repr(value)
    return text if len(text) <= 40 else text[:37] + "..."


def _join(prefix: str, key: str) -> str:
    return f"{prefix}.{key}" if prefix else key


def _only(table: dict, prefix: str, allowed: tuple[str, ...]) -> None:
    for key in table:
        if key not in allowed:
            where = f"[{prefix}]" if prefix else "the top level"
            raise SiteFileError(_join(prefix, str(key)), f"unknown key in {where}; allowed: {', '.join(allowed)}")


def _table(doc: dict, name: str) -> dict:
    value = doc.get(name)
    if value is None:
        raise SiteFileError(name, f"missing table; add a [{name}] section")
    if not isinstance(value, dict):
        raise SiteFileError(name, f"must be a table [{name}] (got {_show(value)})")
    return value


def _text(table: dict, prefix: str, key: str, required: bool) -> str | None:
    value = table.get(key)
    if value is None:
        if required:
            raise SiteFileError(_join(prefix, key), "missing; give a text in quotes")
        return None
    if not isinstance(value, str):
        raise SiteFileError(_join(prefix, key), f"must be a text in quotes (got {_show(value)})")
    if required and not value.strip():
        raise SiteFileError(_join(prefix, key), "must not be empty")
    if any(ord(c) < 32 and c not in "\t\n" for c in value):
        raise SiteFileError(_join(prefix, key), "contains control characters; remove them")
    return value


def _number(
    table: dict,
    prefix: str,
    key: str,
    scale: float,
    *,
    required: bool,
    unit: str,
    above: float | None = None,
    at_least: float | None = None,
    at_most: float | None = None,
    missing: str | None = None,
) -> float | None:
    """A finite number, converted by ``scale``; bounds are in converted units."""
    name = _join(prefix, key)
    value = table.get(key)
    if value is None:
        if required:
            raise SiteFileError(name, missing or f"missing; give a number in {unit}")
        return None
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise SiteFileError(name, f"must be a number in {unit} (got {_show(value)})")
    if not math.isfinite(value):
        raise SiteFileError(name, f"must be a finite number in {unit} (got {_show(value)})")
    converted = float(value) * scale

    def bound(x: float) -> str:
        if unit in LENGTH_UNITS:  # the file's unit first, the other beside it
            return format_length(x, unit, 1)
        return f"{x / scale:g} {unit}"

    if above is not None and not converted > above:
        raise SiteFileError(name, f"must be greater than {bound(above)} (got {value:g})")
    if at_least is not None and converted < at_least:
        raise SiteFileError(name, f"must be at least {bound(at_least)} (got {value:g})")
    if at_most is not None and converted > at_most:
        raise SiteFileError(name, f"must be at most {bound(at_most)} (got {value:g})")
    return converted


def _point(table: dict, prefix: str, key: str, scale: float, units: str, elevation: str) -> GeoPoint:
    name = _join(prefix, key)
    value = table.get(key)
    if value is None:
        raise SiteFileError(
            name,
            "missing; give { lat = ..., lon = ..." + (", elevation = ... }" if elevation == "required" else " }"),
        )
    if not isinstance(value, dict):
        raise SiteFileError(name, f"must be an inline table {{ lat = ..., lon = ... }} (got {_show(value)})")
    _only(value, name, keys_of(name))
    lat = _number(value, name, "lat", 1.0, required=True, at_least=-90.0, at_most=90.0, unit="deg")
    if abs(lat) > 89.9:
        raise SiteFileError(_join(name, "lat"), f"{lat:g} deg is too close to a pole for a runway frame")
    lon = _number(value, name, "lon", 1.0, required=True, at_least=-180.0, at_most=180.0, unit="deg")
    elev = None
    if elevation != "absent":
        elev = _number(
            value,
            name,
            "elevation",
            scale,
            required=elevation == "required",
            at_least=_ELEVATION_LIMITS_M[0],
            at_most=_ELEVATION_LIMITS_M[1],
            unit=units,
        )
    return GeoPoint(lat, lon, elev)


#: Vertical datums a site file may name (see geo.ground.vertical_datum).
VERTICAL_DATUMS = ("EGM96", "EGM2008", "WGS84")
#: Largest geoid undulation accepted: EGM96 spans about -107 to +86 m (memory).
_UNDULATION_MAX_M = 150.0


def _dem_paths(table: dict, base_dir: Path) -> tuple[Path, ...]:
    """``terrain.dem``: one path or a list of tiles, each resolved against the site file's folder."""
    value = table.get("dem")
    if isinstance(value, list):
        if not value:
            raise SiteFileError("terrain.dem", 'is an empty list; give a raster or a list of tiles ["a.tif", "b.tif"]')
        names = []
        for i, item in enumerate(value, start=1):  # tiles counted from 1, as a reader counts
            if not isinstance(item, str):
                raise SiteFileError(f"terrain.dem tile {i}", f"must be a file path in quotes (got {_show(item)})")
            field_name = f"terrain.dem tile {i}"
            names.append(_text({field_name: item}, "", field_name, required=True))
    else:
        names = [_text(table, "terrain", "dem", required=True)]
    paths = []
    for i, name in enumerate(names):
        path = Path(name)
        if not path.is_absolute():
            path = base_dir / path
        field_name = "terrain.dem" if len(names) == 1 else f"terrain.dem tile {i + 1}"
        if not path.is_file():
            raise SiteFileError(field_name, f"no file at {path}; give the DEM's path, relative to the site file")
        if path in paths:
            raise SiteFileError(field_name, f"{path} is listed twice; give each tile once")
        paths.append(path)
    return tuple(paths)


def _datum(table: dict, prefix: str) -> str | None:
    value = table.get("vertical_datum")
    if value is None:
        return None
    if not _is_choice(value, VERTICAL_DATUMS):
        raise SiteFileError(
            f"{prefix}.vertical_datum",
            f'must be "EGM96", "EGM2008" or "WGS84" (ellipsoidal) (got {_show(value)})',
        )
    return value


def _survey_datum(runway: dict, scale: float, units: str) -> tuple[str | None, float | None]:
    """``runway.vertical_datum`` and ``runway.geoid_undulation`` (N, converted to metres)."""
    datum = _datum(runway, "runway")
    undulation = _number(
        runway,
        "runway",
        "geoid_undulation",
        scale,
        required=False,
        at_least=-_UNDULATION_MAX_M,
        at_most=_UNDULATION_MAX_M,
        unit=units,
    )
    if undulation is not None and datum is None:
        raise SiteFileError(
            "runway.geoid_undulation",
            'needs runway.vertical_datum ("EGM96", "EGM2008" or "WGS84"), the datum of the elevations',
        )
    return datum, undulation


def _objects(items, scale: float, units: str) -> tuple[ObjectSpec, ...]:
    """``[[object]]``: the scatterers whose critical and sensitive areas ``mastplan areas`` derives."""
    if not isinstance(items, list):
        raise SiteFileError("object", "must be an array of tables: write each as [[object]]")
    out = []
    for i, item in enumerate(items):
        prefix = f"object {i + 1}"  # counted from 1, as a reader counts
        if not isinstance(item, dict):
            raise SiteFileError(prefix, f"must be a table [[object]] (got {_show(item)})")
        _only(item, prefix, keys_of("object"))
        name, height, length, width, base, source, code = _object_sizes(item, prefix, scale, units)
        if base >= height:
            field_name = f"{prefix}.base" if "base" in item or "height" not in item else f"{prefix}.height"
            raise SiteFileError(field_name, "must be below the object's height (the top of the object)"
                                if field_name.endswith("base") else f"must be above the base of the code's object "
                                f"({format_length(base, units, 1)}); give base too")  # fmt: skip
        headings = item.get("headings", list(OBJECT_HEADINGS))
        if (
            not isinstance(headings, list)
            or not headings
            or not all(_is_choice(h, OBJECT_HEADINGS) for h in headings)
            or len(set(headings)) != len(headings)
        ):
            raise SiteFileError(
                f"{prefix}.headings", f'must be a list of distinct "along" and "across" (got {_show(headings)})'
            )
        out.append(ObjectSpec(name, height, length, width, base, tuple(headings), source, code))
    return tuple(out)


def _object_sizes(item: dict, prefix: str, scale: float, units: str):
    """An object's name and sizes: each given one, else its design code's (``code``), else required."""
    from geo.site.design_objects import DESIGN_OBJECTS, DESIGN_SOURCE

    code = item.get("code")
    design = None
    if code is not None:
        if not isinstance(code, str) or code not in DESIGN_OBJECTS:
            choices = ", ".join(f'"{c}"' for c in DESIGN_OBJECTS)
            raise SiteFileError(f"{prefix}.code", f"must be one of {choices} (got {_show(code)})")
        design = DESIGN_OBJECTS[code]
    name = _text(item, prefix, "name", required=design is None) or (design.what.split(" (")[0] if design else "")
    sizes = {}
    for key, above in (("height", 0.0), ("length", 0.0), ("width", None)):
        bounds = {"above": above} if above is not None else {"at_least": 0.0}
        value = _number(item, prefix, key, scale, required=design is None, unit=units, at_most=100.0, **bounds)
        sizes[key] = getattr(design, f"{key}_m") if value is None else value
    base = _number(item, prefix, "base", scale, required=False, unit=units, at_least=0.0, at_most=100.0)
    base = (design.base_m if design else 0.0) if base is None else base
    given = [k for k in ("height", "length", "width", "base") if k in item]
    if design is None:
        source = "site file"
    else:
        source = f"code {code}: {design.what}, {DESIGN_SOURCE}"
        source += f"; {', '.join(given)} from the site file" if given else ""
    return name, sizes["height"], sizes["length"], sizes["width"], base, source, code


def _areas(table, scale: float, units: str) -> AreaSpec:
    """``[areas]``: shares of the structure limit and the grid of object positions."""
    if table is None:
        return AreaSpec()
    if not isinstance(table, dict):
        raise SiteFileError("areas", f"must be a table [areas] (got {_show(table)})")
    _retired_areas_keys(table)
    _only(table, "areas", keys_of("areas"))
    d = AreaSpec()
    share = {"required": False, "unit": "(fraction of the limit)", "above": 0.0, "at_most": 1.0}
    critical = _number(table, "areas", "critical_share", 1.0, **share)
    sensitive = _number(table, "areas", "sensitive_share", 1.0, **share)
    critical = d.critical_share if critical is None else critical
    sensitive = d.sensitive_share if sensitive is None else sensitive
    if sensitive >= critical:
        raise SiteFileError(
            "areas.sensitive_share",
            f"must be below areas.critical_share ({critical:g}); the sensitive area holds the critical one",
        )
    grid = _number(table, "areas", "grid", scale, required=False, unit=units, at_least=1.0, at_most=200.0)
    extent = {"required": False, "unit": units, "at_least": 0.0, "at_most": 5000.0}
    values = {k: _number(table, "areas", k, scale, **extent) for k in ("ahead", "behind", "away", "beyond")}
    source = "site file [areas]" if "critical_share" in table or "sensitive_share" in table else d.shares_source
    return AreaSpec(
        critical,
        sensitive,
        d.grid_m if grid is None else grid,
        *(getattr(d, f"{k}_m") if v is None else v for k, v in values.items()),
        shares_source=source,
        max_extent_m=_max_extent(table, scale, units, d),
    )  # fmt: skip


def _retired_areas_keys(table) -> None:
    """``[areas] front_to_back_db`` moved to the element pattern of every field: a one-line error naming the new key."""
    if "front_to_back_db" in table:
        raise SiteFileError(
            "areas.front_to_back_db",
            "is no longer read: the element pattern now applies to every field (path, surface, areas); remove it "
            'and set [prediction] element = "generic" (front-to-back ratio 25 dB) or "isotropic", or give the '
            "ratio as [prediction] element_front_to_back_db",
        )


def _max_extent(table, scale: float, units: str, d: AreaSpec) -> float:
    """``[areas] max_extent``: how far from the mast the grid may grow (50 to 10,000 m)."""
    value = _number(table, "areas", "max_extent", scale, required=False, unit=units, at_least=50.0, at_most=10000.0)
    return d.max_extent_m if value is None else value


def _design_code(item: dict, prefix: str, required: bool) -> str | None:
    """A design code: one of :data:`geo.site.design_objects.DESIGN_OBJECTS`."""
    from geo.site.design_objects import DESIGN_OBJECTS

    code = item.get("code")
    if code is None and not required:
        return None
    if not isinstance(code, str) or code not in DESIGN_OBJECTS:
        choices = ", ".join(f'"{c}"' for c in DESIGN_OBJECTS)
        raise SiteFileError(f"{prefix}.code", f"must be one of {choices}, the largest user's code (got {_show(code)})")
    return code


def _lat_lon(item: dict, prefix: str) -> tuple[float, float]:
    lat = _number(item, prefix, "lat", 1.0, required=True, at_least=-89.9, at_most=89.9, unit="deg")
    lon = _number(item, prefix, "lon", 1.0, required=True, at_least=-180.0, at_most=180.0, unit="deg")
    return lat, lon


def _taxiway_tables(doc: dict) -> dict:
    """``[[taxiway]]`` and ``[[holding_position]]``: the taxiways ``mastplan areas`` follows, the holds it checks."""
    taxiways, holds = [], []
    for key, out in (("taxiway", taxiways), ("holding_position", holds)):
        items = doc.get(key, [])
        if not isinstance(items, list):
            raise SiteFileError(key, f"must be an array of tables: write each as [[{key}]]")
        for i, item in enumerate(items):
            prefix = f"{key} {i + 1}"
            if not isinstance(item, dict):
                raise SiteFileError(prefix, f"must be a table [[{key}]] (got {_show(item)})")
            _only(item, prefix, keys_of(key))
            out.append(_taxiway(item, prefix) if key == "taxiway" else _holding(item, prefix, taxiways))
    return {"taxiways": tuple(taxiways), "holding_positions": tuple(holds)}


def _taxiway(item: dict, prefix: str) -> TaxiwaySpec:
    name = _text(item, prefix, "name", required=True)
    line = item.get("line")
    if not isinstance(line, list) or len(line) < 2 or not all(isinstance(p, dict) for p in line):
        raise SiteFileError(f"{prefix}.line", "must be a list of at least two points [{ lat = ..., lon = ... }, ...]")
    points = []
    for k, point in enumerate(line):
        _only(point, f"{prefix}.line {k + 1}", ("lat", "lon"))
        points.append(_lat_lon(point, f"{prefix}.line {k + 1}"))
    if len(set(points)) < 2:
        raise SiteFileError(f"{prefix}.line", "must hold at least two different points")
    return TaxiwaySpec(name, tuple(points), _design_code(item, prefix, True))


def _holding(item: dict, prefix: str, taxiways: list) -> HoldingSpec:
    name = _text(item, prefix, "name", required=True)
    lat, lon = _lat_lon(item, prefix)
    taxiway = _text(item, prefix, "taxiway", required=False)
    code = _design_code(item, prefix, False)
    names = [t.name for t in taxiways]
    if taxiway is not None and taxiway not in names:
        known = ", ".join(f'"{n}"' for n in names) or "none given before it"
        raise SiteFileError(f"{prefix}.taxiway", f'names no [[taxiway]] above it (got "{taxiway}"; taxiways: {known})')
    if taxiway is None and code is None:
        raise SiteFileError(prefix, "give taxiway (a [[taxiway]] name) or code (the aircraft's code)")
    return HoldingSpec(name, lat, lon, taxiway, code)
