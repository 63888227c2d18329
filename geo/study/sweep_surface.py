"""The sweep sees the surface: its best candidates re-judged by the surface prediction.

The sweep judges every candidate over its fitted plane (:mod:`geo.study.sweep`). Here the best
feasible candidates by rank (:func:`geo.study.sweep_choice.add_ranks`), at most
``SweepOptions.surface_top`` of them, each get the study a single site gets
(:func:`geo.study.site_study.run_study`, the surface prediction without its convergence check to
keep it affordable), and their surface path is judged against the Annex 10 limits
(:mod:`geo.study.surface_sector`). Only where the site has a DEM and ``prediction.surface`` is on.

Columns added to the sweep (NaN, written empty in ``sweep.csv``, for the candidates not re-judged;
``surface_verdict`` says ``"not judged"`` there):

- ``surface_angle_error_deg``: the fitted surface path angle minus the design angle. [deg]
- ``surface_half_sector_asymmetry``: ``(above - below) / (above + below)``. [-]
- ``surface_worst_bend_share``: the largest 95 % bend amplitude over its segment's limit. [-]
- ``surface_verdict``: ``"pass"``, ``"warning"``, ``"fail"`` (a tolerance or monitor limit of the
  surface path broken, or a bend share above 1), ``"not computed"`` (the study stopped) or
  ``"not judged"``.
- ``rank_before_surface``: the rank the sweep gave.

The rank then follows :data:`SURFACE_RANK_TEXT`: the re-judged candidates that fail drop below every
other feasible candidate; otherwise the sweep's rank (and so its score) stands.

References
----------
.. [1] ICAO Annex 10, Volume I, 3.1.5.1.2.2, 3.1.5.4, 3.1.5.6.2-3.1.5.6.4 and 3.1.5.7.1 (see
       :mod:`geo.study.surface_sector` and :mod:`geo.radio.structure_limits`); from memory,
       confirm against the edition in force.
"""

from __future__ import annotations

import numpy as np

from geo.errors import MastplanError

__all__ = ["SURFACE_RANK_TEXT", "NOT_JUDGED", "surface_skip_reason", "rejudge_over_surface"]

NOT_JUDGED = "not judged"
SURFACE_RANK_TEXT = (
    "the best feasible candidates by the sweep's rank are re-judged by the surface prediction (without its "
    "convergence check); those failing a tolerance or monitor limit over the surface (path angle, half-sectors, "
    "RDH; Annex 10 Vol I from memory) or with a bend above its limit drop below every other feasible candidate, "
    "keeping their order; otherwise the sweep's rank stands. A prediction, confirmed only by flight inspection."
)


def surface_skip_reason(spec, options) -> str | None:
    """Why no candidate is re-judged by the surface prediction (None when they are)."""
    if spec.terrain is None:
        return "the site file gives no DEM (terrain.dem)"
    if not spec.prediction.surface:
        return "the site file says prediction.surface = false"
    if options.surface_top <= 0:
        return "no candidate asked for (surface_top = 0)"
    return None


def _empty_columns(n: int) -> dict:
    return {
        "surface_angle_error_deg": np.full(n, np.nan),
        "surface_half_sector_asymmetry": np.full(n, np.nan),
        "surface_worst_bend_share": np.full(n, np.nan),
        "surface_verdict": np.array([NOT_JUDGED] * n, dtype=object),
    }


def _verdict(sector) -> tuple[str, list[str]]:
    """``"pass"``, ``"warning"`` or ``"fail"`` and the names of the figures that fail."""
    failed = [f.name.replace("_", " ") for f in sector.figures if f.severity == "fail"]
    if np.isfinite(sector.worst_bend_share) and sector.worst_bend_share > 1.0:
        failed.append("bends")
    if failed:
        return "fail", failed
    return ("warning" if sector.severity == "warning" else "pass"), []


def rejudge_over_surface(spec, result, options, progress=None) -> int:
    """Re-judge the sweep's best feasible candidates by the surface prediction, and rank again.

    Parameters
    ----------
    spec : geo.site.site_file.SiteSpec
    result : geo.study.sweep.SweepResult
        Ranked (``rank`` column, :func:`geo.study.sweep_choice.add_ranks`); its columns, ``rank``,
        ``rank_note`` and ``best`` are updated in place.
    options : geo.study.sweep.SweepOptions
        ``surface_top``: how many candidates.
    progress : callable, optional
        ``progress(done, total)`` after each candidate.

    Returns
    -------
    int
        How many candidates were re-judged (0 when :func:`surface_skip_reason` gives a reason).
    """
    from geo.study import site_study
    from geo.study.sweep import candidate_site

    c = result.columns
    n = len(result)
    added = _empty_columns(n)
    c.update(added)
    c["rank_before_surface"] = np.asarray(c["rank"]).copy()
    if surface_skip_reason(spec, options) is not None:
        return 0
    feasible = np.flatnonzero(np.asarray(c["feasible"], bool))
    picks = feasible[np.argsort(c["rank"][feasible], kind="stable")][: options.surface_top]
    failures = {}
    for done, k in enumerate(picks, start=1):
        try:
            study = site_study.run_study(candidate_site(spec, result, int(k)), surface_check=False)
        except MastplanError:
            c["surface_verdict"][k] = "not computed"
        else:
            sector = study.surface_sector
            c["surface_angle_error_deg"][k] = sector.fitted_angle_deg - sector.design_angle_deg
            c["surface_half_sector_asymmetry"][k] = sector.asymmetry
            c["surface_worst_bend_share"][k] = sector.worst_bend_share
            c["surface_verdict"][k], failed = _verdict(sector)
            if failed:
                failures[int(k)] = failed
        if progress is not None:
            progress(done, len(picks))
    _rank_again(result, failures)
    return len(picks)


def _rank_again(result, failures: dict) -> None:
    """The rule of :data:`SURFACE_RANK_TEXT`: failing candidates below the other feasible ones."""
    c = result.columns
    old = np.asarray(c["rank_before_surface"])
    feasible = np.asarray(c["feasible"], bool)
    group = np.where(feasible, 0, 2)
    for k in failures:
        group[k] = 1
    order = np.lexsort((old, group))
    rank = np.empty(len(old), dtype=np.int64)
    rank[order] = np.arange(1, len(old) + 1)
    c["rank"] = rank
    notes = np.asarray(c["rank_note"], dtype=object).copy()
    if failures:  # the tie notes name the sweep's ranks
        for k, note in enumerate(notes):
            if str(note).startswith("score shows as rank"):
                notes[k] = f"{note} (ranks before the surface re-judging)"
    for k, failed in failures.items():
        notes[k] = f"below the candidates passing over the DEM surface: {', '.join(failed)} outside the limits"
    c["rank_note"] = notes
    if result.best is not None:
        result.best = int(np.flatnonzero(rank == 1)[0])
