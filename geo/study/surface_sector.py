"""The whole path over the DEM surface against the Annex 10 tolerances and monitor limits.

:func:`judge_surface_sector` takes a :class:`geo.optics.surface_prediction.SurfacePrediction` and
judges, each against its limits with a margin: the path angle of the straight line fitted to the
surface path (the far-field angle at 200 km beside it), the half-sectors below and above, their
asymmetry and the RDH of the fitted straight path. :func:`sector_findings` says it in words.

**Margins.** For a value ``v`` and an allowed interval ``[low, high]`` about a nominal ``n``, the
margin is the distance from the value to the end on its side of the nominal, ``high - v`` at or above
the nominal and ``v - low`` below it, in the value's unit (negative beyond that end); its share is
the margin over the allowance on that side (``high - n`` or ``n - low``): 1 on the nominal, 0 on
the limit, negative beyond it. The nominal is the design (angle, half-sector); for the RDH (15 m +3 m:
the design sits on the band's end) the band's middle. A value outside a tolerance or a monitor
limit fails; one with less than :data:`WARN_SHARE_LEFT` of an allowance left is a warning (our
choice: the warning where 80 % of the allowance is used).

**Asymmetry** of the half-sectors: ``(above - below) / (above + below)``, 0 for a symmetrical
sector, positive when the upper half-sector is the wider. The Annex asks the half-sectors of
Category II and III paths to be as symmetrical as practicable [4]_ and gives no number; we warn
beyond +-0.20 (the lower half-sector outside 40-60 % of the whole sector): common practice, no
source, the same for every category.

Every value of the Annex here is from memory and must be confirmed against the edition in force.
A prediction over the DEM surface, confirmed only by flight inspection; local regulations decide.

References
----------
.. [1] ICAO Annex 10, Volume I, 3.1.5.1.2.2: the glide path angle adjusted and maintained within
       0.075 theta of the design angle for Categories I and II, 0.04 theta for Category III
       (from memory; confirm against the edition in force).
.. [2] ICAO Annex 10, Volume I, 3.1.5.7.1 a): the monitor alarms on a shift of the mean path angle
       beyond -0.075 theta or +0.10 theta (from memory).
.. [3] ICAO Annex 10, Volume I, 3.1.5.6.2: nominal angular displacement sensitivity, DDM 0.0875 at
       between 0.07 theta and 0.14 theta below and above the path (from memory).
.. [4] ICAO Annex 10, Volume I, 3.1.5.6.3 and 3.1.5.6.4: Categories II and III, the lower
       half-sector 0.12 theta within +-0.02 theta, the upper and lower as symmetrical as
       practicable (from memory).
.. [5] ICAO Annex 10, Volume I, 3.1.5.7.1 e): the monitor alarms on a change of the displacement
       sensitivity by more than 25 % of its nominal value (from memory, written for Category I;
       used here for every category).
.. [6] ICAO Annex 10, Volume I, 3.1.5.1.4-3.1.5.1.6: RDH 15 m (50 ft) +3 m, the band of
       :func:`geo.study.findings.rdh_band_m`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from geo.study.findings import Finding, rdh_band_m
from geo.units import format_length

__all__ = [
    "WARN_SHARE_LEFT",
    "ASYMMETRY_LIMIT",
    "SURFACE_CAUTION",
    "Bound",
    "JudgedFigure",
    "SurfaceSector",
    "fitted_angle_deg",
    "asymmetry",
    "judge_surface_sector",
    "sector_findings",
    "worst_bend_share",
]

_MEMORY = "from memory: confirm against the edition in force"
#: Path angle tolerance, share of theta, by category [1]_.
ANGLE_TOLERANCE = {"I": 0.075, "II": 0.075, "III": 0.04}
ANGLE_TOLERANCE_SOURCE = f"ICAO Annex 10 Vol I 3.1.5.1.2.2, {_MEMORY}"
#: Path angle monitor alarm limits, shares of theta below and above [2]_.
ANGLE_MONITOR = (-0.075, 0.10)
ANGLE_MONITOR_SOURCE = f"ICAO Annex 10 Vol I 3.1.5.7.1 a), {_MEMORY}"
#: Half-sector band of every category, shares of theta [3]_.
HALF_SECTOR_BAND = (0.07, 0.14)
HALF_SECTOR_BAND_SOURCE = f"ICAO Annex 10 Vol I 3.1.5.6.2, {_MEMORY}"
#: Categories II and III: the lower half-sector and its tolerance, shares of theta [4]_.
LOWER_HALF_SECTOR_CAT23 = (0.12, 0.02)
LOWER_HALF_SECTOR_CAT23_SOURCE = f"ICAO Annex 10 Vol I 3.1.5.6.3/3.1.5.6.4, {_MEMORY}"
#: Displacement sensitivity change the monitor alarms on [5]_.
SENSITIVITY_MONITOR = 0.25
SENSITIVITY_MONITOR_SOURCE = f"ICAO Annex 10 Vol I 3.1.5.7.1 e), {_MEMORY}"
#: A warning where less than this share of an allowance is left (our choice, no source).
WARN_SHARE_LEFT = 0.20
#: Largest half-sector asymmetry without a warning (common practice, no source).
ASYMMETRY_LIMIT = 0.20
ASYMMETRY_SOURCE = (
    "mastplan's rule, common practice, no source: the Annex asks Category II/III half-sectors to be as "
    f"symmetrical as practicable (3.1.5.6.3/3.1.5.6.4, {_MEMORY}) and gives no number"
)
#: Range of the straight fit when the prediction does not state one (the prediction's 2 to 10 NM). [m]
DEFAULT_FIT_RANGE_M = (2 * 1852.0, 10 * 1852.0)
SURFACE_CAUTION = (
    "a physical-optics prediction over the DEM surface, confirmed only by flight inspection; local regulations decide"
)


@dataclass(frozen=True)
class Bound:
    """One allowed interval of a judged figure.

    Attributes
    ----------
    kind : str
        ``"tolerance"``, ``"monitor"`` or ``"rule"`` (ours).
    low, high : float
        Allowed interval, in the figure's unit.
    source : str
        Where the limit comes from.
    broken : str
        Severity when the value lies outside.
    warn_near : bool
        Whether less than :data:`WARN_SHARE_LEFT` of the allowance left is a warning.
    """

    kind: str
    low: float
    high: float
    source: str
    broken: str = "fail"
    warn_near: bool = True


@dataclass(frozen=True)
class JudgedFigure:
    """One figure of the surface path and its limits.

    Attributes
    ----------
    name : str
        ``"path_angle"``, ``"half_sector_below"``, ``"half_sector_above"``, ``"asymmetry"`` or ``"rdh"``.
    value : float
        NaN where the prediction found no value. [deg], [m] or [-] (``unit``)
    nominal : float
        What the value should be (the design). Same unit.
    unit : str
        ``"deg"``, ``"m"`` or ``"ratio"``.
    bounds : tuple of Bound
    """

    name: str
    value: float
    nominal: float
    unit: str
    bounds: tuple[Bound, ...]

    def margin(self, bound: Bound) -> float:
        """Distance from the value to the end of ``bound`` on its side of the nominal (see the module notes).

        Negative beyond that end; NaN without a value.
        """
        if self.value >= self.nominal:
            return bound.high - self.value
        return self.value - bound.low

    def share_left(self, bound: Bound) -> float:
        """The margin over the allowance on the value's side of the nominal (see the module notes)."""
        allowance = bound.high - self.nominal if self.value >= self.nominal else self.nominal - bound.low
        return self.margin(bound) / allowance if allowance > 0 else math.nan

    @property
    def severity(self) -> str:
        """``"fail"``, ``"warning"`` or ``"pass"`` (a missing value is a warning)."""
        if not math.isfinite(self.value):
            return "warning"
        worst = "pass"
        for b in self.bounds:
            if self.margin(b) < 0:
                worst = _worse(worst, b.broken)
            elif b.warn_near and self.share_left(b) < WARN_SHARE_LEFT:
                worst = _worse(worst, "warning")
        return worst


def _worse(a: str, b: str) -> str:
    order = ("pass", "info", "warning", "fail")
    return a if order.index(a) >= order.index(b) else b


@dataclass(frozen=True)
class SurfaceSector:
    """The surface path's figures against their limits.

    Attributes
    ----------
    design_angle_deg : float
        [deg]
    fitted_angle_deg : float
        Angle of the straight line fitted to the surface path. [deg]
    fitted_source : str
        Where it came from (the prediction's field, or the slope of its straight fit).
    fit_range_m : tuple of float
        Distances before the threshold the line is fitted between. [m]
    far_angle_deg : float
        The far-field path angle (200 km). [deg]
    asymmetry : float
        ``(above - below) / (above + below)``. [-]
    rdh_m, image_rdh_m : float
        The fitted straight path over the threshold, over the surface and by image theory. [m]
    worst_bend_share : float
        Largest 95 % bend amplitude over its segment's limit (NaN without segments). [-]
    category : str
    figures : tuple of JudgedFigure
    """

    design_angle_deg: float
    fitted_angle_deg: float
    fitted_source: str
    fit_range_m: tuple[float, float]
    far_angle_deg: float
    asymmetry: float
    rdh_m: float
    image_rdh_m: float
    worst_bend_share: float
    category: str
    figures: tuple[JudgedFigure, ...]

    def figure(self, name: str) -> JudgedFigure:
        """The judged figure called ``name``."""
        return next(f for f in self.figures if f.name == name)

    @property
    def severity(self) -> str:
        """The worst severity of the figures."""
        worst = "pass"
        for f in self.figures:
            worst = _worse(worst, f.severity)
        return worst


def fitted_angle_deg(surface) -> tuple[float, str]:
    """The path angle of the straight fit of the surface path, and where it came from. [deg]

    ``surface.fitted_angle_deg`` where the prediction gives it, else ``atan`` of the slope of its
    ``straight_fit`` (height per metre toward the approach).
    """
    given = getattr(surface, "fitted_angle_deg", None)
    if given is not None and math.isfinite(given):
        return float(given), "the prediction's straight-line fit"
    slope = surface.straight_fit[1]
    return math.degrees(math.atan(slope)), "the slope of the prediction's straight fit"


def asymmetry(below: float, above: float) -> float:
    """Half-sector asymmetry ``(above - below) / (above + below)`` (see the module notes). [-]"""
    total = above + below
    return (above - below) / total if math.isfinite(total) and total > 0 else math.nan


def worst_bend_share(structure) -> float:
    """Largest ``bend_95_ddm / limit_ddm`` over the segments (NaN without any). [-]"""
    shares = [s.bend_95_ddm / s.limit_ddm for s in structure if s.limit_ddm > 0]
    return max(shares) if shares else math.nan


def _angle_bounds(theta: float, category: str) -> tuple[Bound, ...]:
    tol = ANGLE_TOLERANCE.get(category, ANGLE_TOLERANCE["I"])
    low, high = ANGLE_MONITOR
    return (
        Bound("tolerance", theta * (1 - tol), theta * (1 + tol), ANGLE_TOLERANCE_SOURCE),
        Bound("monitor", theta * (1 + low), theta * (1 + high), ANGLE_MONITOR_SOURCE),
    )


def _half_sector_bounds(theta: float, nominal_deg: float, category: str, lower: bool) -> tuple[Bound, ...]:
    if lower and category in ("II", "III"):
        centre, tol = LOWER_HALF_SECTOR_CAT23
        band = Bound("tolerance", theta * (centre - tol), theta * (centre + tol), LOWER_HALF_SECTOR_CAT23_SOURCE)
    else:
        band = Bound("tolerance", theta * HALF_SECTOR_BAND[0], theta * HALF_SECTOR_BAND[1], HALF_SECTOR_BAND_SOURCE)
    if not lower:
        return (band,)
    # Sensitivity is DDM per angle, so a change by s moves the half-sector to nominal / (1 + s).
    monitor = Bound(
        "monitor",
        nominal_deg / (1 + SENSITIVITY_MONITOR),
        nominal_deg / (1 - SENSITIVITY_MONITOR),
        SENSITIVITY_MONITOR_SOURCE,
    )
    return band, monitor


def judge_surface_sector(
    surface,
    angle_deg: float,
    category: str,
    runway_code: int | None,
    half_sector: float,
    plane_elevation_m: float,
    threshold_elevation_m: float,
    image_rdh_m: float,
) -> SurfaceSector:
    """Judge the surface path's angle, half-sectors, asymmetry and RDH [1]_ [2]_ [3]_ [4]_ [5]_ [6]_.

    Parameters
    ----------
    surface : geo.optics.surface_prediction.SurfacePrediction
    angle_deg : float
        Design path angle theta. [deg]
    category : {"I", "II", "III"}
    runway_code : int or None
        Runway code number (the Category I RDH band of code 1-2 runways).
    half_sector : float
        Design half-sector below the path, share of theta (the site file's ``prediction.half_sector``). [-]
    plane_elevation_m : float
        The reflecting plane at the mast's foot, where the prediction's ``Z`` is measured from. [m]
    threshold_elevation_m : float
        [m]
    image_rdh_m : float
        The image prediction's RDH, for comparison. [m]

    Returns
    -------
    SurfaceSector
    """
    theta = angle_deg
    fitted, source = fitted_angle_deg(surface)
    below, above = float(surface.half_sector_below_deg), float(surface.half_sector_above_deg)
    nominal_hs = half_sector * theta
    ratio = asymmetry(below, above)
    rdh = float(surface.straight_fit[0]) + plane_elevation_m - threshold_elevation_m
    low, high, rdh_severity, rdh_rule = rdh_band_m(category, runway_code)
    lower = _half_sector_bounds(theta, nominal_hs, category, True)
    upper = _half_sector_bounds(theta, nominal_hs, category, False)
    figures = (
        JudgedFigure("path_angle", fitted, theta, "deg", _angle_bounds(theta, category)),
        JudgedFigure("half_sector_below", below, nominal_hs, "deg", lower),
        JudgedFigure("half_sector_above", above, nominal_hs, "deg", upper),
        JudgedFigure(
            "asymmetry", ratio, 0.0, "ratio",
            (Bound("rule", -ASYMMETRY_LIMIT, ASYMMETRY_LIMIT, ASYMMETRY_SOURCE, broken="warning", warn_near=False),),
        ),
        JudgedFigure(
            "rdh", rdh, (low + high) / 2.0, "m",
            (Bound("tolerance", low, high, rdh_rule, broken=rdh_severity, warn_near=False),),
        ),
    )  # fmt: skip
    return SurfaceSector(
        angle_deg,
        fitted,
        source,
        tuple(getattr(surface, "fit_range_m", None) or DEFAULT_FIT_RANGE_M),
        float(surface.path_angle_deg),
        ratio,
        rdh,
        image_rdh_m,
        worst_bend_share(surface.structure),
        category,
        figures,
    )


def _bound_words(fig: JudgedFigure, bound: Bound, theta: float, unit: str) -> str:
    """``"tolerance 2.775-3.225 deg (source): margin 0.205 deg, 91 % of the allowance left"``."""
    if fig.unit == "m":
        span = f"{format_length(bound.low, unit)} to {format_length(bound.high, unit)}"
        margin = format_length(fig.margin(bound), unit, signed=True)
    elif fig.unit == "deg":
        span = f"{bound.low:.3f}-{bound.high:.3f} deg ({bound.low / theta:.3f}-{bound.high / theta:.3f} theta)"
        margin = f"{fig.margin(bound):+.3f} deg"
    else:
        span = f"{bound.low:+.2f} to {bound.high:+.2f}"
        margin = f"{fig.margin(bound):+.3f}"
    share = fig.share_left(bound)
    left = f", {100 * share:.0f} % of the allowance left" if math.isfinite(share) else ""
    return f"{bound.kind} {span} ({bound.source}): margin {margin}{left}"


def _limits_words(fig: JudgedFigure, theta: float, unit: str) -> str:
    if not math.isfinite(fig.value):
        return "not found in the far field (no DDM crossing), so not judged"
    return "; ".join(_bound_words(fig, b, theta, unit) for b in fig.bounds)


def _wider(ratio: float) -> str:
    if not math.isfinite(ratio):
        return "a half-sector not found"
    if ratio == 0:
        return "symmetrical"
    return "the upper half-sector wider" if ratio > 0 else "the lower half-sector wider"


def sector_findings(sector: SurfaceSector, unit: str = "m") -> list[Finding]:
    """Findings on the path angle, half-sectors, asymmetry and RDH over the DEM surface.

    Lengths in ``unit`` first (:func:`geo.units.format_length`). Codes ``surface-path-angle``,
    ``surface-half-sector-below``, ``surface-half-sector-above``, ``surface-sector-asymmetry`` and
    ``surface-rdh``.
    """
    theta = sector.design_angle_deg
    tail = (
        f" A warning where less than {100 * WARN_SHARE_LEFT:.0f} % of an allowance is left (our choice); "
        f"{SURFACE_CAUTION}."
    )
    angle = sector.figure("path_angle")
    lo, hi = sector.fit_range_m
    error = angle.value - theta
    words = {
        "path_angle": (
            f"Path angle over the DEM surface {angle.value:.3f} deg (the straight line fitted to the path "
            f"{lo / 1852:.0f} to {hi / 1852:.0f} NM before the threshold, {sector.fitted_source}; far field at "
            f"200 km {sector.far_angle_deg:.3f} deg), design {theta:g} deg, error {error:+.3f} deg "
            f"({error / theta:+.4f} theta): {_limits_words(angle, theta, unit)}."
        ),
    }
    for name, where in (("half_sector_below", "below"), ("half_sector_above", "above")):
        fig = sector.figure(name)
        words[name] = (
            f"Half-sector {where} the path over the DEM surface {fig.value:.3f} deg ({fig.value / theta:.3f} theta; "
            f"design {fig.nominal:.3f} deg, the DDM 0.0875 point, far field): {_limits_words(fig, theta, unit)}."
        )
    asym = sector.figure("asymmetry")
    words["asymmetry"] = (
        f"Half-sector asymmetry over the DEM surface (above - below) / (above + below) = {asym.value:+.3f} "
        f"({_wider(asym.value)}): "
        f"{_limits_words(asym, theta, unit)}."
    )
    rdh = sector.figure("rdh")
    words["rdh"] = (
        f"RDH over the DEM surface {format_length(rdh.value, unit)} (the fitted straight path over the threshold; "
        f"image prediction {format_length(sector.image_rdh_m, unit)}): {_limits_words(rdh, theta, unit)}."
    )
    codes = {
        "path_angle": "surface-path-angle",
        "half_sector_below": "surface-half-sector-below",
        "half_sector_above": "surface-half-sector-above",
        "asymmetry": "surface-sector-asymmetry",
        "rdh": "surface-rdh",
    }
    return [Finding(codes[f.name], f.severity, words[f.name] + tail) for f in sector.figures]
