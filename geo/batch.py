"""Batch studies: many site files, or one CSV of runways, on a local process pool.

Each site is studied and written to its own folder; a failing site is recorded with its one-line
error and does not stop the others. The caller gets one record per site (status, key figures,
the layers for a combined GeoPackage).
"""

from __future__ import annotations

import csv
import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from geo.errors import MastplanError, SiteFileError

__all__ = ["Job", "SiteRecord", "jobs_from_paths", "run_job", "INDEX_FIELDS"]

#: Columns of the index CSV (lengths get foot twins).
INDEX_FIELDS = (
    "site",
    "folder",
    "status",
    "error",
    "rdh_m",
    "path_height_over_threshold_m",
    "gpip_along_m",
    "setback_m",
    "offset_m",
    "lower_height_m",
    "upper_height_m",
    "upper_shift_m",
    "findings_fail",
    "findings_warning",
)
_COMBINED_LAYERS = ("runway", "mast", "antennas", "gpip", "reflection_zones")


@dataclass(frozen=True)
class Job:
    """One site to study: a file, or a document from a CSV row.

    Attributes
    ----------
    label : str
        How the site is named in the index (file name or CSV row).
    path : Path or None
        Site file.
    doc : dict or None
        Parsed site document (a CSV row).
    base_dir : Path
        Folder for relative paths in ``doc``.
    """

    label: str
    path: Path | None = None
    doc: dict | None = None
    base_dir: Path = field(default_factory=Path)


@dataclass
class SiteRecord:
    """What came of one job."""

    label: str
    folder: str
    status: str
    error: str = ""
    figures: dict[str, Any] = field(default_factory=dict)
    layers: dict[str, dict] = field(default_factory=dict)


def _convert(text: str):
    for kind in (int, float):
        try:
            return kind(text)
        except ValueError:
            pass
    return text


def jobs_from_csv(path: Path) -> list[Job]:
    """One job per CSV row; columns are dotted site-file keys (``runway.threshold.lat``)."""
    jobs = []
    with path.open(newline="", encoding="utf-8") as fh:
        for i, row in enumerate(csv.DictReader(fh), start=2):
            doc: dict = {}
            for key, value in row.items():
                if key is None or value is None or value.strip() == "":
                    continue
                parts = key.strip().split(".")
                node = doc
                for part in parts[:-1]:
                    node = node.setdefault(part, {})
                    if not isinstance(node, dict):
                        raise SiteFileError(key, f"column clashes with another column in {path.name}")
                node[parts[-1]] = _convert(value.strip())
            label = str(doc.get("site", {}).get("name", f"{path.stem} row {i}"))
            jobs.append(Job(label=f"{label} ({path.name} row {i})", doc=doc, base_dir=path.parent))
    return jobs


def jobs_from_paths(paths) -> list[Job]:
    """Jobs for site files (``.toml``) and CSV files of runways (``.csv``)."""
    jobs = []
    for p in map(Path, paths):
        if p.suffix.lower() == ".csv":
            jobs += jobs_from_csv(p)
        else:
            jobs.append(Job(label=p.name, path=p))
    return jobs


def slug(text: str, taken: set[str]) -> str:
    """A folder name from a label: letters, digits, - and _; made unique within ``taken``."""
    base = re.sub(r"[^A-Za-z0-9_-]+", "-", text).strip("-")[:60] or "site"
    name, n = base, 2
    while name.lower() in taken:
        name, n = f"{base}-{n}", n + 1
    taken.add(name.lower())
    return name


def run_job(job: Job, folder: str, plots: bool) -> SiteRecord:
    """Study one site and write it into ``folder`` (which must not exist); never raises."""
    from geo.outputs.geojson import study_layers
    from geo.outputs.write import fill_study
    from geo.site import load_site, parse_site
    from geo.study import run_study

    try:
        spec = (
            load_site(job.path)
            if job.path is not None
            else parse_site(job.doc, source=job.label, base_dir=job.base_dir)
        )
        result = run_study(spec)
        Path(folder).mkdir()
        fill_study(result, Path(folder), plots)
    except MastplanError as exc:
        return SiteRecord(job.label, Path(folder).name, "failed", str(exc))
    except Exception as exc:  # one site's bug must not stop the batch
        return SiteRecord(job.label, Path(folder).name, "failed", f"internal error: {type(exc).__name__}: {exc}")
    severities = [f.severity for f in result.findings]
    figures = {
        "rdh_m": result.rdh_m,
        "path_height_over_threshold_m": result.path_height_over_threshold_m,
        "gpip_along_m": result.gpip.along_m,
        "setback_m": result.mast.setback_m,
        "offset_m": result.mast.offset_m,
        "lower_height_m": result.antennas[0].height_m,
        "upper_height_m": result.antennas[-1].height_m,
        "upper_shift_m": result.antennas[-1].shift_toward_runway_m,
        "findings_fail": severities.count("fail"),
        "findings_warning": severities.count("warning"),
    }
    layers = {k: v for k, v in study_layers(result).items() if k in _COMBINED_LAYERS}
    return SiteRecord(job.label, Path(folder).name, "done", "", figures, layers)


def combined_layers(records: list[SiteRecord]) -> dict[str, dict]:
    """The layers of every done site in one collection per layer, each feature tagged with its site."""
    out: dict[str, dict] = {}
    for rec in records:
        for name, fc in rec.layers.items():
            features = out.setdefault(name, {"type": "FeatureCollection", "features": []})["features"]
            for f in fc["features"]:
                features.append({**f, "properties": {"site": rec.label, "folder": rec.folder, **f["properties"]}})
    return out
