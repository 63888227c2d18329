"""The predicted path along the approach as CSV (``path.csv``), metres and feet side by side."""

from __future__ import annotations

import csv
import math
from pathlib import Path

import numpy as np

from geo.study.site_study import StudyResult
from geo.units import M_PER_FT

__all__ = ["write_path_csv", "path_columns"]


def path_columns(result: StudyResult) -> dict[str, np.ndarray]:
    """Columns of the table: distances and heights above the threshold elevation (metres), DDM.

    The designed path is the straight line at the path angle through the GPIP's height; ``ddm_on_designed*``
    columns are the DDM a receiver on it sees.
    """
    p, q = result.prediction, result.prediction_no_shift
    offset = result.mast.plane_elevation_m - result.spec.threshold.elevation_m
    tan = math.tan(math.radians(result.spec.angle_deg))
    geometric = (
        result.intercept_elevation_m
        - result.spec.threshold.elevation_m
        + tan * np.hypot(result.mast.setback_m - p.along_m, result.mast.offset_m)
    )
    cols = {
        "along_m": p.along_m,
        "designed_height_m": p.nominal_z_m + offset,
        "geometric_actual_height_m": geometric,
        "predicted_height_m": p.path_z_m + offset,
        "predicted_height_no_shift_m": q.path_z_m + offset,
        "ddm_on_designed": p.ddm_nominal,
        "ddm_on_designed_no_shift": q.ddm_nominal,
    }
    if result.surface is not None:  # the surface (physical-optics) DDM beside the image-theory one
        cols["ddm_on_designed_surface"] = result.surface.ddm_nominal
    return cols


def write_path_csv(result: StudyResult, path: Path) -> None:
    """One row per point on the extended centre line, from 10 NM to the threshold.

    Heights are above the threshold elevation; DDM is positive where 150 Hz dominates.
    """
    cols = path_columns(result)
    header = []
    for name in cols:
        header += [name, name[:-2] + "_ft"] if name.endswith("_m") else [name]
    with path.open("w", newline="", encoding="utf-8") as fh:
        writer = csv.writer(fh, lineterminator="\n")
        writer.writerow(header)
        for i in range(cols["along_m"].size):
            row = []
            for name, values in cols.items():
                v = float(values[i])
                row += [f"{v:.3f}", f"{v / M_PER_FT:.3f}"] if name.endswith("_m") else [f"{v:.5f}"]
            writer.writerow(row)
