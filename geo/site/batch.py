"""Batch inputs: the sites of a batch, from site files and CSV files of runways.

This module reads and checks what a batch is given (one :class:`Job` per site) and never writes;
:mod:`geo.outputs.batch_out` runs the jobs and writes their results. A problem with the inputs as
a whole (a missing file, a file given twice, a CSV without rows or with a column a CSV cannot
carry) raises :class:`~geo.errors.SiteFileError` before anything is written; a problem with one
site is that site's own failure when it runs.
"""

from __future__ import annotations

import csv
import hashlib
import re
from dataclasses import dataclass, field
from pathlib import Path

from geo.errors import SiteFileError

__all__ = ["Job", "jobs_from_csv", "jobs_from_paths", "slug", "site_spec"]


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
    sha256 : str
        For a CSV row: SHA-256 of the CSV's header line and the row's line(s), each ending in a
        newline, as UTF-8 (a site file's hash is taken when it is read).
    """

    label: str
    path: Path | None = None
    doc: dict | None = None
    base_dir: Path = field(default_factory=Path)
    sha256: str = ""


def _convert(text: str):
    for kind in (int, float):
        try:
            return kind(text)
        except ValueError:
            pass
    return text


#: Keys whose values are lists or arrays of tables in a site file; a CSV cell cannot hold them.
_NOT_IN_CSV = {
    "protected_area": "protected areas are an array of tables ([[protected_area]])",
    "csb_feed": "feeds are a list of numbers, one per antenna",
    "sbo_feed": "feeds are a list of numbers, one per antenna",
    "outline": "an outline is a list of points",
}


def _check_column(key: str, source: str) -> None:
    parts = key.split(".")
    for part in parts:
        reason = _NOT_IN_CSV.get(part)
        if reason is None and part.isdigit():
            reason = "a numbered column stands for a list item"
        if reason is not None:
            raise SiteFileError(
                key,
                f"cannot be given in a CSV: {reason}; write this runway as a site file (.toml) "
                "and give it to mastplan batch beside the CSV",
                source,
            )


def _records(text: str):
    """``(header line, [(row line(s), fields), ...])`` of a CSV text (a quoted cell may span lines)."""
    lines = text.splitlines(keepends=True)
    reader = csv.reader(lines)
    out, used = [], 0
    for fields in reader:
        raw = "".join(lines[used : reader.line_num])
        used = reader.line_num
        out.append((raw, fields))
    if not out:
        return "", []
    return out[0][0], out[1:]


def _row_sha256(header: str, raw: str) -> str:
    text = header.rstrip("\r\n") + "\n" + raw.rstrip("\r\n") + "\n"
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def jobs_from_csv(path: Path) -> list[Job]:
    """One job per CSV row; columns are dotted site-file keys (``runway.threshold.lat``).

    Raises
    ------
    SiteFileError
        When the file cannot be read, has no rows under its header, or has a column that a CSV
        cannot carry (a list or an array of tables of the site file).
    """
    try:
        text = path.read_text(encoding="utf-8-sig")
    except UnicodeDecodeError:
        raise SiteFileError("", "the CSV is not UTF-8 text; save it as UTF-8", str(path)) from None
    except OSError as exc:
        raise SiteFileError("", f"cannot read the CSV ({exc.strerror or exc})", str(path)) from None
    header_raw, rows = _records(text)
    header = next(csv.reader([header_raw]), []) if header_raw else []
    keys = [k.strip() for k in header]
    for key in keys:
        if key:
            _check_column(key, str(path))
    rows = [(raw, fields) for raw, fields in rows if any(f.strip() for f in fields)]
    if not rows:
        raise SiteFileError(
            "", "no runway rows under the header; add one row per runway (site file keys as columns)", str(path)
        )
    jobs = []
    for i, (raw, fields) in enumerate(rows, start=2):
        doc: dict = {}
        for key, value in zip(keys, fields):
            if not key or value.strip() == "":
                continue
            parts = key.split(".")
            node = doc
            for part in parts[:-1]:
                node = node.setdefault(part, {})
                if not isinstance(node, dict):
                    raise SiteFileError(key, "column clashes with another column", str(path))
            node[parts[-1]] = _convert(value.strip())
        site = doc.get("site")
        name = site.get("name") if isinstance(site, dict) else None
        label = str(name if name is not None else f"{path.stem} row {i}")
        jobs.append(
            Job(
                label=f"{label} ({path.name} row {i})",
                doc=doc,
                base_dir=path.parent,
                sha256=_row_sha256(header_raw, raw),
            )
        )
    return jobs


def jobs_from_paths(paths) -> list[Job]:
    """Jobs for site files (``.toml``) and CSV files of runways (``.csv``).

    Raises
    ------
    SiteFileError
        When no file is given, a file does not exist, or the same file is given twice.
    """
    jobs, seen = [], {}
    for p in map(Path, paths):
        if not p.is_file():
            what = "is a folder; give site files (.toml) or CSV files" if p.is_dir() else "no such file"
            raise SiteFileError("", f"{what}; check the path", str(p))
        key = p.resolve()
        if key in seen:
            raise SiteFileError("", f"given twice (also as {seen[key]}); give each file once", str(p))
        seen[key] = str(p)
        if p.suffix.lower() == ".csv":
            jobs += jobs_from_csv(p)
        else:
            jobs.append(Job(label=p.name, path=p))
    if not jobs:
        raise SiteFileError("", "no sites given; name site files (.toml) or CSV files of runways")
    return jobs


def site_spec(job: Job):
    """The validated :class:`~geo.site.site_file.SiteSpec` of a job (raises SiteFileError)."""
    from geo.site.site_file import load_site, parse_site

    if job.path is not None:
        return load_site(job.path)
    return parse_site(job.doc, source=job.label, sha256=job.sha256, base_dir=job.base_dir)


def slug(text: str, taken: set[str]) -> str:
    """A folder name from a label: letters, digits, - and _; made unique within ``taken``."""
    base = re.sub(r"[^A-Za-z0-9_-]+", "-", text).strip("-")[:60] or "site"
    name, n = base, 2
    while name.lower() in taken:
        name, n = f"{base}-{n}", n + 1
    taken.add(name.lower())
    return name
