"""Writers of a siting sweep: ``sweep.csv``, candidate points, ``sweep.png``, the summary."""

from __future__ import annotations

import csv
import math
from pathlib import Path

import numpy as np

from geo.site.site_file import SiteSpec
from geo.study.sweep import SweepResult
from geo.study.sweep_choice import RANK_TEXT, near_feasible
from geo.study.sweep_surface import NOT_JUDGED, SURFACE_RANK_TEXT, surface_skip_reason
from geo.units import M_PER_YD, format_length, format_number, format_volume, to_unit, with_foot_twins
from geo.version import __version__

__all__ = [
    "sweep_rows",
    "write_sweep_csv",
    "candidates_layer",
    "sweep_summary",
    "plot_sweep",
    "sweep_text",
    "candidate_line",
    "SCORE_TEXT",
]

SCORE_TEXT = (
    "0-100 for feasible candidates: 40 points for the RDH (all at the target, none half a band away), "
    "40 for grading (all for the least cut + fill among the feasible, none for the most), 20 for the "
    "roughness margin (its share of the limit). Infeasible candidates have no score."
)


def _value(v):
    if isinstance(v, (np.bool_, bool)):
        return bool(v)
    if isinstance(v, (np.integer,)):
        return int(v)
    if isinstance(v, (np.floating, float)):
        return float(v) if math.isfinite(v) else None
    return str(v)


def sweep_rows(sweep: SweepResult) -> list[dict]:
    """One dict per candidate, metre keys only (twins are added by the writers)."""
    names = list(sweep.columns)
    return [dict({n: _value(sweep.columns[n][k]) for n in names}, reasons=sweep.reasons[k]) for k in range(len(sweep))]


def _order(sweep: SweepResult) -> list[int]:
    """Candidate indices by rank when the sweep is ranked (:func:`geo.study.sweep_choice.add_ranks`), else as swept."""
    if "rank" not in sweep.columns:
        return list(range(len(sweep)))
    return [int(k) for k in np.argsort(sweep.columns["rank"], kind="stable")]


def write_sweep_csv(sweep: SweepResult, path: Path) -> None:
    """``sweep.csv``: one row per candidate, sorted by rank when ranked.

    Every length has its foot (or yd3, ft2) twin; ``candidate`` is the candidate's number in the
    layers and plots.
    """
    table = sweep_rows(sweep)
    rows = [with_foot_twins(dict(candidate=k, **table[k])) for k in _order(sweep)]
    with path.open("w", newline="", encoding="utf-8") as fh:
        writer = csv.DictWriter(fh, fieldnames=list(rows[0]), lineterminator="\n")
        writer.writeheader()
        for r in rows:
            writer.writerow({k: "" if v is None else v for k, v in r.items()})


def candidates_layer(spec: SiteSpec, sweep: SweepResult) -> dict:
    """Candidate mast positions (lowest antenna) as GeoJSON points with every figure."""
    from geo.outputs.geojson import _coord, collection, feature
    from geo.study.site_study import runway_of

    frame = runway_of(spec).frame
    c = sweep.columns
    sign = np.where(c["side"] == "right", 1.0, -1.0)
    lat, lon = frame.to_geographic(c["setback_m"], sign * c["offset_m"])
    lat, lon = np.atleast_1d(lat), np.atleast_1d(lon)
    return collection(
        [
            feature({"type": "Point", "coordinates": _coord(lat[k], lon[k])}, dict(row, best=k == sweep.best))
            for k, row in enumerate(sweep_rows(sweep))
        ]
    )


def sweep_summary(spec: SiteSpec, sweep: SweepResult, options) -> dict:
    """``summary.json`` of a sweep."""
    rows = sweep_rows(sweep)
    best = rows[sweep.best] if sweep.best is not None else None
    return with_foot_twins(
        {
            "site": {"name": spec.name},
            "tool": {"name": "mastplan", "version": __version__},
            "input": {
                "file": Path(spec.source).name if spec.source else "",
                "sha256": spec.sha256,
                "units": spec.units,
            },
            "candidates": len(sweep),
            "feasible": int(np.count_nonzero(sweep.columns["feasible"])),
            "options": {
                "setbacks_m": [float(v) for v in options.setbacks_m],
                "offsets_m": [float(v) for v in options.offsets_m],
                "sides": list(options.sides),
                "rdh_band_m": list(options.rdh_band_m),
                "roughness_criterion": options.roughness_criterion,
                "setbacks_solved_for_target_rdh": bool(getattr(options, "paired", False)),
            },
            "grid_spacing_m": sweep.grid_spacing_m,
            "score": SCORE_TEXT,
            "ranking": RANK_TEXT if "rank" in sweep.columns else "",
            "surface": _surface_block(spec, sweep, options),
            "best": best,
            "top": [dict(candidate=k, **rows[k]) for k in _order(sweep)[:10] if sweep.columns["feasible"][k]],
            "near_feasible": [
                dict(candidate=int(k), **rows[int(k)]) for k in near_feasible(sweep.columns, sweep.reasons)[:10]
            ],
            "cautions": [
                "A sweep ranks candidates on the figures mastplan computes; the siting decision rests with "
                "the engineer, flight inspection and the local authority."
            ],
        }
    )


def _surface_block(spec: SiteSpec, sweep: SweepResult, options) -> dict:
    """How the best candidates were re-judged by the surface prediction (:mod:`geo.study.sweep_surface`)."""
    verdicts = sweep.columns.get("surface_verdict")
    judged = 0 if verdicts is None else int(sum(1 for v in verdicts if v != NOT_JUDGED))
    skipped = surface_skip_reason(spec, options)
    return {
        "asked": int(getattr(options, "surface_top", 0)),
        "rejudged": judged,
        "skipped": skipped if verdicts is not None else "not run",
        "ranking": SURFACE_RANK_TEXT if judged else "",
        "columns": "surface_angle_error_deg (fitted surface path angle minus design), surface_half_sector_asymmetry "
        "((above - below) / (above + below)), surface_worst_bend_share (95 % bend over its limit), surface_verdict; "
        f"empty and '{NOT_JUDGED}' for the candidates not re-judged",
    }


def plot_sweep(spec: SiteSpec, sweep: SweepResult, options, path: Path) -> None:
    """RDH, grading volume and roughness margin against setback; the feasible RDH band shaded."""
    from geo.outputs.plots import _figure

    c = sweep.columns
    fig, axes = _figure(11, 10, rows=3)
    fig.subplots_adjust(left=0.08, right=0.78, top=0.95, bottom=0.06, hspace=0.35)
    margin_key = f"{options.roughness_criterion}_margin_m"
    unit = spec.units
    per = to_unit(1.0, unit)  # lengths in the site file's unit
    vol_unit, vol_per = ("yd3", 1.0 / M_PER_YD**3) if unit == "ft" else ("m3", 1.0)
    panels = [
        ("rdh_m", f"RDH [{unit}]"),
        ("volume", f"cut + fill [{vol_unit}]"),
        (margin_key, f"{options.roughness_criterion} margin [{unit}]"),
    ]

    def values(key, sel):
        if key == "volume":
            return (c["cut_m3"] + c["fill_m3"])[sel] * vol_per
        return c[key][sel] * per

    for side in ("left", "right"):
        for o in np.unique(c["offset_m"]):
            sel = (c["side"] == side) & (c["offset_m"] == o)
            if not sel.any():
                continue
            order = np.argsort(c["setback_m"][sel])
            x = c["setback_m"][sel][order] * per
            for ax, (key, _label) in zip(axes, panels):
                y = values(key, sel)[order]
                label = f"{side}, offset {format_length(o, spec.units, 1)}"
                (line,) = ax.plot(x, y, ls="-" if side == "right" else "--", label=label)
                feas = c["feasible"][sel][order]
                ax.plot(x[feas], y[feas], "o", ms=3, color=line.get_color())
    low, high = options.rdh_band_m
    axes[0].axhspan(low * per, high * per, color="#b2f2bb", alpha=0.4, label="feasible RDH band")
    axes[2].axhline(0.0, color="k", lw=0.8)
    if sweep.best is not None:
        for ax, (key, _label) in zip(axes, panels):
            y = values(key, np.arange(len(sweep)) == sweep.best)[0]
            ax.plot([c["setback_m"][sweep.best] * per], [y], "*", ms=14, color="k", label="best")
    for ax, (_key, label) in zip(axes, panels):
        ax.set_ylabel(label)
        ax.set_xlabel(f"setback from the threshold [{unit}]")
        ax.grid(alpha=0.3)
    axes[0].legend(fontsize=7, loc="upper left", bbox_to_anchor=(1.01, 1.0))
    axes[0].set_title(f"{spec.name}: siting sweep (dots: feasible; solid right, dashed left)")
    fig.savefig(path, dpi=100)


def _surface_words(c: dict, k: int) -> str:
    """The surface re-judging of candidate ``k`` in a few words ("" when it was not re-judged)."""
    verdict = str(c["surface_verdict"][k]) if "surface_verdict" in c else ""
    if verdict in ("", NOT_JUDGED):
        return ""
    if verdict == "not computed":
        return "; over the surface: not computed"
    return (
        f"; over the surface: {verdict} (angle error {c['surface_angle_error_deg'][k]:+.3f} deg, asymmetry "
        f"{c['surface_half_sector_asymmetry'][k]:+.3f}, worst bend {100 * c['surface_worst_bend_share'][k]:.0f} % "
        "of its limit)"
    )


def candidate_line(sweep: SweepResult, k: int, unit: str) -> str:
    """One candidate in words, the site file's unit first."""
    c = sweep.columns
    score = c["score"][k]
    tail = f", score {format_number(score, 1)}" if math.isfinite(score) else ""
    tail += _surface_words(c, k)
    return (
        f"{c['side'][k]} side, setback {format_length(c['setback_m'][k], unit, 1)}, "
        f"offset {format_length(c['offset_m'][k], unit, 1)}, RDH {format_length(c['rdh_m'][k], unit)}, "
        f"cut {format_volume(c['cut_m3'][k], unit)}, fill {format_volume(c['fill_m3'][k], unit)}{tail}"
    )


def sweep_text(spec: SiteSpec, sweep: SweepResult, options, best_folder: Path | None = None, top: int = 10) -> str:
    """What the command line prints after a sweep: counts, the top candidates, near-feasible ones.

    Parameters
    ----------
    spec : SiteSpec
    sweep : SweepResult
    options : SweepOptions
    best_folder : Path, optional
        Where the best candidate's full study was written.
    top : int
        Feasible candidates to list.

    Returns
    -------
    str
    """
    unit = spec.units
    c = sweep.columns
    feasible = int(np.count_nonzero(c["feasible"]))
    criterion = options.roughness_criterion
    lines = [f"{len(sweep):,} candidates, {feasible:,} feasible (roughness by the {criterion} criterion)."]
    order = [k for k in _order(sweep) if c["feasible"][k]][:top]
    if sweep.best is not None:
        where = f" (full study in {best_folder})" if best_folder is not None else ""
        lines.append(f"Best: {candidate_line(sweep, sweep.best, unit)}{where}")
    if order:
        lines.append(f"Top {len(order)} by rank:")
        for k in order:
            rank = int(c["rank"][k]) if "rank" in c else order.index(k) + 1
            note = str(c["rank_note"][k]) if "rank_note" in c else ""
            lines.append(f"  {rank:>3}. {candidate_line(sweep, k, unit)}" + (f" ({note})" if note else ""))
    else:
        lines.append("No candidate is feasible; see the reasons in sweep.csv.")
    near = near_feasible(c, sweep.reasons)
    if feasible < top and near.size:
        lines.append(
            f"Feasible after the computed grading ({near.size:,}; cut and fill bring the reflection zone within "
            f"the {options.roughness_criterion} limit of its plane), least earthworks first:"
        )
        lines += [f"  {candidate_line(sweep, int(k), unit)}" for k in near[:top]]
    return "\n".join(lines)
