"""Writers of a siting sweep: ``sweep.csv``, candidate points, ``sweep.png``, the summary."""

from __future__ import annotations

import csv
import math
from pathlib import Path

import numpy as np

from geo import __version__
from geo.site import SiteSpec
from geo.sweep import SweepResult
from geo.units import with_foot_twins

__all__ = ["sweep_rows", "write_sweep_csv", "candidates_layer", "sweep_summary", "plot_sweep", "SCORE_TEXT"]

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


def write_sweep_csv(sweep: SweepResult, path: Path) -> None:
    """``sweep.csv``: one row per candidate, every length with its foot (or yd3, ft2) twin."""
    rows = [with_foot_twins(r) for r in sweep_rows(sweep)]
    with path.open("w", newline="", encoding="utf-8") as fh:
        writer = csv.DictWriter(fh, fieldnames=list(rows[0]), lineterminator="\n")
        writer.writeheader()
        for r in rows:
            writer.writerow({k: "" if v is None else v for k, v in r.items()})


def candidates_layer(spec: SiteSpec, sweep: SweepResult) -> dict:
    """Candidate mast positions (lowest antenna) as GeoJSON points with every figure."""
    from geo.outputs.geojson import _coord, collection, feature
    from geo.study import runway_of

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
    best = sweep_rows(sweep)[sweep.best] if sweep.best is not None else None
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
            },
            "grid_spacing_m": sweep.grid_spacing_m,
            "score": SCORE_TEXT,
            "best": best,
            "cautions": [
                "A sweep ranks candidates on the figures mastplan computes; the siting decision rests with "
                "the engineer, flight inspection and the local authority."
            ],
        }
    )


def plot_sweep(spec: SiteSpec, sweep: SweepResult, options, path: Path) -> None:
    """RDH, grading volume and roughness margin against setback; the feasible RDH band shaded."""
    from geo.outputs.plots import _figure

    c = sweep.columns
    fig, axes = _figure(11, 10, rows=3)
    fig.subplots_adjust(left=0.08, right=0.78, top=0.95, bottom=0.06, hspace=0.35)
    margin_key = f"{options.roughness_criterion}_margin_m"
    panels = [
        ("rdh_m", "RDH [m]"),
        ("volume", "cut + fill [m3]"),
        (margin_key, f"{options.roughness_criterion} margin [m]"),
    ]
    for side in ("left", "right"):
        for o in np.unique(c["offset_m"]):
            sel = (c["side"] == side) & (c["offset_m"] == o)
            if not sel.any():
                continue
            order = np.argsort(c["setback_m"][sel])
            x = c["setback_m"][sel][order]
            for ax, (key, _label) in zip(axes, panels):
                y = (c["cut_m3"] + c["fill_m3"])[sel][order] if key == "volume" else c[key][sel][order]
                (line,) = ax.plot(x, y, ls="-" if side == "right" else "--", label=f"{side}, offset {o:g} m")
                feas = c["feasible"][sel][order]
                ax.plot(x[feas], y[feas], "o", ms=3, color=line.get_color())
    low, high = options.rdh_band_m
    axes[0].axhspan(low, high, color="#b2f2bb", alpha=0.4, label="feasible RDH band")
    axes[2].axhline(0.0, color="k", lw=0.8)
    if sweep.best is not None:
        for ax, (key, _label) in zip(axes, panels):
            y = (c["cut_m3"] + c["fill_m3"])[sweep.best] if key == "volume" else c[key][sweep.best]
            ax.plot([c["setback_m"][sweep.best]], [y], "*", ms=14, color="k", label="best")
    for ax, (_key, label) in zip(axes, panels):
        ax.set_ylabel(label)
        ax.set_xlabel("setback from the threshold [m]")
        ax.grid(alpha=0.3)
    axes[0].legend(fontsize=7, loc="upper left", bbox_to_anchor=(1.01, 1.0))
    axes[0].set_title(f"{spec.name}: siting sweep (dots: feasible; solid right, dashed left)")
    fig.savefig(path, dpi=100)
