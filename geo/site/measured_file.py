"""The only reader of measurement files: flight inspection (or ground check) results of a glide path.

Two forms, told apart by the file's ending:

TOML (``.toml``): the summary figures::

    units = "m"                      # or "ft": the unit of rdh and of the snow depth
    [measured]
    path_angle_deg = 3.04            # any of these four
    half_sector_below_deg = 0.35
    half_sector_above_deg = 0.37
    rdh = 15.2
    [conditions]                     # optional: the ground when it was measured (geo.site.conditions)
    snow_depth = 0.2
    snow = "wet"

CSV (``.csv``): the DDM, or the path's angle, along the approach, one sample per row. The header
names the columns: a distance before the threshold with its unit (``distance_m``, ``distance_ft``,
``distance_km`` or ``distance_nm``), then ``ddm`` or ``angle_deg`` (one of the two), and optionally
``run`` (a name: several runs in one file) and the aircraft's height above the threshold with its
unit (``height_m`` or ``height_ft``; without it, or with its cells empty for a whole run, the
samples lie on the designed path, as on an approach flown on the path). DDM is positive below the
path (150 Hz dominating). The angle is the path's elevation seen from where the designed straight
path meets the reflecting plane abeam the mast. Lines starting with ``#`` and empty lines are skipped.

Errors are one line naming the file, the row (the file's line, counted from 1) and the
column, what is wrong and the fix: :class:`geo.errors.SiteFileError`.
"""

from __future__ import annotations

import csv
import math
import tomllib
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from geo.errors import SiteFileError
from geo.site.conditions import ConditionSpec, parse_conditions
from geo.units import LENGTH_UNITS, M_PER_FT

__all__ = ["MeasuredRun", "MeasuredResults", "load_measured", "FIGURE_KEYS", "DISTANCE_UNITS"]

#: ``[measured]`` keys, and whether each is a length (in the file's unit).
FIGURE_KEYS = {"path_angle_deg": False, "half_sector_below_deg": False, "half_sector_above_deg": False, "rdh": True}
#: Distance columns and metres per unit (1 NM = 1,852 m exactly).
DISTANCE_UNITS = {"distance_m": 1.0, "distance_ft": M_PER_FT, "distance_km": 1000.0, "distance_nm": 1852.0}
_HEIGHT_UNITS = {"height_m": 1.0, "height_ft": M_PER_FT}
_QUANTITIES = ("ddm", "angle_deg")
_BOUNDS = {"ddm": (-1.0, 1.0), "angle_deg": (0.0, 20.0)}


@dataclass(frozen=True)
class MeasuredRun:
    """One run along the approach.

    Attributes
    ----------
    name : str
        The ``run`` column's value (``"1"`` without that column).
    quantity : {"ddm", "angle_deg"}
    distance_m : numpy.ndarray
        Before the threshold, positive on the approach. [m]
    value : numpy.ndarray
        DDM or path angle [deg].
    height_m : numpy.ndarray or None
        The aircraft above the threshold's elevation; None: on the designed path. [m]
    rows : tuple of int
        The file's row of each sample (the header is row 1).
    """

    name: str
    quantity: str
    distance_m: np.ndarray
    value: np.ndarray
    height_m: np.ndarray | None
    rows: tuple[int, ...]


@dataclass(frozen=True)
class MeasuredResults:
    """A measurement file, every length in metres.

    Attributes
    ----------
    source : str
        The file's name.
    units : {"m", "ft"}
        The TOML file's unit (CSV: the distance column's, m or ft).
    figures : dict
        ``path_angle_deg``, ``half_sector_below_deg``, ``half_sector_above_deg`` [deg], ``rdh_m`` [m]:
        those the file gives.
    conditions : tuple of ConditionSpec
        The ground when it was measured (at most one; empty: the site file's ground).
    runs : tuple of MeasuredRun
    """

    source: str
    units: str
    figures: dict
    conditions: tuple[ConditionSpec, ...]
    runs: tuple[MeasuredRun, ...]


def load_measured(path: str | Path) -> MeasuredResults:
    """Read and check a measurement file (``.toml`` or ``.csv``, see the module notes).

    Raises
    ------
    SiteFileError
        One line: the file, the field (TOML) or the row and column (CSV), the fix.
    """
    path = Path(path)
    name = str(path)
    try:
        text = path.read_bytes().decode("utf-8-sig")
    except OSError as exc:
        raise SiteFileError("", f"cannot read the measurement file ({exc.strerror or exc})", name) from None
    except UnicodeDecodeError:
        raise SiteFileError("", "the measurement file is not UTF-8 text; save it as UTF-8", name) from None
    suffix = path.suffix.lower()
    try:
        if suffix == ".toml":
            return _from_toml(text, name)
        if suffix == ".csv":
            return _from_csv(text, name)
    except SiteFileError as exc:
        raise exc.with_source(name) from None
    raise SiteFileError("", f"ends in {suffix or 'nothing'!r}; a measurement file is .toml (figures) or .csv", name)


def _from_toml(text: str, name: str) -> MeasuredResults:
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise SiteFileError("", f"not valid TOML: {exc}") from None
    for key in doc:
        if key not in ("units", "measured", "conditions"):
            raise SiteFileError(str(key), "unknown key at the top level; allowed: units, measured, conditions")
    units = doc.get("units")
    if units not in LENGTH_UNITS:
        raise SiteFileError("units", f'must be "m" or "ft" (got {units!r})')
    table = doc.get("measured")
    if not isinstance(table, dict) or not table:
        raise SiteFileError("measured", f"missing or empty; add [measured] with any of {', '.join(FIGURE_KEYS)}")
    figures = {}
    for key, value in table.items():
        if key not in FIGURE_KEYS:
            raise SiteFileError(f"measured.{key}", f"unknown key; allowed: {', '.join(FIGURE_KEYS)}")
        unit = units if FIGURE_KEYS[key] else "deg"
        if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
            raise SiteFileError(f"measured.{key}", f"must be a number in {unit} (got {value!r})")
        if not (0.0 < value <= (100.0 if FIGURE_KEYS[key] else 20.0)):
            raise SiteFileError(
                f"measured.{key}", f"must be above 0 and at most {100 if FIGURE_KEYS[key] else 20} {unit}"
            )
        figures["rdh_m" if key == "rdh" else key] = float(value) * (LENGTH_UNITS[units] if FIGURE_KEYS[key] else 1.0)
    conditions = _conditions(doc, units)
    return MeasuredResults(name, units, figures, conditions, ())


def _conditions(doc: dict, units: str) -> tuple[ConditionSpec, ...]:
    if "conditions" not in doc:
        return ()
    got = parse_conditions(doc["conditions"], "conditions", LENGTH_UNITS[units], units)
    if len(got) != 1:
        raise SiteFileError("conditions", "a measurement was made under one condition: give one depth and one ground")
    return got


def _header(fields: list[str], row: int) -> tuple[str, str, str | None, str | None]:
    """The distance, value, height and run columns the header names (the file's ``row``)."""
    names = [f.strip() for f in fields]
    known = (*DISTANCE_UNITS, *_QUANTITIES, *_HEIGHT_UNITS, "run")
    for i, n in enumerate(names):
        if n not in known:
            raise SiteFileError(f"row {row}, column {i + 1} ({n!r})", f"unknown column; use {', '.join(known)}")
        if names.count(n) > 1:
            raise SiteFileError(f"row {row}, column {n}", "named twice; name each column once")

    def one(group, what):
        found = [n for n in names if n in group]
        if len(found) > 1:
            raise SiteFileError(f"row {row}", f"names {' and '.join(found)}; give one {what} column")
        return found[0] if found else None

    distance = one(DISTANCE_UNITS, "distance")
    if distance is None:
        raise SiteFileError(f"row {row}", f"names no distance column; add one of {', '.join(DISTANCE_UNITS)}")
    value = one(_QUANTITIES, "value")
    if value is None:
        raise SiteFileError(f"row {row}", "names no value column; add ddm or angle_deg")
    return distance, value, one(_HEIGHT_UNITS, "height"), ("run" if "run" in names else None)


def _cell_number(cell: str, row: int, column: str, low: float, high: float) -> float:
    where = f"row {row}, column {column}"
    try:
        value = float(cell)
    except ValueError:
        raise SiteFileError(where, f"must be a number (got {cell.strip()!r})") from None
    if not math.isfinite(value) or not low <= value <= high:
        raise SiteFileError(where, f"must be from {low:g} to {high:g} (got {cell.strip()})")
    return value


def _from_csv(text: str, name: str) -> MeasuredResults:
    lines = [(i + 1, line) for i, line in enumerate(text.splitlines())]
    lines = [(i, line) for i, line in lines if line.strip() and not line.lstrip().startswith("#")]
    if not lines:
        raise SiteFileError("row 1", "the file is empty; give a header and one sample per row")
    reader = csv.reader([line for _, line in lines])
    rows = list(reader)
    distance, value, height, run = _header(rows[0], lines[0][0])
    col = {n.strip(): i for i, n in enumerate(rows[0])}
    samples: dict[str, list] = {}
    for (number, _), cells in zip(lines[1:], rows[1:]):
        if len(cells) != len(col):
            raise SiteFileError(f"row {number}", f"has {len(cells)} cells, the header {len(col)}; give one per column")
        d = _cell_number(cells[col[distance]], number, distance, 0.0, 50_000.0 / DISTANCE_UNITS[distance])
        v = _cell_number(cells[col[value]], number, value, *_BOUNDS[value])
        h = None
        if height is not None and cells[col[height]].strip():
            h = _cell_number(cells[col[height]], number, height, 0.0, 10_000.0 / _HEIGHT_UNITS[height])
            h *= _HEIGHT_UNITS[height]
        key = cells[col[run]].strip() if run is not None else "1"
        if not key:
            raise SiteFileError(f"row {number}, column run", "is empty; name the run (any text)")
        samples.setdefault(key, []).append((d * DISTANCE_UNITS[distance], v, h, number))
    if not samples:
        raise SiteFileError(f"row {lines[0][0]}", "no samples after the header; give one sample per row")
    runs = []
    for key, items in samples.items():
        if len(items) < 2:
            raise SiteFileError(
                f"row {items[0][3]}, column {run or distance}", f"run {key!r} has one sample; give two or more"
            )
        d, v, h, n = (list(t) for t in zip(*items))
        given = [x is not None for x in h]
        if any(given) and not all(given):
            row = n[given.index(False)] if given[0] else n[given.index(True)]
            raise SiteFileError(f"row {row}, column {height}", f"run {key!r} gives heights on some rows only; "
                                "give a height on every row of the run or on none (on the designed path)")  # fmt: skip
        runs.append(MeasuredRun(key, value, np.array(d), np.array(v), np.array(h) if all(given) else None, tuple(n)))
    units = "ft" if distance == "distance_ft" else "m"
    return MeasuredResults(name, units, {}, (), tuple(runs))
