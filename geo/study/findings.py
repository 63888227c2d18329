"""Checks of a study against the standards and the usual siting ranges.

Each check takes plain numbers and returns :class:`Finding` objects with a
severity: ``"pass"`` (a requirement met), ``"info"`` (worth knowing),
``"warning"`` (a recommendation not met, or a value to confirm) or ``"fail"``
(a standard not met). Findings inform a planner; they do not approve a site.

References
----------
.. [1] ICAO Annex 10, Volume I, 3.1.5.1.4-3.1.5.1.6: ILS reference datum
       height 15 m (50 ft) +3 m (10 ft) for Category II/III and recommended
       for Category I; 12 m (40 ft) +6 m (20 ft) recommended for Category I
       on code 1 and 2 runways (paragraph numbers from memory).
.. [2] ICAO Doc 8168 (PANS-OPS) Volume II: glide path angle 3 deg optimum,
       2.5-3.5 deg standard; steeper needs special approval.
.. [3] FAA Aeronautical Information Manual 1-1-9: glide path transmitter
       typically 750-1,250 ft from the approach end of the runway and
       250-650 ft from the centre line.
.. [4] ICAO Annex 10, Volume I, 3.1.5.2.1 and 3.1.6.1: glide path band and
       the paired channels.
"""

from __future__ import annotations

from dataclasses import dataclass

from geo.study.dem_causes import HeightKeys, likely_cause
from geo.units import M_PER_FT, format_area, format_length, format_number, to_unit

__all__ = [
    "Finding",
    "SEVERITIES",
    "CAUTIONS",
    "rdh_band_m",
    "check_rdh",
    "check_target_rdh",
    "check_angle",
    "check_typical_siting",
    "check_channel",
    "check_gpip",
    "check_base_elevation",
    "check_dem_threshold",
    "check_datum_keys",
    "dem_threshold_difference",
    "check_roughness",
    "check_clearance",
    "check_zone_cover",
    "check_predicted_angle",
    "check_mast_clearance",
    "check_below_path",
    "check_roughness_families",
    "check_plane_solve",
    "check_solved_setback",
    "check_approach_clearance",
]

SEVERITIES = ("pass", "info", "warning", "fail")

#: Shown with every study, in the summary, on screen and in the report.
CAUTIONS = (
    "mastplan is a planning aid. Antenna heights, offsets and the path are set and "
    "confirmed by flight inspection, not by this study.",
    "Follow the rules of the local aviation authority and licensed engineering practice; "
    "check every input and output before use.",
)

_TYPICAL_SETBACK_M = (750 * M_PER_FT, 1250 * M_PER_FT)
_TYPICAL_OFFSET_M = (250 * M_PER_FT, 650 * M_PER_FT)
_ANGLE_STANDARD_DEG = (2.5, 3.5)


@dataclass(frozen=True)
class Finding:
    """One check result.

    Attributes
    ----------
    code : str
        Stable identifier, e.g. ``"rdh"``.
    severity : str
        One of :data:`SEVERITIES`.
    message : str
        One sentence, with the source of the rule.
    """

    code: str
    severity: str
    message: str


def _ft(value_m: float, unit: str = "m", decimals: int = 2, signed: bool = False) -> str:
    """A length in the site file's unit first, the other beside it (:func:`geo.units.format_length`)."""
    return format_length(value_m, unit, decimals, signed)


def _band(low_m: float, high_m: float, unit: str = "m", decimals: int = 1) -> str:
    """A range of lengths, e.g. ``"15.0-18.0 m (49.2-59.1 ft)"``."""
    other = "m" if unit == "ft" else "ft"

    def text(u):
        return f"{format_number(to_unit(low_m, u), decimals)}-{format_number(to_unit(high_m, u), decimals)} {u}"

    return f"{text(unit)} ({text(other)})"


def rdh_band_m(category: str, runway_code: int | None) -> tuple[float, float, str, str]:
    """RDH band of Annex 10 for a category and runway code [1]_.

    Returns
    -------
    low_m, high_m : float
        Allowed band. [m]
    severity : str
        Severity when outside: ``"fail"`` for a standard, ``"warning"`` for a
        recommendation.
    rule : str
        The rule in words.
    """
    if category in ("II", "III"):
        return 15.0, 18.0, "fail", f"Annex 10 Vol I 3.1.5.1.4, Category {category}: 15 m +3 m (standard)"
    if runway_code in (1, 2):
        return (
            12.0,
            18.0,
            "warning",
            "Annex 10 Vol I 3.1.5.1.6, Category I on code 1-2: 12 m +6 m (recommended)",
        )
    return 15.0, 18.0, "warning", "Annex 10 Vol I 3.1.5.1.5, Category I: 15 m +3 m (recommended)"


def check_rdh(rdh_m: float, category: str, runway_code: int | None, unit: str = "m") -> Finding:
    """RDH against the Annex 10 band [1]_; lengths in ``unit`` first."""
    low, high, severity, rule = rdh_band_m(category, runway_code)
    if low - 1e-9 <= rdh_m <= high + 1e-9:
        return Finding("rdh", "pass", f"RDH {_ft(rdh_m, unit)} is within {_band(low, high, unit)} ({rule}).")
    where = "below" if rdh_m < low else "above"
    return Finding("rdh", severity, f"RDH {_ft(rdh_m, unit)} is {where} {_band(low, high, unit)} ({rule}).")


def check_target_rdh(rdh_m: float, target_rdh_m: float, tolerance_m: float = 0.05, unit: str = "m") -> Finding | None:
    """RDH against the site file's target, when both a setback and a target are given."""
    if abs(rdh_m - target_rdh_m) <= tolerance_m:
        return None
    return Finding(
        "rdh-target",
        "warning",
        f"RDH {_ft(rdh_m, unit)} differs from the target {_ft(target_rdh_m, unit)} by "
        f"{_ft(rdh_m - target_rdh_m, unit, signed=True)}; move the mast or drop the setback to solve it.",
    )


def check_angle(angle_deg: float) -> Finding:
    """Path angle against the PANS-OPS range [2]_."""
    low, high = _ANGLE_STANDARD_DEG
    if low <= angle_deg <= high:
        return Finding("angle", "pass", f"Path angle {angle_deg:g} deg is within {low:g}-{high:g} deg (PANS-OPS).")
    return Finding(
        "angle",
        "warning",
        f"Path angle {angle_deg:g} deg is outside {low:g}-{high:g} deg (PANS-OPS); "
        "it needs the authority's special approval.",
    )


def check_typical_siting(setback_m: float, offset_m: float, unit: str = "m") -> list[Finding]:
    """Setback and offset against the FAA AIM typical ranges [3]_ (not requirements)."""
    out = []
    for code, value, (low, high), what in (
        ("setback-typical", setback_m, _TYPICAL_SETBACK_M, "setback from the threshold"),
        ("offset-typical", offset_m, _TYPICAL_OFFSET_M, "offset from the centre line"),
    ):
        inside = low <= value <= high
        out.append(
            Finding(
                code,
                "pass" if inside else "info",
                f"Mast {what} {_ft(value, unit, 1)} is {'within' if inside else 'outside'} the typical "
                f"{_band(low, high, unit, 0)} "
                "(FAA AIM 1-1-9; a typical range, not a requirement).",
            )
        )
    return out


def check_channel(glide_path_mhz: float, localizer_mhz: float | None) -> Finding:
    """Whether the glide path frequency is one of the 40 paired channels [4]_."""
    if localizer_mhz is None:
        return Finding(
            "channel",
            "warning",
            f"{glide_path_mhz:.2f} MHz is in the glide path band but is not one of the 40 "
            "paired ILS channels (Annex 10 Vol I 3.1.6.1); confirm the frequency.",
        )
    return Finding(
        "channel",
        "pass",
        f"Glide path {glide_path_mhz:.2f} MHz pairs with localizer {localizer_mhz:.2f} MHz (Annex 10 Vol I 3.1.6.1).",
    )


def check_gpip(gpip_along_m: float, runway_length_m: float, unit: str = "m") -> Finding | None:
    """The GPIP must lie on the runway."""
    if 0.0 <= gpip_along_m <= runway_length_m:
        return None
    return Finding(
        "gpip",
        "fail",
        f"The glide path meets the runway profile {_ft(gpip_along_m, unit, 1)} from the threshold, "
        f"off the {_ft(runway_length_m, unit, 1)} runway.",
    )


def check_base_elevation(site_file_m: float, dem_m: float, tolerance_m: float = 0.5, unit: str = "m") -> Finding:
    """The site file's mast ground against the DEM (more than 0.5 m apart: a warning)."""
    diff = site_file_m - dem_m
    if abs(diff) <= tolerance_m:
        return Finding(
            "base-elevation",
            "pass",
            f"Mast ground in the site file {_ft(site_file_m, unit)} agrees with the DEM {_ft(dem_m, unit)} "
            f"within {_ft(tolerance_m, unit)}.",
        )
    return Finding(
        "base-elevation",
        "warning",
        f"Mast ground in the site file {_ft(site_file_m, unit)} differs from the DEM {_ft(dem_m, unit)} by "
        f"{_ft(diff, unit, signed=True)}; check the survey, the DEM's vertical datum and terrain.vertical_offset. "
        "The study uses the DEM.",
    )


def check_roughness(verdicts, unit: str = "m") -> list[Finding]:
    """Roughness of the reflection zone against each criterion (see :mod:`geo.ground.roughness`)."""
    out = []
    for v in verdicts:
        if v.smooth:
            severity = "pass"
        else:
            severity = "warning" if v.criterion == "rayleigh" else "info"
        word = "smooth" if v.smooth else "rough"
        out.append(
            Finding(
                f"roughness-{v.criterion}",
                severity,
                f"Reflection zone RMS {_ft(v.rms_m, unit, 3)} against the {v.source} limit "
                f"{_ft(v.limit_m, unit, 3)}: {word} (margin {_ft(v.margin_m, unit, 3, signed=True)}).",
            )
        )
    return out


def check_clearance(min_clearance_m: float, along_m: float, required_m: float, unit: str = "m") -> Finding:
    """Smallest height of the straight path above the approach terrain."""
    # Within half a metre of the threshold it is 0 in both units, never "-0" or "0 m (-1 ft)".
    where = f"{_ft(-along_m if abs(along_m) >= 0.5 else 0.0, unit, 0)} before the threshold"
    if min_clearance_m >= required_m:
        return Finding(
            "clearance",
            "pass",
            f"The path clears the approach terrain by at least {_ft(min_clearance_m, unit)} ({where}); "
            f"required {_ft(required_m, unit)} (terrain.min_clearance), margin "
            f"{_ft(min_clearance_m - required_m, unit, signed=True)}.",
        )
    return Finding(
        "clearance",
        "fail",
        f"The path clears the approach terrain by only {_ft(min_clearance_m, unit)} ({where}); "
        f"required {_ft(required_m, unit)} (terrain.min_clearance), margin "
        f"{_ft(min_clearance_m - required_m, unit, signed=True)}. Obstacles are not in the DEM: "
        "survey them separately.",
    )


def check_zone_cover(cover, unit: str = "m") -> Finding:
    """How much of a computed zone lies outside the site file's protected areas."""
    if cover.outside_percent < 0.05:
        return Finding(
            f"zone-cover-{cover.kind}",
            "pass",
            f"The protected areas cover the computed {cover.kind} zone of all antennas.",
        )
    return Finding(
        f"zone-cover-{cover.kind}",
        "warning",
        f"{cover.outside_percent:.1f} % ({format_area(cover.outside_m2, unit)}) of the computed {cover.kind} zone "
        "lies outside the protected areas of the site file; consider extending them.",
    )


def check_predicted_angle(predicted_deg: float, design_deg: float, tolerance_deg: float = 0.01) -> Finding:
    """The predicted far-field path angle against the design angle (image theory; no siting errors)."""
    diff = predicted_deg - design_deg
    words = (
        f"Predicted far-field path angle {predicted_deg:.4f} deg against the design {design_deg:g} deg "
        f"({diff:+.4f} deg; image theory over the reflecting plane, confirmed only by flight inspection)."
    )
    return Finding("predicted-angle", "pass" if abs(diff) <= tolerance_deg else "warning", words)


def _ofz_floor_words(part: str) -> str:
    if part == "strip":
        return "the strip between the inner transitional surfaces, at the centre line's elevation"
    return f"the {part}"


def check_mast_clearance(clearance, spec, unit: str = "m") -> Finding:
    """The top of the mast against the obstacle free zone and the transitional surface (Annex 14).

    A mast in the obstacle free zone (above the inner approach, inner transitional or balked
    landing surface, or standing in the strip between them) is a fail unless the site file says
    the authority accepts it (``[surfaces] allow_in_obstacle_free_zone = true``): only frangible
    objects that must stand there for air navigation may (Annex 14 Vol I, Chapter 1 and
    4.2.15-4.2.17, from memory). A penetration of the transitional surface is a warning. Every
    surface is named with its margin.

    Parameters
    ----------
    clearance : geo.airfield.surfaces.MastClearance
        One mast's clearance (scalars), with the obstacle free zone when the setback was given.
    spec : geo.airfield.surfaces.SurfaceSpec
        The surfaces used (their source is quoted).
    unit : {"m", "ft"}
        The site file's length unit, shown first.

    Returns
    -------
    Finding
        Code ``"mast-clearance"``.

    References
    ----------
    See :mod:`geo.airfield.surfaces`: ICAO Annex 14 Vol I, Chapter 1 (obstacle free zone), 4.1 and
    Table 4-1 (the surfaces), 4.2.15-4.2.17 and 9.9 (objects on the strip and in the zone); all
    from memory, to be confirmed against the edition in force.
    """
    import math

    top = float(clearance.top_height_m)
    lateral = getattr(clearance, "lateral_m", None)
    where = f" above the centre line, {_ft(float(lateral), unit, 1)} from it" if lateral is not None else ""
    head = f"The top of the mast ({_ft(top, unit)}{where})"
    parts = []
    ofz = getattr(clearance, "ofz_margin_m", None)
    in_ofz = False
    if ofz is not None:
        margin = float(ofz)
        if math.isfinite(margin):
            floor = _ofz_floor_words(str(clearance.ofz_part))
            in_ofz = margin < 0
            if in_ofz:
                parts.append(f"stands in the obstacle free zone: {_ft(-margin, unit)} above its floor, {floor}")
            else:
                parts.append(f"is {_ft(margin, unit)} below the obstacle free zone's floor, {floor}")
        else:
            parts.append("is beyond the obstacle free zone")
    else:
        inner = float(clearance.inner_transitional_margin_m)
        if math.isfinite(inner):
            word = "below" if inner >= 0 else "above"
            parts.append(f"is {_ft(abs(inner), unit)} {word} the inner transitional surface")
    trans = float(clearance.transitional_margin_m)
    if math.isfinite(trans):
        word = "below" if trans >= 0 else "above"
        parts.append(f"is {_ft(abs(trans), unit)} {word} the transitional surface")
    else:
        parts.append("the transitional surface does not reach it (it starts at the strip's edge)")
    strip = (
        " It stands inside the runway strip: it must be frangible and as low as possible."
        if bool(clearance.in_strip)
        else ""
    )
    inner_pen = ofz is None and float(clearance.inner_transitional_margin_m) < 0
    body = f"{head} {'; '.join(parts)}.{strip}"
    tail = f" Surfaces: {spec.source}."
    if in_ofz:
        allowed = bool(getattr(spec, "allow_in_obstacle_free_zone", False))
        rule = (
            " Only frangible objects that must stand there for air navigation may (Annex 14 Vol I, "
            "obstacle free zone, from memory)."
        )
        if allowed:
            return Finding(
                "mast-clearance",
                "warning",
                body + rule + " The site file says the authority accepts it "
                "([surfaces] allow_in_obstacle_free_zone = true): the mast must be frangible." + tail,
            )
        return Finding(
            "mast-clearance",
            "fail",
            body + rule + " Move the mast farther from the centre line or make it lower; where the authority "
            "accepts a frangible mast there, set [surfaces] allow_in_obstacle_free_zone = true." + tail,
        )
    if trans < 0 or inner_pen:
        return Finding(
            "mast-clearance",
            "warning",
            body + " The mast must be frangible and the penetration agreed with the authority." + tail,
        )
    return Finding("mast-clearance", "info" if strip else "pass", body + tail)


#: Offsets and setbacks a glide path mast plausibly has: half the lowest to twice the highest of the
#: FAA AIM 1-1-9 typical ranges [3]_ (the factor of two is common practice, no source).
_PLAUSIBLE_SETBACK_M = (_TYPICAL_SETBACK_M[0] / 2.0, _TYPICAL_SETBACK_M[1] * 2.0)
_PLAUSIBLE_OFFSET_M = (_TYPICAL_OFFSET_M[0] / 2.0, _TYPICAL_OFFSET_M[1] * 2.0)


def check_length_unit(setback_m: float, offset_m: float, unit: str) -> Finding | None:
    """A warning when the mast's setback or offset looks written in the other length unit.

    A value far outside every plausible range for the file's unit (half the lowest to twice the
    highest of the FAA AIM typical ranges [3]_) whose number, read in the other unit, falls in the
    typical range suggests a wrong ``units`` line: 120 "ft" (36.6 m) inside the strip of a code 4
    runway is 120 m, a usual offset.

    Parameters
    ----------
    setback_m, offset_m : float
        As the study uses them. [m]
    unit : {"m", "ft"}
        The site file's length unit.

    Returns
    -------
    Finding or None
    """
    other = "m" if unit == "ft" else "ft"
    suspects = []
    for key, value_m, plausible, typical in (
        ("mast.setback", setback_m, _PLAUSIBLE_SETBACK_M, _TYPICAL_SETBACK_M),
        ("mast.offset", offset_m, _PLAUSIBLE_OFFSET_M, _TYPICAL_OFFSET_M),
    ):
        if plausible[0] <= value_m <= plausible[1]:
            continue
        number = to_unit(value_m, unit)
        as_other_m = number * (M_PER_FT if other == "ft" else 1.0)
        if typical[0] <= as_other_m <= typical[1]:
            suspects.append(
                f"{key} = {format_number(number, 1)} is {_ft(value_m, unit, 1)}, far outside the plausible "
                f"{_band(*plausible, unit, 0)}, while {format_number(number, 1)} {other} would be typical"
            )
    if not suspects:
        return None
    return Finding(
        "length-unit",
        "warning",
        f'The length unit may be wrong: {"; ".join(suspects)}. The site file says units = "{unit}"; '
        f'if its lengths are in {other}, write units = "{other}" (FAA AIM 1-1-9 typical ranges; the '
        "plausible ranges are common practice, no source).",
    )


#: DEM and surveyed threshold further apart than this: one finding names the likely cause. [m]
DEM_MISMATCH_WARN_M = 5.0
#: Further apart than this: the study stops (no result could be right). [m]
DEM_MISMATCH_STOP_M = 100.0


def check_dem_threshold(dem_m: float, survey_m: float, keys: HeightKeys | None = None) -> Finding | None:
    """The DEM at the threshold against the surveyed threshold elevation, with the likely cause.

    A DEM that disagrees with the survey by more than a few metres at the threshold gives a wrong
    RDH by about as much. The size of the difference points at the cause, a site-file key
    (:func:`geo.study.dem_causes.likely_cause`): a ratio near 3.28 (the number of feet in a metre,
    NIST Handbook 44 App. C) is a DEM in feet read as metres; twice the published undulation is its
    sign; 15-40 m is a geoid height read as an ellipsoidal one or the reverse (h = H + N,
    Hofmann-Wellenhof and Moritz, *Physical Geodesy*, sec. 2.7); anything else a wrong offset or DEM.

    Parameters
    ----------
    dem_m : float
        DEM height at the threshold, in the site's datum (after unit, offset and datum). [m]
    survey_m : float
        Surveyed threshold elevation. [m]
    keys : HeightKeys, optional
        The site file's keys for the DEM's heights, for naming the one that looks wrong.

    Returns
    -------
    Finding or None
        ``"dem-threshold"`` warning, or ``None`` within :data:`DEM_MISMATCH_WARN_M`.
    """
    diff = dem_m - survey_m
    if not abs(diff) > DEM_MISMATCH_WARN_M:
        return None
    unit = keys.unit if keys is not None else "m"
    _, cause = likely_cause(dem_m, survey_m, keys)
    return Finding("dem-threshold", "warning", f"{dem_threshold_difference(dem_m, survey_m, unit)}: {cause}. "
                   "Every height of the study follows the DEM.")  # fmt: skip


def dem_threshold_difference(dem_m: float, survey_m: float, unit: str = "m") -> str:
    """``"The DEM at the threshold ... differs from the surveyed threshold elevation ... by ..."``."""
    diff = dem_m - survey_m
    return (
        f"The DEM at the threshold {_ft(dem_m, unit)} differs from the surveyed threshold elevation "
        f"{_ft(survey_m, unit)} by {_ft(diff, unit, signed=True)}"
    )


def check_datum_keys(dem_datum: str | None, survey_datum: str | None) -> Finding | None:
    """A warning when only one of ``terrain.vertical_datum`` and ``runway.vertical_datum`` is given.

    With one datum stated the DEM's heights are not converted
    (:func:`geo.ground.vertical_datum.datum_conversion`): the other is taken to be the same.

    Parameters
    ----------
    dem_datum, survey_datum : str or None
        ``terrain.vertical_datum`` and ``runway.vertical_datum``.

    Returns
    -------
    Finding or None
        ``"vertical-datum"`` warning, or ``None`` when both or neither are given.
    """
    if (dem_datum is None) == (survey_datum is None):
        return None
    if dem_datum is None:
        given, missing, other = (
            f'runway.vertical_datum = "{survey_datum}"',
            "terrain.vertical_datum",
            "the DEM's heights",
        )
    else:
        given, missing, other = (
            f'terrain.vertical_datum = "{dem_datum}"',
            "runway.vertical_datum",
            "the site file's elevations",
        )
    return Finding(
        "vertical-datum",
        "warning",
        f"{given} is given without {missing}: {other} are taken to be in {dem_datum or survey_datum} too and "
        f'the DEM is not converted; give {missing} ("EGM96", "EGM2008" or "WGS84") to say it.',
    )


#: Fewest DEM cells in the zone for a plane and a roughness verdict (issue 10; common practice, no source).
MIN_ZONE_CELLS = 30


def check_dem_resolution(cells: int, cell_size_m: float, zone_half_width_m: float) -> Finding | None:
    """Whether the DEM has enough cells in the zone the plane is fitted in.

    Samples are interpolated between cell centres, so a plane and an RMS resting on a few cells
    say little of the ground between them: a ditch narrower than a cell is invisible. Warn when
    the cell is wider than a third of the zone's half-width or fewer than :data:`MIN_ZONE_CELLS`
    cell centres lie in the zone (thresholds of issue 10; common practice, no source).

    Parameters
    ----------
    cells : int
        DEM cell centres inside the zone (each tile's own grid).
    cell_size_m : float
        DEM cell near the site. [m]
    zone_half_width_m : float
        Largest half-width of the zone. [m]
    """
    coarse = cell_size_m > zone_half_width_m / 3.0
    if not coarse and cells >= MIN_ZONE_CELLS:
        return None
    why = []
    if coarse:
        why.append(
            f"its cells of {_ft(cell_size_m)} are wider than a third of the zone's half-width {_ft(zone_half_width_m)}"
        )
    if cells < MIN_ZONE_CELLS:
        why.append(f"only {cells} cell centres lie in the zone (fewer than {MIN_ZONE_CELLS})")
    return Finding(
        "dem-resolution",
        "warning",
        f"The DEM is too coarse for the reflection zone: {' and '.join(why)}. The plane, the slopes and the "
        "roughness verdicts rest on too little data; a survey or lidar DEM with cells of 5 m (16 ft) or finer "
        "is needed.",
    )


_BELOW_PATH_RULE = "Annex 10 Vol I 3.1.5.6.5, from memory: confirm the edition in force"


def below_path_words(check) -> str:
    band = f"{check.down_to_fraction:.2f} theta"
    if check.reach_deg is None:
        return f"the DDM never reaches 0.22 between the path and 0.30 theta (DDM {check.ddm_at_down_to:.3f} at {band})"
    words = (
        f"the DDM reaches 0.22 at {check.reach_deg:.3f} deg ({check.reach_fraction:.3f} theta), "
        f"{'rising smoothly' if check.smooth else 'not rising smoothly'} from the path; lowest DDM "
        f"{check.lowest_ddm:.3f} at {check.lowest_at_deg:.3f} deg in the band down to {band}"
    )
    return words


def check_below_path(array: str, course, capture=None) -> list[Finding]:
    """The DDM below the path (:mod:`geo.radio.below_path`), per array; capture-effect with its clearance."""
    if course is None:
        return []
    scope = "far field, image theory over the reflecting plane; confirmed only by flight inspection"
    if capture is None:
        severity = "pass" if course.passed else "fail"
        return [
            Finding(
                "below-path",
                severity,
                f"Below the path ({array}): {below_path_words(course)} ({_BELOW_PATH_RULE}; {scope}).",
            )
        ]
    weak = (
        f"; its carrier is {-course.carrier_at_down_to_db:.1f} dB below its path level at "
        f"{course.down_to_fraction:.2f} theta and more than 10 dB below it from "
        f"{course.weak_carrier_below_deg:.3f} deg down, too weak to rely on without the clearance"
        if course.weak_carrier_below_deg is not None and course.carrier_at_down_to_db is not None
        else ""
    )
    combined = capture.combined
    d = capture.design
    return [
        Finding(
            "below-path-course-only",
            "info",
            f"Below the path, capture-effect course signal alone: {below_path_words(course)}{weak} ({scope}).",
        ),
        Finding(
            "below-path",
            "pass" if combined.passed else "fail",
            f"Below the path, capture-effect course with its clearance ({d.offset_hz / 1000:g} kHz offset carrier, "
            f"feeds derived in mastplan, capture margin {d.capture_margin_db:.1f} dB; envelope-detector capture): "
            f"{below_path_words(combined)} ({_BELOW_PATH_RULE}; {scope}).",
        ),
    ]


def check_roughness_families(families) -> Finding | None:
    """Rayleigh roughness for the strictest judged receiver family (see :mod:`geo.ground.roughness`)."""
    judged = [f for f in families if f.judged] if families else []
    if not judged:
        return None
    worst = max(judged, key=lambda f: f.grazing_deg)
    v = worst.verdicts[0]  # Rayleigh
    others = ", ".join(f"{f.name} {f.grazing_deg:.2f} deg" for f in families)
    return Finding(
        "roughness-families",
        "pass" if v.smooth else "warning",
        f"Strictest receiver family for roughness: {worst.description}, grazing angle {worst.grazing_deg:.2f} deg, "
        f"zone RMS {v.rms_m:.3f} m against the Rayleigh limit {v.limit_m:.3f} m: "
        f"{'smooth' if v.smooth else 'rough'} (families: {others}; judged where at least half of the "
        "family's first Fresnel zone lies in the fitted zone).",
    )


def _without_signed_zero(value: float, digits: int) -> float:
    """``value`` rounded to ``digits``, with a negative zero made 0 (so that it never prints as "-0")."""
    return round(value, digits) + 0.0


def check_plane_solve(
    status: str, spread_mm: float, bracket_deg: tuple[float, float], plane_slopes_deg: tuple[float, float]
) -> Finding | None:
    """The reflecting plane's solve, when it stopped on a bracket instead of a fixed point.

    DEM samples are fixed points, so the plane fitted in the zone jumps when a sample crosses the
    zone's edge; the forward slope may then have no exact fixed point, and the solve stops on the
    narrowest bracket of the jump (:mod:`geo.ground.plane_solve`). The finding says how far the antenna
    heights differ across it: an information below 10 mm, a warning from 10 mm (a threshold of
    mastplan, common practice, no source: heights are set to the centimetre and confirmed by flight
    inspection).
    """
    if status == "settled":
        return None
    low, high = sorted(bracket_deg)
    severity = "info" if spread_mm < 10.0 else "warning"
    return Finding(
        "plane-bracket",
        severity,
        f"The ground's forward slope has no exact fixed point: DEM samples cross the reflection zone's edge "
        f"between trial slopes {low:.4f} and {high:.4f} deg, where the fitted plane jumps from "
        f"{plane_slopes_deg[0]:.4f} to {plane_slopes_deg[1]:.4f} deg; the antenna heights differ by "
        f"{spread_mm:.1f} mm ({spread_mm / 25.4:.2f} in) across the jump. The end whose heights are nearer "
        "its own plane is used"
        + ("." if severity == "info" else "; a finer DEM or a survey of the zone would settle the heights."),
    )


def check_solved_setback(rdh_m: float, target_rdh_m: float, tolerance_m: float = 0.01) -> Finding | None:
    """The RDH at the setback solved for the target, when the solve could not meet the target.

    On a DEM the RDH jumps with the setback where the reflecting plane changes (samples crossing
    the zone's edge, or the zone moving onto other ground); the solve then keeps the setback whose
    RDH is nearest the target (:func:`geo.study.site_study.run_study`).
    """
    if abs(rdh_m - target_rdh_m) <= tolerance_m:
        return None
    return Finding(
        "rdh-target",
        "warning",
        f"RDH {_ft(rdh_m)} differs from the target {_ft(target_rdh_m)} by {rdh_m - target_rdh_m:+.2f} m at the "
        "solved setback: the RDH jumps with the setback here, as the reflecting plane changes with the zone; "
        "compare nearby setbacks (mastplan sweep) and give mast.setback.",
    )


def check_approach_clearance(
    min_clearance_m: float,
    along_m: float,
    required_m: float,
    covered_m: float,
    range_m: float = 18_520.0,
    unit: str = "m",
) -> Finding:
    """:func:`check_clearance`, saying how much of the approach the DEM covered.

    The approach to check reaches the coverage limit, 10 NM (18,520 m) before the threshold
    (Annex 10 Vol I 3.1.5.3.1). When the DEM stops short of it, the terrain farther out was not
    checked: a clearance that passes becomes a warning.

    Parameters
    ----------
    min_clearance_m, along_m, required_m : float
        As :func:`check_clearance`. [m]
    covered_m : float
        How far before the threshold the DEM reaches. [m]
    range_m : float
        How far the approach should be checked. [m]
    unit : {"m", "ft"}
        The site file's unit, shown first.
    """
    found = check_clearance(min_clearance_m, along_m, required_m, unit=unit)
    if covered_m >= range_m - 1.0:
        return Finding(
            found.code, found.severity, f"{found.message} Checked over the whole {_ft(range_m, unit, 0)} to 10 NM."
        )
    return Finding(
        found.code,
        "fail" if found.severity == "fail" else "warning",
        f"{found.message} Checked over {_ft(covered_m, unit, 0)} of the {_ft(range_m, unit, 0)} to 10 NM only: the DEM "
        "stops short, and the approach beyond it is unchecked; give a DEM that reaches 10 NM before "
        "the threshold, or check the terrain farther out another way.",
    )
