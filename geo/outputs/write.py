"""Write a whole study atomically: into a temporary folder, then into place.

A failed or interrupted run never leaves a half-written output folder where
the results belong, and an existing folder is replaced only when asked. An
input file inside the output folder is never deleted.
"""

from __future__ import annotations

import glob
import json
import os
import shutil
import sys
import tempfile
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

from geo.errors import OutputError
from geo.study.site_study import StudyResult

__all__ = [
    "write_study",
    "write_early",
    "EarlyWrites",
    "write_json",
    "atomic_folder",
    "check_target",
    "remove_partials",
]

Writer = Callable[[StudyResult, Path], None]


def write_json(path: Path, obj, compact: bool = False) -> None:
    """Write JSON with a stable layout (UTF-8, no NaN); 2-space indent unless ``compact``."""
    if compact:
        text = json.dumps(obj, separators=(",", ":"), ensure_ascii=False, allow_nan=False)
    else:
        text = json.dumps(obj, indent=2, ensure_ascii=False, allow_nan=False)
    path.write_text(text + "\n", encoding="utf-8")


#: The outputs of a study written by default, in the order they are written; ``mastplan run --outputs``
#: picks among them and :data:`OPTIONAL_OUTPUTS`. ``report`` is ``report.html`` and, unless the plots
#: are off, the site plan it shows beside it (``site_plan.png``, :data:`SITE_PLAN`).
OUTPUTS = ("summary", "layers", "gpkg", "kml", "map", "tables", "plots", "report")
#: Outputs written only when named: ``pdf`` (``report.pdf``, printed by headless Chromium; about 1.7 s more
#: on the demo, so not by default; it writes ``report.html`` too).
OPTIONAL_OUTPUTS = ("pdf",)


def check_outputs(names) -> tuple[str, ...]:
    """Validate a selection of outputs (raises OutputError naming the allowed ones)."""
    names = tuple(dict.fromkeys(n.strip() for n in names if n.strip()))
    every = OUTPUTS + OPTIONAL_OUTPUTS
    unknown = [n for n in names if n not in every]
    if not names:
        raise OutputError(f"--outputs: empty, so nothing would be written; name one or more of {', '.join(every)}")
    if unknown:
        raise OutputError(f"--outputs: {', '.join(unknown)} is not an output; choose from {', '.join(every)}")
    return names


@dataclass(frozen=True)
class EarlyWrites:
    """Outputs the background writers were given before the surface prediction ended.

    Attributes
    ----------
    staging : Path
        The temporary folder they write into; :func:`fill_study` moves its files into the output
        folder.
    outputs : frozenset of str
        ``"plots"`` (every plot but ``surface.png``), ``"map"``, ``"gpkg"``, ``"site_plan"`` (the
        report's ``site_plan.png``, drawn by the plots' writer).
    """

    staging: Path
    outputs: frozenset


def write_early(
    partial: StudyResult, out_dir: str | Path, overwrite: bool, plots: bool, outputs, background, staged: list
) -> EarlyWrites | None:
    """Give the background writers the outputs that do not depend on the surface prediction.

    Called with the study before its surface prediction (:func:`geo.study.site_study.run_study`'s
    ``before_surface``): the plots but ``surface.png``, the map and the GeoPackage read nothing of
    that prediction or its findings, so they are the same files drawn now. They go to a staging
    folder beside ``out_dir``, appended to ``staged`` as soon as it exists (before anything is
    written into it), so that the caller removes it when the run ends, however it ends; the output
    folder itself is still written atomically by :func:`write_study`. The output folder is checked
    here, so a folder that cannot be written is said before the surface prediction runs.

    Returns
    -------
    EarlyWrites or None
        None when no background writer takes any of them.
    """
    out = Path(out_dir).absolute()
    _check_target(out, overwrite, [Path(partial.spec.source)] if partial.spec.source else [])
    chosen = set(outputs) - (set() if plots else {"plots"})
    early = set(background.outputs) & chosen & {"plots", "map", "gpkg"}
    if _site_plan_wanted(chosen, plots) and "plots" in background.outputs:
        early.add("site_plan")
    if not early:
        return None
    try:
        out.parent.mkdir(parents=True, exist_ok=True)
        staged.append(Path(tempfile.mkdtemp(prefix=f".{out.name}.partial-{os.getpid()}-", dir=out.parent)))
    except OSError as exc:
        raise _cannot(out, "create", exc) from None
    staging = staged[-1]
    if "plots" in early:
        from geo.outputs.plots import write_plots

        background.submit(write_plots, partial, staging, output="plots")
    if early & {"map", "gpkg", "site_plan"}:
        from geo.outputs.geojson import study_layers

        layers = study_layers(partial)
        if "site_plan" in early:
            from geo.outputs.site_plan import write_site_plan

            background.submit(write_site_plan, partial, layers, staging / SITE_PLAN, output="plots")
        if "map" in early:
            from geo.outputs.webmap import write_map

            background.submit(write_map, partial, layers, staging / "map.html", output="map")
        if "gpkg" in early:
            from geo.outputs.gpkg import write_gpkg

            background.submit(write_gpkg, layers, staging / "site.gpkg", output="gpkg")
    return EarlyWrites(staging, frozenset(early))


#: The report's site plan, beside ``report.html`` (:mod:`geo.outputs.site_plan`).
SITE_PLAN = "site_plan.png"


def _site_plan_wanted(chosen, plots: bool) -> bool:
    """Whether ``site_plan.png`` is drawn: with the report (or its PDF), unless the plots are off (``--no-plots``)."""
    return plots and bool(set(chosen) & {"report", "pdf"})


def fill_study(
    result: StudyResult,
    folder: Path,
    plots: bool = True,
    outputs=OUTPUTS,
    extra_layers: dict | None = None,
    background=None,
    early: EarlyWrites | None = None,
) -> None:
    """Write the chosen outputs of a study into an existing, empty folder (not atomic by itself).

    Parameters
    ----------
    result : StudyResult
    folder : Path
    plots : bool
        ``False`` drops ``"plots"`` from ``outputs``.
    outputs : sequence of str
        Names from :data:`OUTPUTS`.
    extra_layers : dict, optional
        More FeatureCollections for the layers, GeoPackage, KML and map (a sweep's candidates).
    background : geo.outputs.background.BackgroundWriter, optional
        Worker processes that draw the plots, render the map and write the GeoPackage (those they
        were started for) while this process writes the rest; the files are the same. It is stopped when
        writing fails or is interrupted, before the caller removes the folder.
    early : EarlyWrites, optional
        Outputs already given to the background writers (:func:`write_early`): not written again;
        their files are moved in from the staging folder.
    """
    chosen = set(outputs) - (set() if plots else {"plots"})
    chosen |= {"report"} if "pdf" in chosen else set()  # the PDF is the report printed
    done = early.outputs if early is not None else frozenset()
    site_plan = _site_plan_wanted(chosen, plots)
    if site_plan and "site_plan" not in done:
        chosen.add("site_plan")
    layers = None
    if chosen & {"layers", "gpkg", "kml", "map", "site_plan"}:
        from geo.outputs.geojson import study_layers

        layers = {**study_layers(result), **(extra_layers or {})}
    elsewhere = set(background.outputs) & chosen if background is not None else set()
    if "site_plan" in chosen and "plots" in elsewhere:
        elsewhere.add("site_plan")  # drawn by the plots' writer, whose matplotlib is imported
    try:
        if "site_plan" in elsewhere:
            from geo.outputs.site_plan import write_site_plan

            background.submit(write_site_plan, result, layers, folder / SITE_PLAN, output="plots")
        if "plots" in elsewhere:
            from geo.outputs.plots import write_plots, write_surface_plot

            background.submit(write_surface_plot if "plots" in done else write_plots, result, folder, output="plots")
        if "map" in elsewhere - done:
            from geo.outputs.webmap import write_map

            background.submit(write_map, result, layers, folder / "map.html", output="map")
        if "gpkg" in elsewhere - done:
            from geo.outputs.gpkg import write_gpkg

            background.submit(write_gpkg, layers, folder / "site.gpkg", output="gpkg")
        last = {"summary", "pdf"} if "pdf" in chosen else set()  # the summary says why there is no PDF
        _fill_here(result, folder, chosen - elsewhere - last, layers, "plots" in chosen, site_plan)
        if elsewhere:
            background.wait()
        if early is not None:
            for staged in sorted(early.staging.iterdir()):
                os.replace(staged, folder / staged.name)
        if last:
            _fill_pdf_and_summary(result, folder, "summary" in chosen)
    except BaseException:
        if elsewhere:
            background.stop()
        raise


def _fill_pdf_and_summary(result: StudyResult, folder: Path, summary: bool) -> None:
    """Print ``report.pdf`` once the plots it shows are in ``folder``, then the summary saying how it went."""
    from geo.outputs.pdf import write_pdf

    reason = write_pdf(folder / "report.html", folder / "report.pdf")
    if summary:
        from geo.outputs.summary import summary_dict

        note = {"written": reason is None, "reason": reason or ""}
        write_json(folder / "summary.json", summary_dict(result, report_pdf=note))


def _fill_here(
    result: StudyResult, folder: Path, chosen: set, layers: dict | None, with_plots: bool, site_plan: bool = False
) -> None:
    """Write the chosen outputs in this process (``with_plots``, ``site_plan``: the report shows them)."""
    if "summary" in chosen:
        from geo.outputs.summary import summary_dict

        write_json(folder / "summary.json", summary_dict(result))
    if "layers" in chosen:
        (folder / "layers").mkdir()
        for name, fc in layers.items():
            write_json(folder / "layers" / f"{name}.geojson", fc, compact=True)
    if "kml" in chosen:
        from geo.outputs.kml import write_kml

        write_kml(result.spec.name, layers, folder / "site.kml", result.spec.units)
    if "gpkg" in chosen:
        from geo.outputs.gpkg import write_gpkg

        write_gpkg(layers, folder / "site.gpkg")
    if "map" in chosen:
        from geo.outputs.webmap import write_map

        write_map(result, layers, folder / "map.html")
    if "tables" in chosen:
        from geo.outputs.path_csv import write_path_csv
        from geo.outputs.profile_csv import write_profile_csv

        if result.profile is not None:
            write_profile_csv(result.profile, folder / "profile.csv")
        write_path_csv(result, folder / "path.csv")
    if "plots" in chosen:
        from geo.outputs.plots import write_plots

        write_plots(result, folder)
    if "site_plan" in chosen:
        from geo.outputs.site_plan import write_site_plan

        write_site_plan(result, layers, folder / SITE_PLAN)
    if "report" in chosen:
        from geo.outputs.report import write_report

        write_report(result, folder / "report.html", with_plots, site_plan)


def _clean_stale(parent: Path, name: str) -> None:
    """Remove the temporary folders of earlier runs that ended without cleaning up (their process is gone).

    Both kinds mastplan makes beside ``name``: ``.NAME.partial-PID-*`` (results being written) and
    ``.NAME.old-PID-*`` (earlier results being replaced). A run killed between its two renames left
    the earlier results in its ``.old-`` folder and none at ``name``: they are put back first. A
    folder of a process still running is left alone; an ``.old-`` folder without a process number
    (older versions of mastplan) is always settled.
    """
    for kind in ("partial", "old"):
        prefix = f".{name}.{kind}-"
        for tmp in parent.glob(f"{glob.escape(prefix)}*"):
            pid_text = tmp.name[len(prefix) :].split("-", 1)[0]
            if pid_text.isdigit():
                if int(pid_text) == os.getpid() or _running(int(pid_text)):
                    continue
            elif kind == "partial":
                continue
            if kind == "old":
                _settle_old(tmp, parent / name)
            else:
                _remove_tree(tmp)


def _settle_earlier_runs(out: Path) -> None:
    """:func:`_clean_stale` beside ``out`` when its folder exists, before ``out`` is checked."""
    try:
        if out.parent.is_dir():
            _clean_stale(out.parent, out.name)
    except OSError as exc:
        raise _cannot(out, "read", exc) from None


def _running(pid: int) -> bool:
    """Whether a process ``pid`` exists (one of another user counts as running)."""
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


def _settle_old(old: Path, out: Path) -> None:
    """Remove a folder of replaced results; when ``out`` is missing, its earlier results go back first."""
    kept = old / out.name
    if kept.is_dir() and not os.path.lexists(out):
        try:
            os.rename(kept, out)
        except OSError:
            return  # the earlier results stay where they are rather than be lost
    _remove_tree(old)


def _remove_tree(folder: Path) -> None:
    """Remove a folder of mastplan's own, also files in read-only subfolders of it."""

    def make_writable(function, path, error):
        if isinstance(error, tuple):  # onerror's (type, value, traceback) before Python 3.12
            error = error[1]
        if isinstance(error, PermissionError):
            try:
                os.chmod(os.path.dirname(path), 0o700)
                function(path)
            except OSError:
                pass

    handler = "onexc" if sys.version_info >= (3, 12) else "onerror"
    shutil.rmtree(folder, **{handler: make_writable})
    if folder.exists():
        shutil.rmtree(folder, ignore_errors=True)


def _cannot(out: Path, what: str, exc: OSError) -> OutputError:
    """The one-line error of an output folder the system refuses, with the fix."""
    reason = exc.strerror or type(exc).__name__
    return OutputError(
        f"--out: cannot {what} {out} ({reason}); give a folder you can write to, or change the permissions"
    )


def check_target(out_dir: str | Path, overwrite: bool, inputs=()) -> None:
    """Check that ``out_dir`` can take the results, before any work (raises OutputError).

    Parameters
    ----------
    out_dir : str or Path
    overwrite : bool
        A non-empty folder may be replaced.
    inputs : sequence of Path
        Input files that must survive.
    """
    out = Path(out_dir).absolute()
    _settle_earlier_runs(out)
    _check_target(out, overwrite, list(inputs))
    nearest = out.parent
    while not nearest.exists() and nearest != nearest.parent:
        nearest = nearest.parent
    denied = PermissionError(13, "Permission denied")
    if not os.access(nearest, os.W_OK | os.X_OK):
        raise _cannot(out, "write in", denied)
    if out.is_dir() and not os.access(out, os.W_OK):  # moving it aside needs write permission on it
        raise _cannot(out, "replace", denied)


def _check_target(out: Path, overwrite: bool, inputs: list[Path]) -> None:
    try:
        if out.exists() and not out.is_dir():
            raise OutputError(f"--out: {out} is a file; name a folder")
        full = out.is_dir() and any(out.iterdir())
    except OSError as exc:
        if isinstance(exc, OutputError):
            raise
        raise _cannot(out, "read", exc) from None
    if full:
        if not overwrite:
            raise OutputError(f"--out: {out} is not empty; add --overwrite to replace it, or name a new folder")
        for path in inputs:
            if path.resolve().is_relative_to(out.resolve()):
                raise OutputError(f"--out: {out} holds the input {path}; write the results elsewhere")


def remove_partials(out_dir: str | Path) -> None:
    """Remove the temporary folders this process made beside ``out_dir`` (named for it and the process).

    A folder of earlier results this process was replacing goes back to ``out_dir`` when the
    new results did not get there.

    Found by name, not from a list: a signal that lands between a folder's creation and the line
    that would note it cannot leave the folder behind.
    """
    out = Path(out_dir).absolute()
    for tmp in out.parent.glob(f".{glob.escape(out.name)}.partial-{os.getpid()}-*"):
        _remove_tree(tmp)
    for old in out.parent.glob(f".{glob.escape(out.name)}.old-{os.getpid()}-*"):
        _settle_old(old, out)


def atomic_folder(
    out_dir: str | Path,
    overwrite: bool,
    fill: Callable[[Path], None],
    inputs: tuple[Path, ...] | list[Path] = (),
) -> Path:
    """Fill a fresh temporary folder with ``fill`` and move it to ``out_dir``.

    Parameters
    ----------
    out_dir : str or Path
        Final folder.
    overwrite : bool
        Replace a non-empty ``out_dir``.
    fill : callable
        Writes everything into the folder it is given.
    inputs : sequence of Path
        Input files that must survive (refuse to replace a folder holding one).

    Returns
    -------
    Path
        The output folder.
    """
    out = Path(out_dir).absolute()
    parent = out.parent
    _settle_earlier_runs(out)
    _check_target(out, overwrite, list(inputs))
    try:
        parent.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise _cannot(out, "create", exc) from None
    try:
        try:
            tmp = Path(tempfile.mkdtemp(prefix=f".{out.name}.partial-{os.getpid()}-", dir=parent))
        except OSError as exc:
            raise _cannot(out, "create", exc) from None
        os.chmod(tmp, 0o755)
        fill(tmp)
        _swap(tmp, out)
    except BaseException:
        remove_partials(out)  # this one, and any a signal left unnoted (the staging of write_early)
        raise
    return out


def _swap(tmp: Path, out: Path) -> None:
    """Move the filled folder ``tmp`` to ``out``, the earlier results out of the way first."""
    try:
        if not out.exists():
            os.rename(tmp, out)
            return
        old = Path(tempfile.mkdtemp(prefix=f".{out.name}.old-{os.getpid()}-", dir=out.parent))
        os.rename(out, old / out.name)
        os.rename(tmp, out)
    except OSError as exc:
        raise _cannot(out, "replace" if os.path.lexists(out) else "create", exc) from None
    _remove_tree(old)


def write_study(
    result: StudyResult,
    out_dir: str | Path,
    overwrite: bool = False,
    plots: bool = True,
    outputs=OUTPUTS,
    background=None,
    early: EarlyWrites | None = None,
) -> Path:
    """Write every output of a study into ``out_dir``, atomically.

    Parameters
    ----------
    result : StudyResult
    out_dir : str or Path
    overwrite : bool
        Replace an existing non-empty folder.
    plots : bool
        Also draw the PNG plots (matplotlib; the slowest part of writing).
    outputs : sequence of str
        Names from :data:`OUTPUTS`.
    background : geo.outputs.background.BackgroundWriter, optional
        See :func:`fill_study`.
    early : EarlyWrites, optional
        See :func:`fill_study`.

    Returns
    -------
    Path
        The output folder.

    Raises
    ------
    OutputError
        When the folder exists and is not empty without ``overwrite``, or
        when it holds the site file.
    """
    inputs = [Path(result.spec.source)] if result.spec.source else []

    return atomic_folder(
        out_dir,
        overwrite,
        lambda folder: fill_study(result, folder, plots, outputs, background=background, early=early),
        inputs,
    )


def write_sweep(
    spec, sweep, options, best: StudyResult | None, out_dir: str | Path, overwrite: bool = False, plots: bool = True
) -> Path:
    """Write a siting sweep atomically: table, candidates, plot, summary, and the best candidate's study.

    Parameters
    ----------
    spec : SiteSpec
    sweep : SweepResult
    options : SweepOptions
    best : StudyResult or None
        Full study of the best feasible candidate, written to ``best/`` (with the candidates on its map).
    out_dir : str or Path
    overwrite, plots : bool
    """
    from geo.outputs.sweep_out import candidates_layer, plot_sweep, sweep_summary, write_sweep_csv

    inputs = [Path(spec.source)] if spec.source else []

    def fill(folder: Path) -> None:
        write_json(folder / "summary.json", sweep_summary(spec, sweep, options))
        write_sweep_csv(sweep, folder / "sweep.csv")
        candidates = candidates_layer(spec, sweep)
        (folder / "layers").mkdir()
        write_json(folder / "layers" / "candidates.geojson", candidates, compact=True)
        if plots:
            plot_sweep(spec, sweep, options, folder / "sweep.png")
        if best is not None:
            (folder / "best").mkdir()
            fill_study(best, folder / "best", plots, extra_layers={"candidates": candidates})

    return atomic_folder(out_dir, overwrite, fill, inputs)
