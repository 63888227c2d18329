"""A short human summary of a study, as text (the command line prints it)."""

from __future__ import annotations

from geo.study.findings import CAUTIONS
from geo.study.site_study import StudyResult
from geo.units import format_length

__all__ = ["summary_text", "past_or_before", "TCH_WORDS"]

#: The trade's name of the actual path over the threshold, said beside it on screen and in the report.
TCH_WORDS = "threshold crossing height (TCH)"


def _lengths(unit: str):
    """``_len(value_m, decimals)`` in the site file's unit first (:func:`geo.units.format_length`)."""

    def _len(value_m: float, decimals: int = 2) -> str:
        return format_length(value_m, unit, decimals)

    return _len


def summary_text(result: StudyResult) -> str:
    """Several lines: channel, mast, antennas, RDH, GPIP, findings, cautions."""
    spec, mast, runway = result.spec, result.mast, result.runway
    _len = _lengths(spec.units)
    ch = result.channel
    loc = f", paired with localizer {ch.localizer_mhz:.2f} MHz" if ch.localizer_mhz else ""
    lines = [
        f"Site: {spec.name}",
        f"Runway: true bearing {runway.true_bearing_deg:.4f} deg, length {_len(runway.length_m, 1)}",
        f"Glide path: {ch.glide_path_mhz:.2f} MHz{loc}; wavelength {_len(result.wavelength_m, 3)}; "
        f"angle {spec.angle_deg:g} deg; {spec.array} array",
        f"Mast: {mast.side} side, setback {_len(mast.setback_m, 1)} ({mast.setback_source}), "
        f"offset {_len(mast.offset_m, 1)}, ground {_len(mast.base_elevation_m)}",
        f"      at lat {mast.lat_deg:.7f}, lon {mast.lon_deg:.7f} (WGS 84)",
        "Antennas (height above the reflecting plane; shift toward the runway):",
    ]
    for a in result.antennas:
        lines.append(f"  {a.role:<7} height {_len(a.height_m, 3)}, shift {_len(a.shift_toward_runway_m, 3)}")
    lines += [
        f"RDH: {_len(result.rdh_m)}; actual path over the threshold, {TCH_WORDS}: "
        f"{_len(result.path_height_over_threshold_m)}",
        f"GPIP: {_len(abs(result.gpip.along_m), 1)} {past_or_before(result.gpip.along_m)} the threshold "
        f"(lat {result.gpip.lat_deg:.7f}, lon {result.gpip.lon_deg:.7f})",
    ]
    t = result.terrain
    if t is not None:
        lines += [
            f"Terrain ({result.terrain_source.dem_name}): forward slope {t.forward_slope_deg:+.3f} deg, "
            f"lateral slope {t.lateral_slope_deg:+.3f} deg, RPI {_len(t.rpi_elevation_m)}, "
            f"RMS about the plane {_len(t.plane.rms_residual_m, 3)} ({t.plane.samples:,} samples)",
            f"Approach: smallest path clearance {_len(result.profile.min_clearance_m)} "
            f"at {_len(result.profile.min_clearance_along_m, 0)} from the threshold",
        ]
    p, q = result.prediction, result.prediction_no_shift
    if p is not None:
        thr = spec.threshold.elevation_m
        base = mast.plane_elevation_m
        lines += [
            f"Predicted path (image theory): angle {p.path_angle_deg:.4f} deg, half-sectors "
            f"{p.half_sector_below_deg:.4f} deg below / {p.half_sector_above_deg:.4f} deg above, "
            f"RDH {_len(p.straight_fit[0] + base - thr)}, "
            f"over the threshold {_len(float(p.path_z_m[-1]) + base - thr)}",
            f"  without proximity shifts: over the threshold {_len(float(q.path_z_m[-1]) + base - thr)}",
        ]
    lines += surface_lines(result)
    lines += condition_lines(result)
    lines += ["Findings:"]
    lines += [f"  [{f.severity}] {f.message}" for f in result.findings]
    lines += ["Caution:"] + [f"  {c}" for c in CAUTIONS]
    return "\n".join(lines)


def surface_lines(result: StudyResult) -> list[str]:
    """The physical-optics prediction over the DEM surface, in one or two lines."""
    sp = result.surface
    if result.prediction is None:
        return []
    if sp is None:
        return [f"Surface prediction: skipped ({skipped_words(result.spec)})"]
    _len = _lengths(result.spec.units)
    base = result.mast.plane_elevation_m - result.spec.threshold.elevation_m
    worst = max(sp.structure, key=lambda s: s.bend_95_ddm / s.limit_ddm) if sp.structure else None
    bends = (
        f"largest 95 % bend {worst.bend_95_ddm:.4f} DDM ({worst.segment}, limit {worst.limit_ddm:.3f}"
        + ("" if worst.departure_95_ddm is None else f"; 95 % departure from image theory {worst.departure_95_ddm:.4f}")
        + ")"
        if worst
        else "no segment"
    )
    conv = sp.converged
    if not conv:
        verdict = "convergence not checked"
    elif conv.get("converged"):
        finest = conv["refine"]
        verdict = (
            "converged at one facet per DEM cell"
            if finest == 1.0
            else f"converged (facets down to 1/{finest:g} of the DEM cell)"
        )
    else:
        verdict = f"not converged: stopped by {conv['not_converged_because']} (see summary.json)"
    fitted = sp.fitted_angle_deg
    return [
        f"Predicted path over the DEM surface (physical optics): angle {fitted:.4f} deg fitted 2-10 NM "
        f"({sp.path_angle_deg:.4f} deg far away), half-sectors {sp.half_sector_below_deg:.4f} / "
        f"{sp.half_sector_above_deg:.4f} deg, RDH {_len(sp.straight_fit[0] + base)}",
        f"  {bends}; {verdict}",
    ]


def condition_lines(result: StudyResult) -> list[str]:
    """The path under each condition of ``[conditions]``, side by side with the file's ground (one row each)."""
    if not result.conditions or result.prediction is None:
        return []
    _len = _lengths(result.spec.units)
    p = result.prediction
    base = result.mast.plane_elevation_m - result.spec.threshold.elevation_m
    rows = [("the site file's ground (the study)", p.path_angle_deg, p.half_sector_below_deg, p.half_sector_above_deg,
             p.straight_fit[0] + base)]  # fmt: skip
    rows += [(c.condition.words(result.spec.units), c.path_angle_deg, c.half_sector_below_deg,
              c.half_sector_above_deg, c.rdh_m) for c in result.conditions]  # fmt: skip
    width = max(len(r[0]) for r in rows)
    lines = ["Conditions (image theory, the study's SBO level; half-sectors below / above the path):",
             f"  {'condition':<{width}}  angle deg  below deg  above deg  RDH"]  # fmt: skip
    lines += [f"  {r[0]:<{width}}  {r[1]:9.4f}  {r[2]:9.4f}  {r[3]:9.4f}  {_len(r[4])}" for r in rows]
    surfaces = [(result.surface, "the site file's ground (the study)")] + [
        (c.surface, c.condition.words(result.spec.units)) for c in result.conditions
    ]
    if all(sp is not None for sp, _ in surfaces):
        lines.append("  over the DEM surface, 95 % bends per segment (DDM):")
        for sp, words in surfaces:
            bends = ", ".join(f"{s.segment} {s.bend_95_ddm:.4f}" for s in sp.structure)
            lines.append(f"  {words:<{width}}  {bends}")
    return lines


def past_or_before(along_m: float) -> str:
    """Which side of the threshold a distance along the centre line lies: ``past`` or ``before``."""
    return "before" if along_m < 0.0 else "past"


def skipped_words(spec) -> str:
    """Why the surface prediction was skipped, in a few words for the screen and the report."""
    return "no DEM in the site file" if spec.terrain is None else "prediction.surface = false in the site file"
