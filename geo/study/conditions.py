"""The path for each condition of ``[conditions]``: snow and ground under the same antennas.

Each condition is the study's array over its plane with the ground class and the snow changed
(:mod:`geo.study.variants`), predicted by image theory at the study's SBO level: path angle,
half-sectors and RDH, side by side with the study's own prediction for the site file's ground.

Where the study has its surface prediction, each condition gets one too, for its structure (over a
plane image theory has no bends): the same DEM surface, now the snow's top (snow lies as deep
everywhere, so the surface above the snow's plane is the ground's above its own), the condition's
reflection coefficient on every facet (a layer's for dry snow), the condition's image path, without
the convergence check and the DDM below the path (as the sweep's re-judged candidates).
"""

from __future__ import annotations

from dataclasses import dataclass

from geo.errors import SiteFileError
from geo.site.conditions import ConditionSpec
from geo.study.variants import Variant, variant_model, variant_prediction

__all__ = ["ConditionPrediction", "condition_prediction", "study_conditions", "CONDITIONS_MODEL"]

CONDITIONS_MODEL = (
    "image theory over the study's reflecting plane at the study's SBO level; wet snow reflects at its surface "
    "(antennas stand the depth lower), dry snow is a layer over the ground (two-interface reflection, Born and "
    "Wolf); ground classes of ITU-R P.527 (values from memory). Structure per condition from a surface prediction "
    "over the same DEM (the snow's top), where the study has one (without its convergence check)."
)


@dataclass(frozen=True)
class ConditionPrediction:
    """The predicted path under one condition.

    Attributes
    ----------
    condition : ConditionSpec
    path_angle_deg, half_sector_below_deg, half_sector_above_deg : float
        Far field. [deg]
    rdh_m : float
        The straight fit's height over the threshold (2-10 NM), above the threshold. [m]
    prediction : geo.radio.prediction.PathPrediction
        Heights from the bare ground's plane.
    surface : geo.optics.surface_prediction.SurfacePrediction or None
        The path over the DEM surface under the condition (its structure per segment); None where the
        study has no surface prediction. Its heights are from the reflecting plane (the snow's top).
    """

    condition: ConditionSpec
    path_angle_deg: float
    half_sector_below_deg: float
    half_sector_above_deg: float
    rdh_m: float
    prediction: object
    surface: object = None


def condition_prediction(result, condition: ConditionSpec) -> ConditionPrediction:
    """The study's path under ``condition`` (see the module notes).

    Parameters
    ----------
    result : geo.study.site_study.StudyResult
    condition : ConditionSpec

    Returns
    -------
    ConditionPrediction
    """
    variant = Variant(ground=condition.ground, snow_depth_m=condition.snow_depth_m, snow=condition.snow)
    try:
        p = variant_prediction(result, variant)
    except SiteFileError:
        raise
    except (ValueError, ZeroDivisionError, FloatingPointError):
        raise SiteFileError(
            "conditions",
            f"under {condition.words(result.spec.units)} the antennas give no path (DDM = 0) within 25 % of the "
            "path angle; give less snow",
        ) from None
    rdh = p.straight_fit[0] + result.mast.plane_elevation_m - result.spec.threshold.elevation_m
    surface = _condition_surface(result, variant) if result.surface is not None else None
    return ConditionPrediction(
        condition, p.path_angle_deg, p.half_sector_below_deg, p.half_sector_above_deg, rdh, p, surface
    )


def _condition_surface(result, variant: Variant):
    """The surface prediction under ``variant`` (see the module notes)."""
    from geo.study.surface import surface_for_study

    mast = result.mast
    return surface_for_study(
        result.spec, result.runway, mast.side, mast.setback_m, mast.offset_m, result.terrain, None, None, None,
        result.wavelength_m, variant_prediction(result, variant, bare_plane=False), result.rdh_m, check=False,
        model=variant_model(result, variant), below=False,
    )  # fmt: skip


def study_conditions(result) -> tuple[ConditionPrediction, ...]:
    """One :class:`ConditionPrediction` per condition of the site file's ``[conditions]``, in order."""
    if result.prediction is None:
        return ()
    return tuple(condition_prediction(result, c) for c in result.spec.conditions)
