"""The index of a batch (``index.csv``): one row per site, status and key figures."""

from __future__ import annotations

import csv
from pathlib import Path

from geo.batch import INDEX_FIELDS
from geo.units import with_foot_twins

__all__ = ["write_index"]


def write_index(records, path: Path) -> None:
    """Write one row per site, in the order the sites were given."""
    rows = []
    for r in records:
        row = {k: None for k in INDEX_FIELDS}
        row.update(
            {
                "site": r.label,
                "folder": r.folder if r.status == "done" else "",
                "status": r.status,
                "error": r.error,
                **r.figures,
            }
        )
        rows.append(with_foot_twins(row))
    with path.open("w", newline="", encoding="utf-8") as fh:
        writer = csv.DictWriter(fh, fieldnames=list(rows[0]), lineterminator="\n")
        writer.writeheader()
        for row in rows:
            writer.writerow({k: "" if v is None else v for k, v in row.items()})
