"""Magnetic variation and runway designators.

The magnetic variation (declination) at a point, east positive, comes from the
World Magnetic Model [1]_ through ``pygeomag``, a port of NOAA's reference code.
A date picks the model whose five-year span holds it (WMM-2010 to WMM-2025).
Without a date the variation is taken at :data:`DEFAULT_EPOCH_YEAR`, the epoch of
WMM-2025, never at today's date, so that a study run twice gives the same figures.

A runway designator is the magnetic bearing of the landing direction divided by
ten and rounded to the nearest whole number, 36 for north, with L, C or R for
parallel runways [2]_.

References
----------
.. [1] NOAA NCEI and BGS, "The US/UK World Magnetic Model for 2025-2030",
       technical report (2024); WMM-2010, WMM-2015v2 and WMM-2020 likewise.
.. [2] ICAO Annex 14 Vol I, 5.2.2 (runway designation marking: the whole number
       nearest one tenth of the magnetic bearing of the centre line seen from the
       direction of approach), from memory: confirm against the edition in force.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from datetime import date
from functools import lru_cache

__all__ = [
    "DEFAULT_EPOCH_YEAR",
    "MODEL_SPAN_YEARS",
    "MagneticVariation",
    "decimal_year",
    "magnetic_variation",
    "designator_number",
    "parse_designator",
    "designator_steps_apart",
]

#: The variation's date when the site file gives none: the epoch of WMM-2025. [decimal year]
DEFAULT_EPOCH_YEAR = 2025.0
#: Dates the shipped models cover: WMM-2010 from 2010.0 to WMM-2025 until 2030.0. [decimal year]
MODEL_SPAN_YEARS = (2010.0, 2030.0)
#: Model coefficient files by the first year of their span.
_MODEL_FILES = ((2025.0, "wmm/WMM_2025.COF"), (2020.0, "wmm/WMM_2020.COF"), (2015.0, "wmm/WMM_2015v2.COF"))
_OLDEST_MODEL_FILE = "wmm/WMM_2010.COF"
_DESIGNATOR = re.compile(r"(0[1-9]|[12][0-9]|3[0-6])([LCR]?)")


@dataclass(frozen=True)
class MagneticVariation:
    """The magnetic variation at a point and date.

    Attributes
    ----------
    variation_deg : float
        Declination, east positive: magnetic bearing = true bearing - variation. [deg]
    annual_change_deg : float
        Change of the variation over the year after the date. [deg/year]
    model : str
        The model's name, e.g. ``"WMM-2025"``.
    model_epoch_year : float
        The model's epoch. [decimal year]
    date_year : float
        The date the variation is for. [decimal year]
    unreliable : bool
        True where the horizontal field is below 2,000 nT (the model's blackout zone near the
        magnetic poles), where the variation is no guide to a compass.
    """

    variation_deg: float
    annual_change_deg: float
    model: str
    model_epoch_year: float
    date_year: float
    unreliable: bool


def decimal_year(day: date) -> float:
    """The date as a decimal year (1 January 00:00 is the whole year).

    Parameters
    ----------
    day : datetime.date

    Returns
    -------
    float
        Year plus the fraction of its days gone by. [decimal year]

    Examples
    --------
    >>> decimal_year(date(2025, 7, 2))
    2025.4986301369863
    """
    days_in_year = (date(day.year + 1, 1, 1) - date(day.year, 1, 1)).days
    return day.year + (day - date(day.year, 1, 1)).days / days_in_year


@lru_cache(maxsize=8)
def _model(coefficients_file: str):
    from pygeomag import GeoMag

    return GeoMag(coefficients_file=coefficients_file)


def _model_for(year: float):
    for first_year, name in _MODEL_FILES:
        if year >= first_year:
            return _model(name)
    return _model(_OLDEST_MODEL_FILE)


def magnetic_variation(lat_deg: float, lon_deg: float, elevation_m: float, year: float) -> MagneticVariation:
    """The World Magnetic Model's variation at a point and date [1]_.

    Parameters
    ----------
    lat_deg, lon_deg : float
        WGS 84 position. [deg]
    elevation_m : float
        Height of the point (the model takes it above the ellipsoid or sea level alike). [m]
    year : float
        Date, within :data:`MODEL_SPAN_YEARS`. [decimal year]

    Returns
    -------
    MagneticVariation

    Raises
    ------
    ValueError
        For a date outside the models' span (the site file's reader refuses those first).
    """
    if not MODEL_SPAN_YEARS[0] <= year < MODEL_SPAN_YEARS[1]:
        raise ValueError(f"no World Magnetic Model covers {year:.3f} (span {MODEL_SPAN_YEARS})")
    model = _model_for(year)
    alt_km = elevation_m / 1000.0
    now = model.calculate(glat=lat_deg, glon=lon_deg, alt=alt_km, time=year)
    later = model.calculate(glat=lat_deg, glon=lon_deg, alt=alt_km, time=year + 1.0, allow_date_outside_lifespan=True)
    change_deg = (later.d - now.d + 180.0) % 360.0 - 180.0
    return MagneticVariation(
        variation_deg=now.d,
        annual_change_deg=change_deg,
        model=model.model,
        model_epoch_year=model.life_span[0],
        date_year=year,
        unreliable=now.in_blackout_zone,
    )


def designator_number(magnetic_bearing_deg: float) -> int:
    """The runway number of a landing direction: its magnetic bearing / 10, rounded, 36 for north [2]_.

    Parameters
    ----------
    magnetic_bearing_deg : float
        Magnetic bearing of the landing direction. [deg]

    Returns
    -------
    int
        1 to 36.

    Examples
    --------
    >>> designator_number(264.9), designator_number(3.0), designator_number(356.0)
    (26, 36, 36)
    """
    number = math.floor((magnetic_bearing_deg % 360.0) / 10.0 + 0.5) % 36
    return 36 if number == 0 else number


def parse_designator(text: str) -> tuple[int, str] | None:
    """The number and parallel letter of a designator such as ``"27"`` or ``"09L"``, None if malformed.

    Parameters
    ----------
    text : str
        Two digits 01-36, then optionally L, C or R.

    Returns
    -------
    tuple of (int, str) or None
        The number 1-36 and the letter ("" for none).

    Examples
    --------
    >>> parse_designator("09L"), parse_designator("9"), parse_designator("37")
    ((9, 'L'), None, None)
    """
    match = _DESIGNATOR.fullmatch(text)
    if match is None:
        return None
    return int(match.group(1)), match.group(2)


def designator_steps_apart(number: int, magnetic_bearing_deg: float) -> int:
    """How many runway numbers a designator lies from the number of a bearing, round the compass.

    Parameters
    ----------
    number : int
        The designator's number, 1-36.
    magnetic_bearing_deg : float
        Magnetic bearing of the landing direction. [deg]

    Returns
    -------
    int
        0 to 18 (one step is 10 deg).

    Examples
    --------
    >>> designator_steps_apart(36, 7.0), designator_steps_apart(27, 92.0)
    (1, 18)
    """
    steps = abs(number - designator_number(magnetic_bearing_deg)) % 36
    return min(steps, 36 - steps)
