"""The runway designator of the site file against the landing direction's magnetic bearing.

The landing direction runs from ``runway.threshold`` to ``runway.end``; its magnetic bearing is
the true bearing less the magnetic variation at the threshold (east positive), from the World
Magnetic Model at ``runway.magnetic_date`` or, without one, at the model's epoch (never today's
date, so reruns agree) [1]_. Its runway number is that bearing / 10, rounded [2]_. A designator
within one number of it passes (rounding, and the variation's drift since the runway was named);
one that the reverse direction matches means the threshold and end are swapped, an error; any
other is a warning.

References
----------
.. [1] NOAA NCEI and BGS, "The US/UK World Magnetic Model for 2025-2030" (2024), through
       ``pygeomag`` (:mod:`geo.airfield.magnetic`).
.. [2] ICAO Annex 14 Vol I, 5.2.2 (runway designation marking), from memory: confirm against the
       edition in force.
"""

from __future__ import annotations

from dataclasses import dataclass

from geo.airfield.magnetic import (
    DEFAULT_EPOCH_YEAR,
    MagneticVariation,
    decimal_year,
    designator_number,
    designator_steps_apart,
    magnetic_variation,
    parse_designator,
)
from geo.errors import SiteFileError
from geo.study.findings import Finding

__all__ = ["RunwayMagnetic", "ALLOWED_STEPS", "runway_magnetic"]

#: Runway numbers a designator may lie from the bearing's own (rounding, drift of the variation).
ALLOWED_STEPS = 1
_RULE = "ICAO Annex 14 Vol I 5.2.2, from memory: confirm against the edition in force"


@dataclass(frozen=True)
class RunwayMagnetic:
    """The landing direction's magnetic bearing and the site file's designator.

    Attributes
    ----------
    variation : MagneticVariation
        At the threshold and the date.
    magnetic_bearing_deg : float
        True bearing from threshold to end less the variation, 0-360. [deg]
    bearing_number : int
        The runway number of that bearing, 1-36.
    designator : str or None
        ``runway.designator`` as given.
    date_source : str
        ``"runway.magnetic_date"`` or ``"model epoch"``.
    """

    variation: MagneticVariation
    magnetic_bearing_deg: float
    bearing_number: int
    designator: str | None
    date_source: str


def _bearing_words(mag: RunwayMagnetic, true_bearing_deg: float, magnetic_date) -> str:
    """The magnetic bearing and how it was found, for a message."""
    v = mag.variation
    side = "E" if v.variation_deg >= 0 else "W"
    when = (
        f"{magnetic_date.isoformat()}, runway.magnetic_date"
        if magnetic_date is not None
        else f"{v.date_year:.1f}, its epoch: no runway.magnetic_date"
    )
    return (
        f"magnetic bearing {mag.magnetic_bearing_deg:05.1f} deg, true {true_bearing_deg:05.1f} deg less the variation "
        f"{abs(v.variation_deg):.1f} deg {side} at the threshold ({v.model} at {when})"
    )


def runway_magnetic(spec, true_bearing_deg: float) -> tuple[RunwayMagnetic | None, Finding | None]:
    """The magnetic bearing of the landing direction and the check of ``runway.designator``.

    Parameters
    ----------
    spec : SiteSpec
        Validated inputs; nothing is computed without ``designator`` or ``magnetic_date``.
    true_bearing_deg : float
        Geodesic azimuth from threshold to end at the threshold. [deg]

    Returns
    -------
    RunwayMagnetic or None
        None when the site file gives neither key.
    Finding or None
        ``runway-designator``: pass, a warning for a designator of neither direction, info where
        the model's variation is unreliable (near the magnetic poles); None without a designator.

    Raises
    ------
    SiteFileError
        ``runway.threshold``: the designator is the reverse direction's, threshold and end swapped.
    """
    if spec.designator is None and spec.magnetic_date is None:
        return None, None
    thr = spec.threshold
    year = decimal_year(spec.magnetic_date) if spec.magnetic_date is not None else DEFAULT_EPOCH_YEAR
    variation = magnetic_variation(thr.lat_deg, thr.lon_deg, thr.elevation_m or 0.0, year)
    bearing_deg = (true_bearing_deg - variation.variation_deg) % 360.0
    source = "runway.magnetic_date" if spec.magnetic_date is not None else "model epoch"
    mag = RunwayMagnetic(variation, bearing_deg, designator_number(bearing_deg), spec.designator, source)
    if spec.designator is None:
        return mag, None
    return mag, _judge(mag, true_bearing_deg, spec.magnetic_date)


def _judge(mag: RunwayMagnetic, true_bearing_deg: float, magnetic_date) -> Finding:
    """The designator against the bearing: pass, swapped ends (raised) or a warning."""
    number, _letter = parse_designator(mag.designator)
    bearing = _bearing_words(mag, true_bearing_deg, magnetic_date)
    given = f'runway.designator "{mag.designator}"'
    if mag.variation.unreliable:
        return Finding(
            "runway-designator",
            "info",
            f"{given} not checked: near the magnetic pole the model's variation is unreliable (horizontal "
            f"field below 2,000 nT); the landing direction's {bearing}.",
        )
    steps = designator_steps_apart(number, mag.magnetic_bearing_deg)
    if steps <= ALLOWED_STEPS:
        return Finding(
            "runway-designator",
            "pass",
            f"{given} agrees within {ALLOWED_STEPS} with runway {mag.bearing_number:02d} of the landing "
            f"direction ({_RULE}): {bearing}.",
        )
    reverse_deg = (mag.magnetic_bearing_deg + 180.0) % 360.0
    if designator_steps_apart(number, reverse_deg) <= ALLOWED_STEPS:
        raise SiteFileError(
            "runway.threshold",
            f"threshold and end look swapped: {given} is the direction from runway.end to runway.threshold "
            f"(runway {designator_number(reverse_deg):02d}), while from runway.threshold to runway.end the "
            f"landing direction makes runway {mag.bearing_number:02d} ({bearing}); swap runway.threshold and "
            "runway.end (the threshold is the end landing aircraft reach first), or correct runway.designator",
        )
    return Finding(
        "runway-designator",
        "warning",
        f"{given} does not match the landing direction, runway {mag.bearing_number:02d}, {steps} numbers away "
        f"(more than the {ALLOWED_STEPS} allowed for rounding and the variation's drift; {_RULE}): {bearing}. "
        "Check runway.designator, runway.threshold and runway.end.",
    )
