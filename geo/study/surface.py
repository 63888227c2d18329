"""The surface prediction of one site study: DEM heights in the prediction's frame, and findings.

:func:`surface_for_study` reopens the study's DEM, samples it in the coordinates of
:mod:`geo.radio.prediction` (``u`` toward the approach from the mast's foot, ``w`` toward the runway,
``Z`` from the plane's elevation at the foot), runs :func:`geo.optics.surface_prediction.predict_surface`
with the array and SBO scale of the image prediction, and turns the bends per segment into
findings against the Annex 10 limits (:mod:`geo.radio.structure_limits`, from memory, labelled so).

References
----------
.. [1] ICAO Annex 10, Volume I, 3.1.5.4 (glide path structure), from memory: confirm against
       the edition in force.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from geo.optics.surface_prediction import (
    AreaTooLarge,
    SurfacePrediction,
    predict_surface,
    surface_far_ddm,
    surface_heights,
)
from geo.radio.below_path import check_below_path, sampled_ddm
from geo.radio.bend_filter import MAX_GAP_M
from geo.radio.structure_limits import LIMITS_SOURCE, structure_segments
from geo.study.findings import Finding, below_path_words
from geo.units import format_length

__all__ = ["surface_for_study", "surface_findings", "skipped_reason", "SKIPPED_WITHOUT_DEM", "SKIPPED_BY_SITE_FILE"]

#: Elevations from the path down to 0.30 theta where the surface's far-field DDM below the path is
#: computed (once; a cubic between them, :func:`geo.radio.below_path.sampled_ddm`). At the demo, against
#: 241 samples: the angle where 0.22 is reached within 0.00002 deg, the DDM over the band within
#: 0.0013 (measured; 61 samples read linearly: 0.00085). Most of the cost does not grow with them.
BELOW_PATH_SAMPLES = 31
#: Each such receiver's integration area: its first Fresnel zones scaled by this, as the path's
#: (:data:`geo.optics.surface_prediction.ZONE_FACTOR`); the difference method counts the ground beyond as the
#: plane. At the demo the DDM at 0.45 theta is 0.350 with 3, 0.378 with 1.5 and 0.404 with 1 (measured).
BELOW_PATH_ZONE_FACTOR = 3.0
SKIPPED_WITHOUT_DEM = "surface prediction skipped: the site file gives no DEM (terrain.dem)"
SKIPPED_BY_SITE_FILE = "surface prediction skipped: the site file says prediction.surface = false"


def skipped_reason(spec) -> str:
    """Why a study has no surface prediction: no DEM, or the site file's ``prediction.surface``."""
    return SKIPPED_WITHOUT_DEM if spec.terrain is None else SKIPPED_BY_SITE_FILE


def surface_for_study(
    spec, runway, side, setback_m, offset_m, terrain, heights_m, shifts_m, feeds, wavelength_m, prediction, rdh_m,
    check=True, model=None, below=True,
) -> SurfacePrediction:  # fmt: skip
    """The path over the DEM surface for the study's mast, array and image prediction.

    Parameters
    ----------
    spec : geo.site.site_file.SiteSpec
    runway : geo.study.site_study.Runway
    side : {"left", "right"}
    setback_m, offset_m : float
        Mast position. [m]
    terrain : geo.ground.terrain.TerrainResult
        The plane and the DEM cell.
    heights_m, shifts_m : list of float
        Antenna heights above the plane and proximity shifts. [m]
    feeds : tuple
        (CSB feeds, SBO feeds, source) as the study uses them.
    wavelength_m : float
        [m]
    prediction : geo.radio.prediction.PathPrediction
        The image prediction (shifted antennas).
    rdh_m : float
        The study's RDH (places ILS point C). [m]
    check : bool
        Run the convergence check (sampling doubled, area doubled).
    model : geo.radio.prediction.ArrayModel, optional
        The array over its plane as given (a condition's: snow, another ground; ``heights_m``,
        ``shifts_m`` and ``feeds`` are then not used); default: built from them as the study's.
    below : bool
        Also the DDM below the path over the surface (``below_path``; None without).

    Returns
    -------
    SurfacePrediction
    """
    from geo.ground.dem import Dem
    from geo.study.array_setup import array_model

    p = spec.prediction
    plane = terrain.plane
    gradients = (plane.forward_gradient, plane.lateral_gradient)
    if model is None:
        model = array_model(spec, heights_m, shifts_m, feeds, wavelength_m, *gradients)
    sign = 1.0 if side == "right" else -1.0
    segments = structure_segments(spec.category, rdh_m, spec.angle_deg)
    t = spec.terrain
    with Dem.open(t) as dem:  # tiles and the vertical datum conversion, as the study

        def heights(u, w):
            along = setback_m - np.asarray(u, float)
            cross = sign * (offset_m - np.asarray(w, float))
            return dem.sample_frame(runway.frame, along, cross) - plane.elevation_at_mast_m

        ground = surface_heights(heights, terrain.cell_size_m)  # one shrunk surface for the path and below it

        surface = predict_surface(
            model, prediction, ground, terrain.cell_size_m, spec.angle_deg, setback_m, offset_m, segments, check=check
        )
        if not below:
            return surface
        # The DDM below the path over the surface too (Annex 10 Vol I 3.1.5.6.5, from memory): the
        # far-field DDM computed once at BELOW_PATH_SAMPLES elevations from the path down to 0.30 theta
        # and the band's lower edge, a cubic between them (it is smooth in elevation).
        top = surface.path_angle_deg if np.isfinite(surface.path_angle_deg) else prediction.path_angle_deg
        theta = np.radians(spec.angle_deg)
        elevations = np.unique(
            np.r_[np.linspace(0.30 * theta, np.radians(top), BELOW_PATH_SAMPLES), p.below_path_down_to * theta]
        )
        try:
            values = surface_far_ddm(
                model,
                ground,
                terrain.cell_size_m,
                elevations,
                prediction.sbo_scale,
                zone_factor=BELOW_PATH_ZONE_FACTOR,
            )
            below = check_below_path(sampled_ddm(elevations, values), spec.angle_deg, top, p.below_path_down_to)
        except AreaTooLarge as exc:  # said in a finding (surface_findings)
            below = str(exc)
    return replace(surface, below_path=below)


def surface_findings(surface: SurfacePrediction, category: str, unit: str = "m") -> list[Finding]:
    """One finding per approach segment (bends against the limit), the DDM below the path, and convergence [1]_."""
    out = []
    for seg in surface.structure:
        words = (
            f"Path bends over the DEM surface, {seg.segment} ({format_length(seg.from_m, unit, 0)} to "
            f"{format_length(seg.to_m, unit, 0)} before the threshold): 95 % amplitude {seg.bend_95_ddm:.4f} DDM "
            f"against {seg.limit_ddm:.3f} DDM for Category "
            f"{category} ({LIMITS_SOURCE}; physical-optics prediction, confirmed only by flight inspection)."
        )
        if seg.departure_95_ddm is not None:
            words += f" 95 % departure from image theory's path: {seg.departure_95_ddm:.4f} DDM."
        if not seg.well_sampled:
            words += (
                f" The path was sampled up to {format_length(seg.largest_gap_m, unit, 0)} apart there (more than "
                f"{format_length(MAX_GAP_M, unit, 0)}): short bends may be missed."
            )
        out.append(Finding("surface-structure", "pass" if seg.passed else "warning", words))
    if isinstance(surface.below_path, str):
        out.append(
            Finding(
                "surface-below-path",
                "info",
                f"Below the path over the DEM surface: not computed, the zones of the lowest receivers need "
                f"{surface.below_path}; the image model's check stands (ground rising toward the approach makes "
                "them long).",
            )
        )
    elif surface.below_path is not None:
        out.append(
            Finding(
                "surface-below-path",
                "pass" if surface.below_path.passed else "warning",
                f"Below the path over the DEM surface (course signal): {below_path_words(surface.below_path)} "
                "(Annex 10 Vol I 3.1.5.6.5, from memory: confirm the edition in force; physical-optics prediction "
                "over each receiver's first Fresnel zones scaled 3 times, the ground beyond counted as the plane; "
                "confirmed only by flight inspection).",
            )
        )
    conv = surface.converged
    if conv and not conv.get("converged", False):
        checks = [conv["sampling_doubled"], conv["area_doubled"]]
        moves = [v["path_angle_change_deg"] for v in checks]
        ddm = max(v["ddm_change_max"] for v in checks)
        angle = f"by up to {max(moves):.4f} deg" if all(m is not None for m in moves) else "by more than 0.06 theta"
        out.append(
            Finding(
                "surface-convergence",
                "info",
                f"Surface prediction not converged at facets {conv['refine']:g} times finer than the DEM cell, "
                f"stopped by {conv['not_converged_because']}: a further doubling of the sampling or of the area "
                f"moves the path angle {angle} and the DDM beyond 1 NM by up to {ddm:.4f}; read its angles to "
                "that precision.",
            )
        )
    return out
