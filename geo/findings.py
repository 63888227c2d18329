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

from geo.units import M_PER_FT

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
    "check_roughness",
    "check_clearance",
    "check_zone_cover",
    "check_predicted_angle",
    "check_mast_clearance",
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


def _ft(value_m: float) -> str:
    return f"{value_m:.2f} m ({value_m / M_PER_FT:.1f} ft)"


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


def check_rdh(rdh_m: float, category: str, runway_code: int | None) -> Finding:
    """RDH against the Annex 10 band [1]_."""
    low, high, severity, rule = rdh_band_m(category, runway_code)
    if low - 1e-9 <= rdh_m <= high + 1e-9:
        return Finding("rdh", "pass", f"RDH {_ft(rdh_m)} is within {low:g}-{high:g} m ({rule}).")
    where = "below" if rdh_m < low else "above"
    return Finding("rdh", severity, f"RDH {_ft(rdh_m)} is {where} {low:g}-{high:g} m ({rule}).")


def check_target_rdh(rdh_m: float, target_rdh_m: float, tolerance_m: float = 0.05) -> Finding | None:
    """RDH against the site file's target, when both a setback and a target are given."""
    if abs(rdh_m - target_rdh_m) <= tolerance_m:
        return None
    return Finding(
        "rdh-target",
        "warning",
        f"RDH {_ft(rdh_m)} differs from the target {_ft(target_rdh_m)} by "
        f"{rdh_m - target_rdh_m:+.2f} m; move the mast or drop the setback to solve it.",
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


def check_typical_siting(setback_m: float, offset_m: float) -> list[Finding]:
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
                f"Mast {what} {_ft(value)} is {'within' if inside else 'outside'} the typical "
                f"{low / M_PER_FT:,.0f}-{high / M_PER_FT:,.0f} ft "
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


def check_gpip(gpip_along_m: float, runway_length_m: float) -> Finding | None:
    """The GPIP must lie on the runway."""
    if 0.0 <= gpip_along_m <= runway_length_m:
        return None
    return Finding(
        "gpip",
        "fail",
        f"The glide path meets the runway profile {_ft(gpip_along_m)} from the threshold, "
        f"off the {_ft(runway_length_m)} runway.",
    )


def check_base_elevation(site_file_m: float, dem_m: float, tolerance_m: float = 0.5) -> Finding:
    """The site file's mast ground against the DEM (more than 0.5 m apart: a warning)."""
    diff = site_file_m - dem_m
    if abs(diff) <= tolerance_m:
        return Finding(
            "base-elevation",
            "pass",
            f"Mast ground in the site file {_ft(site_file_m)} agrees with the DEM {_ft(dem_m)} "
            f"within {tolerance_m:g} m.",
        )
    return Finding(
        "base-elevation",
        "warning",
        f"Mast ground in the site file {_ft(site_file_m)} differs from the DEM {_ft(dem_m)} by "
        f"{diff:+.2f} m; check the survey, the DEM's vertical datum and terrain.vertical_offset. "
        "The study uses the DEM.",
    )


def check_roughness(verdicts) -> list[Finding]:
    """Roughness of the reflection zone against each criterion (see :mod:`geo.roughness`)."""
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
                f"Reflection zone RMS {v.rms_m:.3f} m against the {v.source} limit "
                f"{v.limit_m:.3f} m: {word} (margin {v.margin_m:+.3f} m).",
            )
        )
    return out


def check_clearance(min_clearance_m: float, along_m: float, required_m: float) -> Finding:
    """Smallest height of the straight path above the approach terrain."""
    where = f"{abs(along_m):,.0f} m before the threshold"
    if min_clearance_m >= required_m:
        return Finding(
            "clearance",
            "pass",
            f"The path clears the approach terrain by at least {_ft(min_clearance_m)} ({where}); "
            f"required {required_m:g} m (terrain.min_clearance).",
        )
    return Finding(
        "clearance",
        "fail",
        f"The path clears the approach terrain by only {_ft(min_clearance_m)} ({where}); "
        f"required {required_m:g} m (terrain.min_clearance). Obstacles are not in the DEM: "
        "survey them separately.",
    )


def check_zone_cover(cover) -> Finding:
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
        f"{cover.outside_percent:.1f} % ({cover.outside_m2:,.0f} m2) of the computed {cover.kind} zone "
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


def check_mast_clearance(clearance, spec) -> Finding:
    """The top of the mast against the inner transitional and transitional surfaces (Annex 14)."""
    import math

    top = float(clearance.top_height_m)
    margins = [
        (name, float(m))
        for name, m in (
            ("inner transitional", clearance.inner_transitional_margin_m),
            ("transitional", clearance.transitional_margin_m),
        )
        if math.isfinite(m)
    ]
    strip = (
        " It stands inside the runway strip: it must be frangible and as low as possible."
        if bool(clearance.in_strip)
        else ""
    )
    worst = min(margins, key=lambda x: x[1]) if margins else None
    if worst is not None and worst[1] < 0:
        return Finding(
            "mast-clearance",
            "warning",
            f"The top of the mast ({_ft(top)} above the centre line) penetrates the {worst[0]} surface "
            f"by {_ft(-worst[1])}; the mast must be frangible and the penetration agreed with the "
            f"authority.{strip} Surfaces: {spec.source}.",
        )
    clear = f"clears the {worst[0]} surface by {_ft(worst[1])}" if worst else "is below the surfaces' lower edges"
    return Finding(
        "mast-clearance",
        "info" if strip else "pass",
        f"The top of the mast ({_ft(top)} above the centre line) {clear}.{strip} Surfaces: {spec.source}.",
    )


def _long(value_m: float) -> str:
    return f"{value_m:,.0f} m ({value_m / M_PER_FT:,.0f} ft)"


def check_approach_clearance(
    min_clearance_m: float, along_m: float, required_m: float, covered_m: float, range_m: float = 18_520.0
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
    """
    found = check_clearance(min_clearance_m, along_m, required_m)
    if covered_m >= range_m - 1.0:
        return Finding(found.code, found.severity, f"{found.message} Checked over the whole {_long(range_m)} to 10 NM.")
    return Finding(
        found.code,
        "fail" if found.severity == "fail" else "warning",
        f"{found.message} Checked over {_long(covered_m)} of the {_long(range_m)} to 10 NM only: the DEM "
        "stops short, and the approach beyond it is unchecked; give a DEM that reaches 10 NM before "
        "the threshold, or check the terrain farther out another way.",
    )
