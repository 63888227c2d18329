"""Length units and the metre/foot twin rule.

Inside the library every length is in metres. A site file states its length
unit once; :mod:`geo.site.site_file` converts by :data:`LENGTH_UNITS` on the way in. On the way out every
key that ends in ``_m`` (``_m2``) gets a twin in feet ending in ``_ft``
(``_ft2``) and every ``_m3`` a twin in cubic yards (``_yd3``, as earthworks are priced), made in
one place: :func:`with_foot_twins`.

References
----------
.. [1] International Yard and Pound Agreement (1959): 1 ft = 0.3048 m, 1 yd = 0.9144 m exactly.
"""

from __future__ import annotations

import math
from typing import Any

__all__ = [
    "M_PER_FT",
    "M_PER_YD",
    "LENGTH_UNITS",
    "with_foot_twins",
    "to_unit",
    "from_unit",
    "other_unit",
    "format_number",
    "format_length",
    "format_area",
    "format_volume",
]

#: Metres in one international foot, exact [1]_.
M_PER_FT = 0.3048

#: Length units a site file may declare, with metres per unit.
LENGTH_UNITS = {"m": 1.0, "ft": M_PER_FT}

#: Metres in one international yard, exact [1]_.
M_PER_YD = 0.9144

_TWINS = (
    ("_m", "_ft", 1.0 / M_PER_FT),
    ("_m2", "_ft2", 1.0 / M_PER_FT**2),
    ("_m3", "_yd3", 1.0 / M_PER_YD**3),
)


def _twin(key: str, value: Any):
    for suffix, twin_suffix, factor in _TWINS:
        if key.endswith(suffix):
            if value is None:  # a missing length stays missing in both units
                return key[: -len(suffix)] + twin_suffix, None
            if isinstance(value, bool):
                return None
            if isinstance(value, (int, float)) and math.isfinite(value):
                return key[: -len(suffix)] + twin_suffix, value * factor
            if isinstance(value, list) and all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in value):
                return key[: -len(suffix)] + twin_suffix, [v * factor for v in value]
    return None


#: Decimals kept for keys that need more than ``digits`` (positions, angles).
_FINE_DIGITS = {"lat": 8, "lon": 8}
_ANGLE_DIGITS = 6


def _digits_for(key: str, digits: int | None) -> int | None:
    if digits is None:
        return None
    if key in _FINE_DIGITS:
        return _FINE_DIGITS[key]
    if key.endswith("_deg"):
        return max(digits, _ANGLE_DIGITS)
    return digits


def with_foot_twins(obj: Any, digits: int | None = 4) -> Any:
    """Return a copy of a nested dict/list with a foot twin beside each metre key.

    A key ``x_m`` with a number (or list of numbers) gains ``x_ft`` right after
    it; ``x_m2`` gains ``x_ft2``. Numbers are rounded to ``digits`` decimals
    (``None`` keeps them as they are) so that outputs stay stable; ``lat``
    and ``lon`` keep 8 decimals (about 1 mm) and ``*_deg`` keys 6.

    Parameters
    ----------
    obj : dict, list or scalar
        Output structure with metre keys.
    digits : int or None
        Decimals to keep in every float, metres and feet alike.

    Returns
    -------
    dict, list or scalar
        The structure with twins added.

    Examples
    --------
    >>> with_foot_twins({"height_m": 3.048})
    {'height_m': 3.048, 'height_ft': 10.0}
    """
    if isinstance(obj, dict):
        out = {}
        for key, value in obj.items():
            key_digits = _digits_for(key, digits)
            out[key] = with_foot_twins(value, key_digits)
            twin = _twin(key, value)
            if twin is not None and twin[0] not in obj:
                out[twin[0]] = with_foot_twins(twin[1], key_digits)
        return out
    if isinstance(obj, (list, tuple)):
        return [with_foot_twins(v, digits) for v in obj]
    if isinstance(obj, float) and digits is not None and math.isfinite(obj):
        return round(obj, digits)
    return obj


# --- Lengths for people: the site file's unit first, the other beside it ---------------------------
#
# One number format for every printed length, area and volume: thousands separators always, a fixed
# number of decimals, the site file's unit first and the other unit in brackets. Findings, errors,
# the screen summary, the report, the sweep lines and the map's tooltips all use these helpers.


def to_unit(value_m: float, unit: str) -> float:
    """A length in metres expressed in ``unit`` (``"m"`` or ``"ft"``) [1]_.

    Examples
    --------
    >>> to_unit(304.8, "ft")
    1000.0
    """
    return float(value_m) / LENGTH_UNITS[unit]


def from_unit(value: float, unit: str) -> float:
    """A length given in ``unit`` expressed in metres [1]_.

    Examples
    --------
    >>> from_unit(1000.0, "ft")
    304.8
    """
    return float(value) * LENGTH_UNITS[unit]


def other_unit(unit: str) -> str:
    """The length unit shown in brackets beside ``unit``."""
    return "m" if unit == "ft" else "ft"


def format_number(value: float | None, decimals: int = 2) -> str:
    """A number with thousands separators and fixed decimals; ``"n/a"`` when missing or not finite.

    Examples
    --------
    >>> format_number(12345.678, 1)
    '12,345.7'
    """
    if value is None or not math.isfinite(float(value)):
        return "n/a"
    text = f"{float(value):,.{decimals}f}"
    return "0" + text[2:] if text.startswith("-0") and float(text.replace(",", "")) == 0 else text


def _pair(
    value_si: float | None, first: tuple[str, float], second: tuple[str, float], decimals: int, signed: bool = False
) -> str:
    if value_si is None or not math.isfinite(float(value_si)):
        return "n/a"
    (u1, per1), (u2, per2) = first, second
    a, b = format_number(value_si / per1, decimals), format_number(value_si / per2, decimals)
    if signed:
        a, b = (t if t.startswith("-") else "+" + t for t in (a, b))
    return f"{a} {u1} ({b} {u2})"


def format_length(value_m: float | None, unit: str = "m", decimals: int = 2, signed: bool = False) -> str:
    """A length in the site file's unit, the other unit in brackets.

    Parameters
    ----------
    value_m : float or None
        The length. [m]
    unit : {"m", "ft"}
        The site file's length unit, shown first.
    decimals : int
        Decimals in both units.
    signed : bool
        Put ``+`` before positive values (differences, margins).

    Returns
    -------
    str
        E.g. ``"1,000.0 ft (304.8 m)"``; ``"n/a"`` for a missing length.

    References
    ----------
    .. [1] International Yard and Pound Agreement (1959): 1 ft = 0.3048 m exactly.

    Examples
    --------
    >>> format_length(304.8, "ft", 1)
    '1,000.0 ft (304.8 m)'
    >>> format_length(15.0, "m")
    '15.00 m (49.21 ft)'
    """
    first = (unit, LENGTH_UNITS[unit])
    second = (other_unit(unit), LENGTH_UNITS[other_unit(unit)])
    return _pair(value_m, first, second, decimals, signed)


def format_area(value_m2: float | None, unit: str = "m", decimals: int = 0) -> str:
    """An area in the site file's unit squared, the other in brackets (``m2``, ``ft2``).

    Examples
    --------
    >>> format_area(92.90304, "ft")
    '1,000 ft2 (93 m2)'
    """
    first = (f"{unit}2", LENGTH_UNITS[unit] ** 2)
    second = (f"{other_unit(unit)}2", LENGTH_UNITS[other_unit(unit)] ** 2)
    return _pair(value_m2, first, second, decimals)


def format_volume(value_m3: float | None, unit: str = "m", decimals: int = 0) -> str:
    """A volume: cubic metres and cubic yards (earthworks), the site file's side first.

    Examples
    --------
    >>> format_volume(0.9144**3 * 100, "ft")
    '100 yd3 (76 m3)'
    """
    m3, yd3 = ("m3", 1.0), ("yd3", M_PER_YD**3)
    first, second = (yd3, m3) if unit == "ft" else (m3, yd3)
    return _pair(value_m3, first, second, decimals)
