"""Length units and the metre/foot twin rule.

Inside the library every length is in metres. A site file states its length
unit once; :mod:`geo.site` converts by :data:`LENGTH_UNITS` on the way in. On the way out every
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
