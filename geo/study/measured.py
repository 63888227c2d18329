"""Measured results against the prediction, their differences and the findings.

The same figures and samples from the model, and the findings against the Annex 10 tolerances and
the structure limits.

Every measured figure (path angle, half-sectors, RDH) and every sample of a run (DDM, or the path's
angle, at a distance before the threshold) is an *observation*. :func:`predicted_values` computes
all of them from the study's array by image theory (:mod:`geo.study.variants`, the study's
:func:`geo.radio.prediction.predict_path` and :meth:`geo.radio.prediction.ArrayModel.fields`), for
any heights and feeds: the comparison and the adjustment (:mod:`geo.study.adjustment`) use the one
function. Over the surface (a study with a DEM and the surface prediction on) the figures and the
DDM on the designed path come from :class:`geo.optics.surface_prediction.SurfacePrediction`.

A DDM sample with a height is the DDM at that point (a level run, say); one without lies on the
designed path. The angle of a sample is the elevation of the predicted path (DDM = 0) at that
distance seen from where the designed straight path meets the reflecting plane abeam the mast.

References
----------
.. [1] ICAO Annex 10, Volume I, 3.1.5.1.2.2 (path angle tolerance), 3.1.5.6 (displacement
       sensitivity), 3.1.5.4 (structure): values from memory (:mod:`geo.study.surface_sector`,
       :mod:`geo.radio.structure_limits`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from geo.radio.prediction import ddm
from geo.radio.structure import segment_structure
from geo.radio.structure_limits import LIMITS_SOURCE, structure_segments
from geo.study.findings import Finding, check_rdh
from geo.study.surface_sector import ANGLE_TOLERANCE, ANGLE_TOLERANCE_SOURCE, HALF_SECTOR_BAND, HALF_SECTOR_BAND_SOURCE
from geo.study.variants import Variant, variant_model, variant_prediction
from geo.units import format_length

__all__ = [
    "Observation",
    "observations",
    "predicted_values",
    "surface_values",
    "Comparison",
    "compare",
    "measured_findings",
    "FIGURE_SIGMA",
]

#: How closely each kind of observation is taken to be measured: the weights of the fits (our choice,
#: common practice, no source). [deg], [m], [DDM]
FIGURE_SIGMA = {"path_angle_deg": 0.005, "half_sector_below_deg": 0.005, "half_sector_above_deg": 0.005, "rdh_m": 0.1}
SAMPLE_SIGMA = {"ddm": 0.001, "angle_deg": 0.005}


@dataclass(frozen=True)
class Observation:
    """One measured figure or sample.

    Attributes
    ----------
    name : str
        ``path_angle_deg``, ``half_sector_below_deg``, ``half_sector_above_deg``, ``rdh_m``, ``ddm`` or ``angle_deg``.
    value : float
        Measured. [deg], [m] or DDM
    sigma : float
        Its weight's scale (:data:`FIGURE_SIGMA`).
    run : str or None
        The run of a sample (None for a figure).
    distance_m : float or None
        Before the threshold. [m]
    height_m : float or None
        Above the threshold's elevation; None: on the designed path. [m]
    row : int or None
        The file's row.
    """

    name: str
    value: float
    sigma: float
    run: str | None = None
    distance_m: float | None = None
    height_m: float | None = None
    row: int | None = None


def observations(measured) -> list[Observation]:
    """Every figure and sample of a :class:`geo.site.measured_file.MeasuredResults`, figures first."""
    out = [Observation(k, v, FIGURE_SIGMA[k]) for k, v in measured.figures.items()]
    for run in measured.runs:
        for i in range(run.distance_m.size):
            h = None if run.height_m is None else float(run.height_m[i])
            out.append(
                Observation(run.quantity, float(run.value[i]), SAMPLE_SIGMA[run.quantity], run.name,
                            float(run.distance_m[i]), h, run.rows[i])
            )  # fmt: skip
    return out


def _figure(p, name: str, base_m: float) -> float:
    if name == "rdh_m":
        return p.straight_fit[0] + base_m
    return float(getattr(p, name))


def predicted_values(result, obs: list[Observation], variant: Variant | None = None) -> np.ndarray:
    """The model's value of every observation for ``variant`` (heights, feeds, ground, snow), by image theory.

    Parameters
    ----------
    result : geo.study.site_study.StudyResult
    obs : list of Observation
    variant : Variant, optional
        None: the study's array.

    Returns
    -------
    numpy.ndarray
        In the order of ``obs``.
    """
    variant = variant if variant is not None else Variant()
    spec, mast = result.spec, result.mast
    p = variant_prediction(result, variant)
    base = mast.plane_elevation_m - spec.threshold.elevation_m
    intercept_z = result.intercept_elevation_m - mast.plane_elevation_m
    out = np.empty(len(obs))
    samples = [i for i, o in enumerate(obs) if o.run is not None]
    for i, o in enumerate(obs):
        if o.run is None:
            out[i] = _figure(p, o.name, base)
    if not samples:
        return out
    d = np.array([obs[i].distance_m for i in samples])
    horizontal = mast.setback_m + d
    names = [obs[i].name for i in samples]
    if "angle_deg" in names:
        z = np.interp(-d, p.along_m, p.path_z_m)
        angles = np.degrees(np.arctan2(z - intercept_z, horizontal))
    if "ddm" in names:
        model = variant_model(result, variant)
        lift = variant.snow_depth_m if variant.snow_depth_m > 0.0 else 0.0
        designed = intercept_z + horizontal * math.tan(math.radians(spec.angle_deg))
        heights = [obs[i].height_m for i in samples]
        z = np.array([dz if h is None else h - base for h, dz in zip(heights, designed)])
        rx = np.column_stack([horizontal, np.full(d.size, mast.offset_m), z - lift])
        c, s = model.fields(rx)
        values = ddm(c, s, result.prediction.sbo_scale)
    for k, i in enumerate(samples):
        out[i] = angles[k] if names[k] == "angle_deg" else values[k]
    return out


def surface_values(result, obs: list[Observation]) -> np.ndarray | None:
    """The same over the surface (NaN where it has no value: DDM off the designed path); None without one."""
    sp = result.surface
    if sp is None:
        return None
    base = result.mast.plane_elevation_m - result.spec.threshold.elevation_m
    intercept_z = result.intercept_elevation_m - result.mast.plane_elevation_m
    out = np.full(len(obs), np.nan)
    figures = {"path_angle_deg": sp.fitted_angle_deg, "half_sector_below_deg": sp.half_sector_below_deg,
               "half_sector_above_deg": sp.half_sector_above_deg, "rdh_m": sp.straight_fit[0] + base}  # fmt: skip
    for i, o in enumerate(obs):
        if o.run is None:
            out[i] = figures[o.name]
        elif o.name == "angle_deg":
            z = float(np.interp(-o.distance_m, sp.along_m, sp.path_z_m))
            out[i] = math.degrees(math.atan2(z - intercept_z, result.mast.setback_m + o.distance_m))
        elif o.height_m is None:
            out[i] = float(np.interp(-o.distance_m, sp.approach_along_m, sp.approach_ddm))
    return out


@dataclass(frozen=True)
class Comparison:
    """Measured against predicted.

    Attributes
    ----------
    observations : list of Observation
    image : numpy.ndarray
        Image theory (under the measurement's condition when it gives one).
    surface : numpy.ndarray or None
        Over the surface (the site file's ground; NaN where it has no value).
    findings : list of Finding
    """

    observations: list
    image: np.ndarray
    surface: np.ndarray | None
    findings: list


def compare(result, measured) -> Comparison:
    """The measurement against the study's prediction, with its findings."""
    obs = observations(measured)
    variant = _measured_variant(measured)
    image = predicted_values(result, obs, variant)
    surface = surface_values(result, obs) if variant == Variant() else None
    return Comparison(obs, image, surface, measured_findings(result, measured))


def _measured_variant(measured) -> Variant:
    if not measured.conditions:
        return Variant()
    c = measured.conditions[0]
    return Variant(ground=c.ground, snow_depth_m=c.snow_depth_m, snow=c.snow)


def measured_findings(result, measured) -> list[Finding]:
    """The measured figures against the Annex 10 tolerances, each DDM run on the path against the structure limits.

    Values from memory [1]_.
    """
    spec = result.spec
    theta = spec.angle_deg
    out = []
    f = measured.figures
    if "path_angle_deg" in f:
        tol = ANGLE_TOLERANCE[spec.category] * theta
        off = f["path_angle_deg"] - theta
        sev = "pass" if abs(off) <= tol else "fail"
        out.append(Finding("measured_path_angle", sev, f"measured path angle {f['path_angle_deg']:.3f} deg, "
                           f"{off:+.3f} deg from the design {theta:g} deg; tolerance +/-{tol:.3f} deg "
                           f"({ANGLE_TOLERANCE_SOURCE})"))  # fmt: skip
    for key, words in (("half_sector_below_deg", "below"), ("half_sector_above_deg", "above")):
        if key in f:
            share = f[key] / theta
            lo, hi = HALF_SECTOR_BAND
            sev = "pass" if lo <= share <= hi else "fail"
            out.append(Finding(f"measured_half_sector_{words}", sev, f"measured half-sector {words} the path "
                               f"{f[key]:.3f} deg = {share:.3f} theta; allowed {lo:g}-{hi:g} theta "
                               f"({HALF_SECTOR_BAND_SOURCE})"))  # fmt: skip
    if "rdh_m" in f:
        rdh = check_rdh(f["rdh_m"], spec.category, spec.runway_code, unit=spec.units)
        out.append(Finding("measured_rdh", rdh.severity, "measured " + rdh.message))
    out += _structure_findings(result, measured)
    return out


def _structure_findings(result, measured) -> list[Finding]:
    """Each DDM run on the designed path: its 95 % bends per segment against the limits (:mod:`geo.radio.structure`)."""
    spec = result.spec
    segments = structure_segments(spec.category, result.rdh_m, spec.angle_deg)
    out = []
    for run in measured.runs:
        if run.quantity != "ddm" or run.height_m is not None:
            continue
        structure = segment_structure(segments, run.distance_m, run.value)
        for seg in structure.segments:
            if not seg.well_sampled:
                words = f"samples up to {format_length(seg.largest_gap_m, spec.units, 0)} apart: not judged"
                out.append(Finding("measured_structure", "info", f"run {run.name}, {seg.segment}: {words}"))
                continue
            sev = "pass" if seg.passed else "fail"
            out.append(Finding("measured_structure", sev, f"run {run.name}, {seg.segment}: 95 % bends "
                               f"{seg.bend_95_ddm:.4f} DDM, limit {seg.limit_ddm:.3f} ({LIMITS_SOURCE})"))  # fmt: skip
    return out
