"""The approach profile as CSV (``profile.csv``), metres and feet side by side."""

from __future__ import annotations

import csv
import math
from pathlib import Path

from geo.ground.profile import ApproachProfile
from geo.units import M_PER_FT

__all__ = ["write_profile_csv"]

_LENGTH_COLUMNS = (
    "terrain",
    "terrain_lowest_across",
    "terrain_highest_across",
    "path_straight",
    "path_actual",
    "clearance",
)


def _num(value: float, decimals: int) -> str:
    return "" if not math.isfinite(value) else f"{value:.{decimals}f}"


def _or_nan(values, like):
    """``values``, or NaN everywhere where the profile has no band."""
    import numpy as np

    return np.full(np.shape(like), np.nan) if values is None else values


def write_profile_csv(profile: ApproachProfile, path: Path) -> None:
    """Write one row per profile sample.

    Columns: ``along_m``, ``along_ft``, ``lat``, ``lon``, then ``terrain`` (on the centre line),
    ``terrain_lowest_across`` and ``terrain_highest_across`` (the band either side of it,
    :data:`geo.ground.profile.BAND_HALF_WIDTH_M`), ``path_straight``, ``path_actual`` and
    ``clearance`` each as ``_m`` and ``_ft``. Elevations are in the site's vertical datum; an
    empty cell is a point without DEM data.
    """
    header = ["along_m", "along_ft", "lat", "lon"]
    for name in _LENGTH_COLUMNS:
        header += [f"{name}_m", f"{name}_ft"]
    columns = {
        "terrain": profile.terrain_m,
        "terrain_lowest_across": _or_nan(profile.terrain_low_m, profile.terrain_m),
        "terrain_highest_across": _or_nan(profile.terrain_high_m, profile.terrain_m),
        "path_straight": profile.path_straight_m,
        "path_actual": profile.path_actual_m,
        "clearance": profile.clearance_m,
    }
    with path.open("w", newline="", encoding="utf-8") as fh:
        writer = csv.writer(fh, lineterminator="\n")
        writer.writerow(header)
        for i, along in enumerate(profile.along_m):
            row = [
                _num(along, 3),
                _num(along / M_PER_FT, 3),
                _num(profile.lat_deg[i], 8),
                _num(profile.lon_deg[i], 8),
            ]
            for name in _LENGTH_COLUMNS:
                value = float(columns[name][i])
                row += [_num(value, 3), _num(value / M_PER_FT, 3)]
            writer.writerow(row)
