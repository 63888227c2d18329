"""Running and writing a batch: one folder per site, ``index.csv`` and ``sites.gpkg``.

The batch's inputs come from :mod:`geo.site.batch` (which never writes); this module studies each job
in a process pool, writes each site's folder, and writes the index of all sites and their
combined layers, atomically as one output folder. A failing site is recorded with its one-line
error and does not stop the others.
"""

from __future__ import annotations

import csv
import hashlib
import os
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from geo.errors import MastplanError
from geo.site.batch import Job, slug
from geo.units import with_foot_twins

__all__ = ["SiteRecord", "INDEX_FIELDS", "run_job", "combined_layers", "write_index", "write_batch"]

#: Columns of the index CSV (lengths get foot twins). An antenna the array does not have is empty.
INDEX_FIELDS = (
    "site",
    "folder",
    "status",
    "error",
    "array",
    "side",
    "mast_lat",
    "mast_lon",
    "rdh_m",
    "path_height_over_threshold_m",
    "gpip_along_m",
    "setback_m",
    "offset_m",
    "lower_height_m",
    "middle_height_m",
    "upper_height_m",
    "middle_shift_m",
    "upper_shift_m",
    "findings_fail",
    "findings_warning",
    "input_sha256",
)
_COMBINED_LAYERS = ("runway", "mast", "antennas", "gpip", "reflection_zones")
_ROLES = ("lower", "middle", "upper")


@dataclass
class SiteRecord:
    """What came of one job."""

    label: str
    folder: str
    status: str
    error: str = ""
    figures: dict[str, Any] = field(default_factory=dict)
    layers: dict[str, dict] = field(default_factory=dict)


def _file_sha256(job: Job) -> str:
    if job.sha256 or job.path is None:
        return job.sha256
    try:
        return hashlib.sha256(job.path.read_bytes()).hexdigest()
    except OSError:
        return ""


def _figures(result) -> dict[str, Any]:
    """The index row of a done site (metres; foot twins are added when the index is written)."""
    severities = [f.severity for f in result.findings]
    mast = result.mast
    by_role = {a.role: a for a in result.antennas}
    figures = {
        "array": result.spec.array,
        "side": mast.side,
        "mast_lat": f"{mast.lat_deg:.8f}",
        "mast_lon": f"{mast.lon_deg:.8f}",
        "rdh_m": result.rdh_m,
        "path_height_over_threshold_m": result.path_height_over_threshold_m,
        "gpip_along_m": result.gpip.along_m,
        "setback_m": mast.setback_m,
        "offset_m": mast.offset_m,
    }
    for role in _ROLES:
        a = by_role.get(role)
        figures[f"{role}_height_m"] = a.height_m if a is not None else None
    for role in _ROLES[1:]:
        a = by_role.get(role)
        figures[f"{role}_shift_m"] = a.shift_toward_runway_m if a is not None else None
    figures["findings_fail"] = severities.count("fail")
    figures["findings_warning"] = severities.count("warning")
    figures["input_sha256"] = result.spec.sha256
    return figures


def run_job(job: Job, folder: str, plots: bool) -> SiteRecord:
    """Study one site and write it into ``folder`` (which must not exist); never raises."""
    from geo.outputs.geojson import study_layers
    from geo.outputs.write import fill_study
    from geo.site.batch import site_spec
    from geo.study.site_study import run_study

    name = Path(folder).name
    try:
        result = run_study(site_spec(job))
        Path(folder).mkdir()
        fill_study(result, Path(folder), plots)
    except MastplanError as exc:
        return SiteRecord(job.label, name, "failed", str(exc), {"input_sha256": _file_sha256(job)})
    except Exception as exc:  # one site's bug must not stop the batch
        error = f"internal error: {type(exc).__name__}: {exc}"
        return SiteRecord(job.label, name, "failed", error, {"input_sha256": _file_sha256(job)})
    layers = {k: v for k, v in study_layers(result).items() if k in _COMBINED_LAYERS}
    return SiteRecord(job.label, name, "done", "", _figures(result), layers)


def combined_layers(records: list[SiteRecord]) -> dict[str, dict]:
    """The layers of every done site in one collection per layer, each feature tagged with its site."""
    out: dict[str, dict] = {}
    for rec in records:
        for name, fc in rec.layers.items():
            features = out.setdefault(name, {"type": "FeatureCollection", "features": []})["features"]
            for f in fc["features"]:
                features.append({**f, "properties": {"site": rec.label, "folder": rec.folder, **f["properties"]}})
    return out


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


def folder_names(jobs: Sequence[Job]) -> list[str]:
    """One folder name per job: from the file name or the CSV row's label, unique within the batch."""
    taken: set[str] = set()
    return [slug(Path(j.label).stem if j.path else j.label, taken) for j in jobs]


def write_batch(
    jobs: Sequence[Job],
    out_dir: str | Path,
    overwrite: bool = False,
    plots: bool = False,
    workers: int | None = None,
    inputs: Sequence[Path] = (),
    progress: Callable[[int, int], None] | None = None,
) -> tuple[Path, list[SiteRecord]]:
    """Study and write every job in parallel, then the index and the combined GeoPackage, atomically.

    Parameters
    ----------
    jobs : sequence of Job
        From :func:`geo.site.batch.jobs_from_paths`.
    out_dir : str or Path
    overwrite : bool
        Replace a non-empty ``out_dir``.
    plots : bool
        Draw each site's PNG plots.
    workers : int, optional
        Processes; the number of CPUs by default.
    inputs : sequence of Path
        The input files (never inside a folder that is replaced).
    progress : callable, optional
        Called as ``progress(done, total)`` each time a site is done (the command line draws a
        progress bar with it; the library prints nothing).

    Returns
    -------
    (Path, list of SiteRecord)
        The output folder and one record per job, in the order of ``jobs``.
    """
    from concurrent.futures import ProcessPoolExecutor, as_completed

    from geo.optics.kernel import set_thread_limit
    from geo.outputs.gpkg import write_gpkg
    from geo.outputs.write import atomic_folder

    jobs = list(jobs)
    names = folder_names(jobs)
    records: list[SiteRecord | None] = [None] * len(jobs)

    def fill(folder: Path) -> None:
        count = min(workers or os.cpu_count() or 1, len(jobs))
        threads = max(1, (os.cpu_count() or 1) // count)  # the cores each process's optics kernel may use
        with ProcessPoolExecutor(max_workers=count, initializer=set_thread_limit, initargs=(threads,)) as pool:
            futures = {
                pool.submit(run_job, job, str(folder / name), plots): i
                for i, (job, name) in enumerate(zip(jobs, names))
            }
            for n, future in enumerate(as_completed(futures), start=1):
                records[futures[future]] = future.result()
                if progress is not None:
                    progress(n, len(jobs))
        write_index(records, folder / "index.csv")
        layers = combined_layers(records)
        if layers:
            write_gpkg(layers, folder / "sites.gpkg")

    folder = atomic_folder(out_dir, overwrite, fill, list(inputs))
    return folder, records
