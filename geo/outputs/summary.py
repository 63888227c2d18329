"""The study summary as a plain dict (written as ``summary.json``).

Every length appears in metres and in feet: keys end in ``_m`` and gain an
``_ft`` twin through :func:`geo.units.with_foot_twins`.
"""

from __future__ import annotations

import cmath
import math
from pathlib import Path

import numpy as np

from geo.radio.arrays import array_type
from geo.study.findings import CAUTIONS
from geo.study.site_study import StudyResult
from geo.units import with_foot_twins
from geo.version import __version__

__all__ = [
    "summary_dict",
    "zone_figures",
    "below_path_dict",
    "roughness_families_dict",
    "share_value",
    "INFINITE_SHARE",
]

#: The frame of the surface prediction's integration area, as ``summary.json`` states it.
INTEGRATION_AREA_FRAME = (
    "mast frame: origin at the mast's foot, axes along and across the runway; ahead_of_mast is the distance "
    "along the runway from the mast toward the approach (the threshold is setback_m ahead), toward_runway the "
    "distance across it from the mast toward the centre line (the centre line is offset_m across)"
)

#: How an infinite share of a limit is written (JSON has no infinity; ``float("infinity")`` reads it back).
INFINITE_SHARE = "infinity"


def share_value(value: float) -> float | str | None:
    """A share of a limit for JSON: the number, ``"infinity"`` where it is infinite, None where not computed.

    Parameters
    ----------
    value : float
        The share (NaN where it was not computed).

    Returns
    -------
    float, str or None
    """
    if math.isnan(value):
        return None
    if math.isinf(value):
        return INFINITE_SHARE if value > 0 else "-" + INFINITE_SHARE
    return value


def zone_figures(zone) -> dict:
    """The figures of one reflection zone, as the summary and the zone layer give them (metres)."""
    return {
        "antenna": zone.antenna,
        "kind": zone.kind,
        "near_m": zone.shape.near_m,
        "far_m": zone.shape.far_m,
        "max_half_width_m": zone.shape.max_half_width_m,
        "area_m2": zone.shape.area_m2,
    }


def summary_dict(result: StudyResult, report_pdf: dict | None = None) -> dict:
    """Key figures of a study, with foot twins, ready for JSON.

    Parameters
    ----------
    result : StudyResult
    report_pdf : dict, optional
        ``{"written": bool, "reason": str}`` when ``report.pdf`` was asked for: recorded under
        ``report_pdf`` (the reason says why there is none).

    Returns
    -------
    dict
        Stable key order; no timestamps, so equal inputs give equal output.
    """
    spec = result.spec
    body = {
        "site": {"name": spec.name, "notes": spec.notes},
        "tool": {"name": "mastplan", "version": __version__},
        "input": {
            "file": Path(spec.source).name if spec.source else "",
            "sha256": spec.sha256,
            "units": spec.units,
        },
        "frequency_mhz": result.channel.glide_path_mhz,
        "localizer_mhz": result.channel.localizer_mhz,
        "wavelength_m": result.wavelength_m,
        "path_angle_deg": spec.angle_deg,
        "array": spec.array,
        "category": spec.category,
        "runway": _runway_dict(result),
        "mast": _mast_dict(result.mast),
        "antennas": _antennas_list(result),
        "rdh_m": result.rdh_m,
        "target_rdh_m": spec.target_rdh_m,
        "path_height_over_threshold_m": result.path_height_over_threshold_m,
        "gpip": _gpip_dict(result.gpip),
        "findings": [{"code": f.code, "severity": f.severity, "message": f.message} for f in result.findings],
        "reflection_zones": [{**zone_figures(z), "receivers": z.shape.receivers} for z in result.zones],
        "protected_areas": [{"name": a.name, "kind": a.kind} for a in result.spec.protected_areas],
        "zone_outside_protected_areas": _zone_covers_list(result),
        "cautions": list(CAUTIONS),
    }
    if result.prediction is not None:
        body["prediction"] = prediction_dict(result)
        body["prediction"]["surface"] = surface_dict(result)
        if result.buildings is not None:
            from geo.outputs.buildings_out import buildings_summary

            body["prediction"]["surface"]["buildings"] = buildings_summary(result)
    if result.terrain is not None:
        body["terrain"] = terrain_dict(result)
    if result.below_path is not None:
        body["below_path"] = below_path_dict(result)
    if result.roughness_families and "terrain" in body:
        body["terrain"]["roughness_by_family"] = roughness_families_dict(result.roughness_families)
    if result.conditions:
        body["conditions"] = conditions_list(result)
    if report_pdf is not None:
        body["report_pdf"] = dict(report_pdf)
    return with_foot_twins(body)


def conditions_list(result: StudyResult) -> list[dict]:
    """The path under each condition of ``[conditions]`` (metre keys), beside ``prediction`` for the file's ground."""
    from geo.radio.ground_constants import GROUND_CLASSES, GROUND_SOURCE, SNOW_SOURCE
    from geo.study.conditions import CONDITIONS_MODEL

    out = []
    for c in result.conditions:
        g = GROUND_CLASSES.get(c.condition.ground)
        out.append(
            {
                "snow_depth_m": c.condition.snow_depth_m,
                "snow": c.condition.snow,
                "ground": c.condition.ground,
                "ground_constants": None
                if g is None
                else {
                    "relative_permittivity": g.relative_permittivity,
                    "conductivity_siemens_per_metre": g.conductivity_s_m,
                },
                "prediction": {
                    "path_angle_deg": c.path_angle_deg,
                    "half_sector_below_deg": c.half_sector_below_deg,
                    "half_sector_above_deg": c.half_sector_above_deg,
                    "rdh_m": c.rdh_m,
                },
                "surface": _condition_surface(c.surface),
                "model": CONDITIONS_MODEL,
                "sources": {"ground": GROUND_SOURCE, "snow": SNOW_SOURCE},
            }
        )
    return out


def _condition_surface(sp) -> dict | None:
    """A condition's path over the surface: its angles and structure per segment (None without one)."""
    if sp is None:
        return None
    segments = [
        {"segment": s.segment, "from_m": s.from_m, "to_m": s.to_m, "limit_ddm": s.limit_ddm,
         "bend_95_ddm": s.bend_95_ddm, "pass": s.passed, "departure_95_ddm": s.departure_95_ddm}
        for s in sp.structure
    ]  # fmt: skip
    return {
        "path_angle_deg": _finite(sp.path_angle_deg),
        "fitted_path_angle_deg": _finite(sp.fitted_angle_deg),
        "half_sector_below_deg": _finite(sp.half_sector_below_deg),
        "half_sector_above_deg": _finite(sp.half_sector_above_deg),
        "structure": segments,
        "converged": "not checked (one facet per DEM cell, as the study's first sampling)",
    }


def _runway_dict(result: StudyResult) -> dict:
    """The runway: bearing, length, width, gradient, code number, threshold and end, magnetic bearing (metre keys)."""
    spec, runway = result.spec, result.runway
    body = {
        "true_bearing_deg": runway.true_bearing_deg,
        "length_m": runway.length_m,
        "width_m": runway.width_m,
        "gradient_percent": runway.gradient * 100.0,
        "code": spec.runway_code,
        "threshold": {
            "lat": spec.threshold.lat_deg,
            "lon": spec.threshold.lon_deg,
            "elevation_m": spec.threshold.elevation_m,
        },
        "end": {"lat": spec.end.lat_deg, "lon": spec.end.lon_deg, "elevation_m": spec.end.elevation_m},
    }
    if result.magnetic is not None:
        body["magnetic"] = _magnetic_dict(result)
    return body


def _magnetic_dict(result: StudyResult) -> dict:
    """The landing direction's magnetic bearing, the variation with its model and date, the designator."""
    mag, spec = result.magnetic, result.spec
    v = mag.variation
    return {
        "designator": mag.designator,
        "magnetic_bearing_deg": mag.magnetic_bearing_deg,
        "bearing_designator": f"{mag.bearing_number:02d}",
        "variation_east_deg": v.variation_deg,
        "variation_change_deg_per_year": v.annual_change_deg,
        "model": v.model,
        "model_epoch_year": v.model_epoch_year,
        "date": spec.magnetic_date.isoformat() if spec.magnetic_date is not None else None,
        "date_year": v.date_year,
        "date_source": mag.date_source,
        "variation_unreliable": v.unreliable,
    }


def _mast_dict(mast) -> dict:
    """The mast: position, placement and ground, each with where it came from (metre keys)."""
    return {
        "lat": mast.lat_deg,
        "lon": mast.lon_deg,
        "side": mast.side,
        "setback_m": mast.setback_m,
        "setback_source": mast.setback_source,
        "offset_m": mast.offset_m,
        "base_elevation_m": mast.base_elevation_m,
        "base_elevation_source": mast.base_elevation_source,
        "site_file_base_elevation_m": mast.site_file_base_elevation_m,
        "plane_elevation_m": mast.plane_elevation_m,
    }


def _antennas_list(result: StudyResult) -> list[dict]:
    """Every antenna, lowest first: height, shift, offset, elevation and position (metre keys)."""
    return [
        {
            "role": a.role,
            "height_m": a.height_m,
            "shift_toward_runway_m": a.shift_toward_runway_m,
            "offset_m": a.offset_m,
            "elevation_m": a.elevation_m,
            "height_above_ground_m": a.elevation_m - result.mast.base_elevation_m,
            "lat": a.lat_deg,
            "lon": a.lon_deg,
        }
        for a in result.antennas
    ]


def _gpip_dict(gpip) -> dict:
    """The GPIP: distance past the threshold, elevation and position (metre keys)."""
    return {
        "along_m": gpip.along_m,
        "elevation_m": gpip.elevation_m,
        "lat": gpip.lat_deg,
        "lon": gpip.lon_deg,
    }


def _zone_covers_list(result: StudyResult) -> list[dict]:
    """The part of each kind's zone outside the protected areas (metre keys)."""
    return [
        {
            "kind": c.kind,
            "zone_area_m2": c.zone_area_m2,
            "outside_m2": c.outside_m2,
            "outside_percent": c.outside_percent,
        }
        for c in result.zone_covers
    ]


def terrain_dict(result: StudyResult) -> dict:
    """The terrain part of the summary (metre keys; twins are added by the caller)."""
    out = _terrain_body(result)
    if result.terrain_source.tile_agreement is not None:  # tiles only: one raster's summary stays as it was
        out["tiles"] = tiles_dict(result.terrain_source.tile_agreement)
    return out


def tiles_dict(agreement) -> dict:
    """How the DEM's tiles agree over the part the study read (metre keys)."""
    from geo.study.tile_checks import TILE_TOLERANCE_M, TILE_TOLERANCE_SOURCE

    def where(d, points_key):
        if d is None:
            return None
        return {"tiles": [d.tile, d.other], "difference_m": d.difference_m, "lat": d.lat_deg, "lon": d.lon_deg,
                points_key: d.points}  # fmt: skip

    return {
        "count": len(agreement.names),
        "largest_overlap_disagreement": where(agreement.overlap, "overlap_cell_centres_compared"),
        "largest_seam_step": where(agreement.seam, "seam_points_compared"),
        "tolerance_m": TILE_TOLERANCE_M,
        "tolerance_source": TILE_TOLERANCE_SOURCE,
        "method": "overlap: each tile's cell heights minus the other tile's bilinear heights at those cell centres; "
        "seam: each tile's edge cells extended linearly to its boundary minus the neighbour's, extended from its "
        "side; difference_m is the first of tiles minus the second; over the box of every point the study "
        "sampled, heights in the survey's datum",
    }


def _terrain_body(result: StudyResult) -> dict:
    """The terrain part of the summary but the tiles (metre keys)."""
    t, p, src = result.terrain, result.profile, result.terrain_source
    return {
        "dem": src.dem_name,
        "vertical_unit_source": src.vertical_unit_source,
        "vertical_datum": src.vertical_datum or "not stated by the DEM",
        "vertical_offset_m": src.vertical_offset_m,
        "datum_caution": _datum_caution(src),
        "vertical_datum_conversion": datum_conversion_dict(src),
        "dem_cells_in_zone": src.cells_in_zone,
        "dem_at_threshold_m": src.dem_threshold_m,
        "cell_size_m": t.cell_size_m,
        "sample_spacing_m": t.sample_spacing_m,
        "forward_slope_deg": t.forward_slope_deg,
        "forward_slope_percent": 100.0 * t.plane.forward_gradient,
        "lateral_slope_deg": t.lateral_slope_deg,
        "lateral_slope_percent": 100.0 * t.plane.lateral_gradient,
        "plane_elevation_at_mast_m": t.plane.elevation_at_mast_m,
        "ground_at_mast_m": t.ground_at_mast_m,
        "rpi_elevation_m": t.rpi_elevation_m,
        "grazing_angle_deg": t.grazing_deg,
        "rms_residual_m": t.plane.rms_residual_m,
        "max_abs_residual_m": t.plane.max_abs_residual_m,
        "samples": t.plane.samples,
        "iterations": t.iterations,
        "forward_slope_solution": {
            "status": t.solve_status,
            "evaluations": t.evaluations,
            "lateral_gradient_updates": t.lateral_passes,
            "zone_slope_deg": t.zone_slope_deg,
            "bracket_slopes_deg": list(t.slope_bracket_deg),
            "bracket_plane_slopes_deg": list(t.bracket_plane_slopes_deg),
            "height_spread_mm": t.height_spread_mm,
            "method": "fixed point of the forward slope by bracketing (Illinois regula falsi with bisection); "
            "on a jump, the bracket end whose heights are nearer its own plane",
        },
        "zone": {
            "kind": "union of the exact first Fresnel zones of the antennas that set the path, receivers on "
            "the path to 10 NM",
            "antennas": [array_type(result.spec.array).roles[i] for i in t.fit_antennas],
            "lowest_antenna_zone_forward_slope_deg": _finite(t.lowest_zone_forward_slope_deg),
            "slope_change_against_lowest_zone_deg": _finite(t.forward_slope_deg - t.lowest_zone_forward_slope_deg),
            "near_m": t.zone.near_m,
            "far_m": t.zone.far_m,
            "max_half_width_m": t.zone.max_half_width_m,
            "area_m2": t.zone.area_m2,
        },
        "roughness": {
            v.criterion: {
                "limit_m": v.limit_m,
                "rms_m": v.rms_m,
                "margin_m": v.margin_m,
                "verdict": "smooth" if v.smooth else "rough",
                "source": v.source,
            }
            for v in t.roughness
        },
        "min_clearance_m": p.min_clearance_m,
        "min_clearance_along_m": p.min_clearance_along_m,
        "required_clearance_m": result.spec.terrain.min_clearance_m,
        "profile_start_along_m": float(p.along_m[0]),
    }


def _feed_list(feeds) -> list[dict]:
    return [{"amplitude": abs(f), "phase_deg": math.degrees(cmath.phase(f)) if abs(f) > 0 else 0.0} for f in feeds]


def _element_dict(prediction_spec) -> dict:
    """The antennas' element pattern (``[prediction] element``, :mod:`geo.radio.element`)."""
    from geo.radio.element import element_for

    return element_for(prediction_spec.element, prediction_spec.element_front_to_back_db).summary()


def prediction_dict(result: StudyResult) -> dict:
    """The predicted-path part of the summary (metre keys; twins added by the caller)."""
    p, q = result.prediction, result.prediction_no_shift
    thr = result.spec.threshold.elevation_m
    base = result.mast.plane_elevation_m
    csb, sbo, source = result.feeds
    ratio = abs(p.sbo_scale) * math.sqrt(sum(abs(f) ** 2 for f in sbo) / sum(abs(f) ** 2 for f in csb))
    spec = result.spec.prediction

    def heights(pred) -> dict:
        return {
            "rdh_m": pred.straight_fit[0] + base - thr,
            "path_height_over_threshold_m": float(pred.path_z_m[-1]) + base - thr,
        }

    return {
        "path_angle_deg": p.path_angle_deg,
        "half_sector_below_deg": p.half_sector_below_deg,
        "half_sector_above_deg": p.half_sector_above_deg,
        "half_sector_below_fraction": p.half_sector_below_deg / result.spec.angle_deg,
        "half_sector_above_fraction": p.half_sector_above_deg / result.spec.angle_deg,
        **heights(p),
        "sbo_csb_ratio": ratio,
        "sbo_csb_ratio_db": 20.0 * math.log10(ratio) if ratio > 0 else None,
        "sbo_phase_reversed": p.sbo_scale < 0,
        "geometric_rdh_m": result.rdh_m,
        "geometric_path_height_over_threshold_m": result.path_height_over_threshold_m,
        "without_shifts": {
            **heights(q),
            "path_angle_deg": q.path_angle_deg,
            "largest_difference_near_threshold_m": float(np.max(np.abs(q.path_z_m - p.path_z_m)[p.along_m >= -1852.0])),
        },
        "feeds": {"csb": _feed_list(csb), "sbo": _feed_list(sbo), "source": source},
        "slope_phasing_deg": [float(v) for v in p.slope_phases_deg],
        "ground": (
            "perfect conductor (reflection coefficient -1)"
            if spec.relative_permittivity is None
            else f"relative permittivity {spec.relative_permittivity:g}, conductivity {spec.conductivity_s_m:g} S/m"
        ),
        "ddm_at_half_sector": 0.0875,
        "tone_modulation_percent": 40.0,
        "element": _element_dict(spec),
        "model": "CSB/SBO course signals by image theory over the reflecting plane; clearance signals, "
        "multipath from objects and receiver effects are out of scope.",
    }


def _datum_caution(src) -> str:
    conversion = src.datum_conversion
    if conversion is None or conversion.dem_datum is None or conversion.survey_datum is None:
        return (
            "DEM heights must be in the vertical datum of the surveyed threshold and end elevations; "
            "without runway.vertical_datum and terrain.vertical_datum mastplan converts no vertical datum "
            "(use terrain.vertical_offset)."
        )
    return (
        f"DEM heights ({conversion.dem_datum}) are converted into the site file's datum ({conversion.survey_datum}) "
        "as stated under vertical_datum_conversion; check both datums against the survey report."
    )


def datum_conversion_dict(src) -> dict:
    """The vertical datum conversion applied to the DEM and its size at the mast (metre keys)."""
    conversion = src.datum_conversion
    if conversion is None:
        return {"applied": False, "description": "none", "shift_at_mast_m": 0.0}
    return {
        "applied": conversion.applied,
        "from": conversion.dem_datum,
        "to": conversion.survey_datum,
        "method": conversion.method,
        "grids": list(conversion.grids),
        "geoid_undulation_m": conversion.undulation_m,
        "description": conversion.describe(),
        "shift_at_mast_m": src.datum_shift_at_mast_m,
    }


def _finite(value):
    return value if value is None or math.isfinite(value) else None


def _below_path_check(c) -> dict:
    return {
        "reach_deg": c.reach_deg,
        "reach_fraction": c.reach_fraction,
        "smooth": c.smooth,
        "lowest_ddm": _finite(c.lowest_ddm),
        "lowest_at_deg": c.lowest_at_deg,
        "ddm_at_down_to": _finite(c.ddm_at_down_to),
        "pass": c.passed,
    }


def below_path_dict(result: StudyResult) -> dict:
    """The below-path block: Annex 10 Vol I 3.1.5.6.5 (from memory) on the image model (metre keys)."""
    c, cap, spec = result.below_path, result.capture_effect, result.spec.prediction
    out = {
        "rule": "DDM below the path rises smoothly to 0.22, reached not below 0.30 theta, and stays at or "
        "above 0.22 down to 0.45 theta, or down to 0.30 theta where the intercept procedure needs it "
        "(ICAO Annex 10 Vol I 3.1.5.6.5, from memory: confirm the edition in force)",
        "down_to_fraction": c.down_to_fraction,
        "down_to_source": "site file (prediction.below_path_down_to)" if spec.below_path_down_to_set else "default",
        "course": {
            **_below_path_check(c),
            "carrier_at_down_to_db": c.carrier_at_down_to_db,
            "weak_carrier_below_deg": c.weak_carrier_below_deg,
            "weak_carrier_db": 10.0,
        },
        "clearance": None,
        "model": "far field on the course, image theory over the reflecting plane; a prediction, confirmed only "
        "by flight inspection",
    }
    if cap is not None:
        d = cap.design
        out["clearance"] = {
            "offset_hz": d.offset_hz,
            "offset_source": "two-frequency carriers 4-32 kHz apart (Annex 10 Vol I 3.1.5.2.1, from memory); "
            "8 kHz is mastplan's pick",
            "wavelength_m": d.wavelength_m,
            "feeds": {"csb": _feed_list(d.csb_feed), "sbo": _feed_list(d.sbo_feed), "source": d.source},
            "capture_margin_db": d.capture_margin_db,
            "detector": "linear envelope detector, the 8 kHz beat filtered out: the stronger carrier captures "
            "the tones (weaker carrier's share about x^2/2 for amplitude ratio x)",
            "combined": _below_path_check(cap.combined),
            "combined_path_angle_deg": cap.combined_path_angle_deg,
            "combined_ddm_at_half_sector": cap.combined_ddm_at_half_sector,
            "course_ddm_at_down_to": cap.course_ddm_at_down_to,
            "clearance_ddm_at_down_to": cap.clearance_ddm_at_down_to,
        }
    return out


def roughness_families_dict(families) -> list[dict]:
    """Roughness per receiver family, each with its own grazing angle (metre keys)."""
    worst = max((f for f in families if f.judged), key=lambda f: f.grazing_deg, default=None)
    return [
        {
            "family": f.name,
            "description": f.description,
            "grazing_angle_deg": f.grazing_deg,
            "share_of_family_zone_in_fitted_zone": f.zone_share,
            "judged_by_fitted_zone": f.judged,
            "strictest": f is worst,
            "criteria": {
                v.criterion: {
                    "limit_m": v.limit_m,
                    "margin_m": v.margin_m,
                    "verdict": "smooth" if v.smooth else "rough",
                }
                for v in f.verdicts
            },
        }
        for f in families
    ]


def surface_dict(result: StudyResult) -> dict:
    """The path over the DEM surface (physical optics), or why it was skipped (metre keys)."""
    from geo.radio.structure_limits import LIMITS_SOURCE
    from geo.study.surface import skipped_reason

    sp = result.surface
    if sp is None:
        return {"skipped": skipped_reason(result.spec)}
    base = result.mast.plane_elevation_m
    thr = result.spec.threshold.elevation_m
    u0, u1, w0, w1 = sp.area_m

    def finite(value):  # None where no crossing was found (JSON has no NaN)
        return value if math.isfinite(value) else None

    return {
        "path_angle_deg": finite(sp.path_angle_deg),
        "half_sector_below_deg": finite(sp.half_sector_below_deg),
        "half_sector_above_deg": finite(sp.half_sector_above_deg),
        "rdh_m": finite(sp.straight_fit[0] + base - thr),
        "fitted_path_angle_deg": finite(sp.fitted_angle_deg),
        "fit_from_m": sp.fit_range_m[0],
        "fit_to_m": sp.fit_range_m[1],
        "approach_step_m": float(np.max(np.diff(sp.approach_along_m))) if sp.approach_along_m is not None else None,
        "shadowing": sp.shadowing,
        "without_shadowing": {k: finite(v) for k, v in sp.unshadowed.items()} if sp.unshadowed else None,
        "dem_noise": {
            "treated_as": sp.noise,
            "noise_sigma_m": sp.noise_sigma_m,
            "roughness_removed_rms_m": sp.roughness_m,
        },
        "converged": sp.converged,
        "structure": [
            {
                "segment": s.segment,
                "from_m": s.from_m,
                "to_m": s.to_m,
                "limit_ddm": s.limit_ddm,
                "bend_95_ddm": s.bend_95_ddm,
                "pass": s.passed,
                "departure_95_ddm": s.departure_95_ddm,
                "reference": s.reference,
                "largest_gap_m": s.largest_gap_m,
                "well_sampled": s.well_sampled,
            }
            for s in sp.structure
        ],
        "limits_source": LIMITS_SOURCE,
        "method": "image over the plane + [PO(surface) - PO(plane)], same facets and tapers"
        if sp.method == "difference"
        else "direct + PO(surface)",
        "facets": sp.facets,
        "integration_area": {
            "frame": INTEGRATION_AREA_FRAME,
            "ahead_of_mast_from_m": u0,
            "ahead_of_mast_to_m": u1,
            "toward_runway_from_m": w0,
            "toward_runway_to_m": w1,
        },
        "off_dem_fraction": sp.off_dem_fraction,
        "below_path": {"computed": False, "reason": sp.below_path}
        if isinstance(sp.below_path, str)
        else ({"computed": True, **_below_path_check(sp.below_path)} if sp.below_path is not None else None),
        "notes": list(sp.notes),
        "against_limits": surface_limits_dict(result.surface_sector),
        "ground_beyond_area": ground_beyond_dict(result.ground_beyond),
        "caution": "A physical-optics prediction over the DEM as given; confirmed only by flight inspection.",
    }


def _figure_against_limits(fig) -> dict:
    """One figure: value, designed value, and per limit its interval, margin and share left (unit in the keys)."""

    def number(value):
        return value if math.isfinite(value) else None

    suffix = {"deg": "_deg", "m": "_m"}.get(fig.unit, "")
    return {
        f"value{suffix}": number(fig.value),
        f"designed{suffix}": fig.nominal,
        "severity": fig.severity,
        "limits": [
            {
                "kind": b.kind,
                f"low{suffix}": b.low,
                f"high{suffix}": b.high,
                f"margin{suffix}": number(fig.margin(b)),
                "share_of_allowance_left": share_value(fig.share_left(b)),
                "severity_outside": b.broken,
                "warns_when_near": b.warn_near,
                "source": b.source,
            }
            for b in fig.bounds
        ],
    }


def surface_limits_dict(sector) -> dict | None:
    """The surface path's angle, half-sectors, asymmetry and RDH against their limits (metre keys)."""
    from geo.study.surface_sector import ASYMMETRY_LIMIT, SURFACE_CAUTION, WARN_SHARE_LEFT

    if sector is None:
        return None
    theta = sector.design_angle_deg
    figures = {f.name: _figure_against_limits(f) for f in sector.figures}
    figures["path_angle"].update(
        fitted_from=sector.fitted_source,
        fit_from_m=sector.fit_range_m[0],
        fit_to_m=sector.fit_range_m[1],
        far_field_deg=_finite(sector.far_angle_deg),
        error_deg=_finite(sector.fitted_angle_deg - theta),
        error_fraction_of_theta=_finite((sector.fitted_angle_deg - theta) / theta),
    )
    for name in ("half_sector_below", "half_sector_above"):
        value = sector.figure(name).value
        figures[name]["fraction_of_theta"] = _finite(value / theta)
    figures["asymmetry"]["definition"] = "(above - below) / (above + below) of the half-sectors"
    figures["asymmetry"]["limit"] = ASYMMETRY_LIMIT
    figures["rdh"]["image_prediction_rdh_m"] = sector.image_rdh_m
    return {
        **figures,
        "worst_bend_share_of_limit": share_value(sector.worst_bend_share),
        "severity": sector.severity,
        "margins": "margin: distance from the value to the end of the limit on its side of the designed value "
        "(negative beyond it); share_of_allowance_left: the margin over the distance from the designed value to that "
        "end",
        "warning_share_left": WARN_SHARE_LEFT,
        "warning_rule": f"a warning where less than {WARN_SHARE_LEFT:.0%} of an allowance is left (our choice)",
        "caution": SURFACE_CAUTION[0].upper() + SURFACE_CAUTION[1:] + ".",
    }


def ground_beyond_dict(beyond) -> dict | None:
    """The ground beyond the integration area against the reflecting plane (metre keys)."""
    if beyond is None:
        return None
    found = beyond.samples > 0
    return {
        "from_before_threshold_m": beyond.from_u_m - beyond.setback_m,
        "to_before_threshold_m": beyond.to_u_m - beyond.setback_m,
        "meant_to_reach_before_threshold_m": beyond.reach_u_m - beyond.setback_m,
        "samples": beyond.samples,
        "largest_departure_m": beyond.largest_m if found else None,
        "largest_before_threshold_m": beyond.largest_u_m - beyond.setback_m if found else None,
        "largest_from_centre_line_m": beyond.offset_m - beyond.largest_w_m if found else None,
        "first_beyond_limit_before_threshold_m": None
        if beyond.first_beyond_u_m is None
        else beyond.first_beyond_u_m - beyond.setback_m,
        "limit_m": beyond.limit_m,
        "grazing_angle_deg": beyond.grazing_deg,
        "beyond_limit": beyond.beyond_limit,
        "rule": "Rayleigh criterion lambda / (8 sin psi) at the path's grazing angle over the plane "
        "(Beckmann and Spizzichino 1963); sampled on lines from the mast's line to the centre line",
        "why": "the surface prediction counts the ground beyond its integration area as the reflecting plane",
    }
