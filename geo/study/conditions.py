"""The path for each condition of ``[conditions]``: snow and ground under the same antennas.

Each condition is the study's array over its plane with the ground class and the snow changed
(:mod:`geo.study.variants`), predicted by image theory at the study's SBO level: path angle,
half-sectors and RDH, side by side with the study's own prediction for the site file's ground.
Structure (bends) needs the surface prediction, which is made for the site file's ground only:
over a plane image theory has no bends, so no structure is given per condition.
"""

from __future__ import annotations

from dataclasses import dataclass

from geo.errors import SiteFileError
from geo.site.conditions import ConditionSpec
from geo.study.variants import Variant, variant_prediction

__all__ = ["ConditionPrediction", "condition_prediction", "study_conditions", "CONDITIONS_MODEL"]

CONDITIONS_MODEL = (
    "image theory over the study's reflecting plane at the study's SBO level; wet snow reflects at its surface "
    "(antennas stand the depth lower), dry snow is a layer over the ground (two-interface reflection, Born and "
    "Wolf); ground classes of ITU-R P.527 (values from memory). No structure per condition (a plane has no bends)."
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
    """

    condition: ConditionSpec
    path_angle_deg: float
    half_sector_below_deg: float
    half_sector_above_deg: float
    rdh_m: float
    prediction: object


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
    return ConditionPrediction(condition, p.path_angle_deg, p.half_sector_below_deg, p.half_sector_above_deg, rdh, p)


def study_conditions(result) -> tuple[ConditionPrediction, ...]:
    """One :class:`ConditionPrediction` per condition of the site file's ``[conditions]``, in order."""
    if result.prediction is None:
        return ()
    return tuple(condition_prediction(result, c) for c in result.spec.conditions)
