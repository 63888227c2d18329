"""The ``[conditions]`` table: snow and ground conditions under the same antennas.

A site file (and a measurement file, :mod:`geo.site.measured_file`) may list the conditions the path
is predicted for beside the study's own ground: ``snow_depth`` (the file's unit; a number or a
list), ``snow`` (``"dry"`` or ``"wet"``) and ``ground`` (``"dry"``, ``"medium"`` or ``"wet"``,
the ITU-R P.527 classes of :mod:`geo.radio.ground_constants`; a text or a list). Every depth is
taken with every ground: one condition each, in the order written (grounds first).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from geo.errors import SiteFileError
from geo.radio.ground_constants import GROUND_CLASSES, SNOW_KINDS
from geo.units import format_length

__all__ = ["ConditionSpec", "MAX_SNOW_DEPTH_M", "parse_conditions"]

#: Deepest snow accepted (our bound: deeper snow buries a glide path's lower antenna). [m]
MAX_SNOW_DEPTH_M = 3.0
_KEYS = ("snow_depth", "snow", "ground")


@dataclass(frozen=True)
class ConditionSpec:
    """One condition of the ground under the antennas.

    Attributes
    ----------
    snow_depth_m : float
        [m]; 0 without snow.
    snow : {"dry", "wet"} or None
        None without snow.
    ground : {"dry", "medium", "wet"} or None
        None: the site file's own ground (``[prediction]``).
    """

    snow_depth_m: float = 0.0
    snow: str | None = None
    ground: str | None = None

    def words(self, unit: str = "m") -> str:
        """A few words for screens and plots, e.g. ``wet snow 0.30 m (0.98 ft), medium ground``."""
        ground = "the site file's ground" if self.ground is None else f"{self.ground} ground"
        if self.snow_depth_m <= 0.0:
            return f"no snow, {ground}"
        return f"{self.snow} snow {format_length(self.snow_depth_m, unit, 2)}, {ground}"


def _depths(table: dict, prefix: str, scale: float, units: str) -> list[float]:
    value = table.get("snow_depth", 0.0)
    items = value if isinstance(value, list) else [value]
    name = f"{prefix}.snow_depth"
    if not items:
        raise SiteFileError(name, "is an empty list; give a depth or a list of depths in the file's unit")
    out = []
    for i, item in enumerate(items):
        where = name if not isinstance(value, list) else f"{name} {i + 1}"
        if isinstance(item, bool) or not isinstance(item, (int, float)) or not math.isfinite(item):
            raise SiteFileError(where, f"must be a number in {units} (got {item!r})")
        depth = float(item) * scale
        if not 0.0 <= depth <= MAX_SNOW_DEPTH_M:
            raise SiteFileError(
                where, f"must be from 0 to {format_length(MAX_SNOW_DEPTH_M, units, 1)} (got {item:g} {units})"
            )
        out.append(depth)
    return out


def _grounds(table: dict, prefix: str) -> list[str | None]:
    if "ground" not in table:
        return [None]
    value = table["ground"]
    items = value if isinstance(value, list) else [value]
    allowed = ", ".join(f'"{g}"' for g in GROUND_CLASSES)
    if not items:
        raise SiteFileError(f"{prefix}.ground", f"is an empty list; use one or more of {allowed}")
    for i, item in enumerate(items):
        where = f"{prefix}.ground" if not isinstance(value, list) else f"{prefix}.ground {i + 1}"
        if not isinstance(item, str) or item not in GROUND_CLASSES:
            raise SiteFileError(where, f"must be one of {allowed} (got {item!r})")
    return list(items)


def parse_conditions(table, prefix: str, scale: float, units: str) -> tuple[ConditionSpec, ...]:
    """Validate a ``[conditions]`` table.

    Parameters
    ----------
    table : dict
        The table as TOML gives it.
    prefix : str
        Its dotted name in errors (``"conditions"``).
    scale : float
        Metres per unit of the file.
    units : {"m", "ft"}

    Returns
    -------
    tuple of ConditionSpec
        Grounds times depths, in the order written.

    Raises
    ------
    SiteFileError
        Naming the field, what is wrong and what is allowed.
    """
    if not isinstance(table, dict):
        raise SiteFileError(prefix, f"must be a table [{prefix}] (got {table!r})")
    for key in table:
        if key not in _KEYS:
            raise SiteFileError(f"{prefix}.{key}", f"unknown key in [{prefix}]; allowed: {', '.join(_KEYS)}")
    depths = _depths(table, prefix, scale, units)
    snow = table.get("snow")
    kinds = ", ".join(f'"{k}"' for k in SNOW_KINDS)
    if snow is not None and snow not in SNOW_KINDS:
        raise SiteFileError(f"{prefix}.snow", f"must be one of {kinds} (got {snow!r})")
    if snow is None and any(d > 0.0 for d in depths):
        raise SiteFileError(f"{prefix}.snow", f"missing; with a snow depth give snow = {kinds}")
    grounds = _grounds(table, prefix)
    return tuple(
        ConditionSpec(d, snow if d > 0.0 else None, g) for g in grounds for d in depths
    )  # fmt: skip
