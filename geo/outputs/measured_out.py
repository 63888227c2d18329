"""Writers of ``mastplan compare-measured``: ``summary.json``, ``differences.csv``, ``measured.png``, screen text.

Every length in metres and feet (``geo.units.with_foot_twins``); moves on screen in millimetres and
inches. A writer never recomputes: it reads the comparison and the adjustment.
"""

from __future__ import annotations

import csv
import math
from pathlib import Path

import numpy as np

from geo.study.adjustment import ADJUSTMENT_CAUTION
from geo.study.findings import CAUTIONS
from geo.units import M_PER_FT, format_length, with_foot_twins
from geo.version import __version__

__all__ = ["measured_summary", "write_differences_csv", "plot_measured", "measured_text", "write_measured"]

_SENSITIVITIES = {
    False: "image theory over the study's reflecting plane (finite differences)",
    True: "image theory plus the surface prediction's departure from it and that departure's finite differences",
}


def _finite(value):
    return None if value is None or not math.isfinite(float(value)) else float(value)


def _figures_dict(figures: dict) -> dict:
    return {k: float(v) for k, v in figures.items()}


def _comparison_figures(comparison) -> list[dict]:
    out = []
    surface = comparison.surface
    for i, o in enumerate(comparison.observations):
        if o.run is not None:
            continue
        s = None if surface is None else _finite(surface[i])
        unit = "_m" if o.name == "rdh_m" else "_deg"
        out.append({
            "figure": o.name,
            "measured" + unit: o.value,
            "image" + unit: float(comparison.image[i]),
            "measured_minus_image" + unit: o.value - float(comparison.image[i]),
            "surface" + unit: s,
            "measured_minus_surface" + unit: None if s is None else o.value - s,
        })  # fmt: skip
    return out


def _comparison_runs(comparison) -> list[dict]:
    runs: dict[str, list[int]] = {}
    for i, o in enumerate(comparison.observations):
        if o.run is not None:
            runs.setdefault(o.run, []).append(i)
    out = []
    for name, idx in runs.items():
        measured = np.array([comparison.observations[i].value for i in idx])
        image = comparison.image[idx]
        entry = {"run": name, "quantity": comparison.observations[idx[0]].name, "samples": len(idx),
                 "rms_measured_minus_image": float(np.sqrt(np.mean((measured - image) ** 2)))}  # fmt: skip
        if comparison.surface is not None:
            s = comparison.surface[idx]
            ok = np.isfinite(s)
            entry["rms_measured_minus_surface"] = float(np.sqrt(np.mean((measured - s)[ok] ** 2))) if ok.any() else None
        out.append(entry)
    return out


def _feed_moves(adj) -> list[dict]:
    out = []
    for s, m in zip(adj.settings, adj.moves_rounded):
        if s.kind == "amplitude":
            db = 20.0 * math.log10(1.0 + m) if m > -1.0 else None
            out.append(
                {"role": s.role, "feed": s.feed, "amplitude_change_percent": 100.0 * m, "amplitude_change_db": db}
            )
        elif s.kind == "phase":
            out.append({"role": s.role, "feed": s.feed, "phase_change_deg": float(m)})
    return out


def adjustment_dict(result, adj) -> dict:
    """``adjustment``: the antennas after the moves, the feeds' moves, the bias, the path after (metre keys)."""
    antennas = []
    for s, m, raw, off in zip(adj.settings, adj.moves_rounded, adj.moves, adj.installed_offsets):
        if s.kind == "height":
            h = result.antennas[s.index].height_m
            antennas.append({"role": s.role, "height_m": h + float(m), "move_m": float(m),
                             "move_unrounded_m": float(raw),
                             "height_before_m": h, "fitted_installed_offset_m": float(off)})  # fmt: skip
    return {
        "antennas": antennas,
        "feeds": _feed_moves(adj),
        "path_after": _figures_dict(adj.after),
        "path_as_measured": _figures_dict(adj.before),
        "design": _figures_dict(adj.design),
        "step_m": adj.step_m,
        "bias": {
            "height_scale": adj.bias_scale,
            "words": "the model's departure from the measurement, fitted as a common scale of the antennas' electrical "
            "heights over the reflecting plane: the array behaves as if its heights were (1 + height_scale) times "
            "the model's",
            "misfit_before": adj.misfit_before,
            "misfit_fitted": adj.misfit_fitted,
            "misfit_words": "RMS of (model - measured) / sigma over every observation, for the study's array and for "
            "the fitted state",
        },
        "sensitivities": _SENSITIVITIES[adj.surface_used],
        "caution": ADJUSTMENT_CAUTION,
    }


def measured_summary(result, measured, comparison, adj) -> dict:
    """The ``summary.json`` of ``mastplan compare-measured`` (foot twins added, stable order)."""
    spec = result.spec
    conditions = [{"snow_depth_m": c.snow_depth_m, "snow": c.snow, "ground": c.ground} for c in measured.conditions]
    body = {
        "site": {"name": spec.name},
        "tool": {"name": "mastplan", "version": __version__},
        "input": {
            "site_file": Path(spec.source).name if spec.source else "",
            "measured_file": Path(measured.source).name,
        },
        "array": spec.array,
        "path_angle_deg": spec.angle_deg,
        "antennas": [{"role": a.role, "height_m": a.height_m} for a in result.antennas],
        "measured": {"figures": _figures_dict(measured.figures), "runs": len(measured.runs), "conditions": conditions},
        "comparison": {
            "figures": _comparison_figures(comparison),
            "runs": _comparison_runs(comparison),
            "surface": comparison.surface is not None,
        },  # fmt: skip
        "findings": [{"code": f.code, "severity": f.severity, "message": f.message} for f in comparison.findings],
        "adjustment": adjustment_dict(result, adj),
        "cautions": [ADJUSTMENT_CAUTION, *CAUTIONS],
    }
    return with_foot_twins(body)


def _cell(value, digits: int = 5) -> str:
    return "" if value is None or not math.isfinite(value) else f"{value:.{digits}f}"


def write_differences_csv(comparison, path: Path) -> None:
    """``differences.csv``: one row per figure and sample, measured, image theory, surface and the differences."""
    columns = ["kind", "name", "run", "row", "distance_m", "distance_ft", "height_m", "height_ft", "measured",
               "image", "measured_minus_image", "surface", "measured_minus_surface"]  # fmt: skip
    with path.open("w", newline="", encoding="utf-8") as fh:
        writer = csv.writer(fh, lineterminator="\n")
        writer.writerow(columns)
        for i, o in enumerate(comparison.observations):
            img = float(comparison.image[i])
            srf = None if comparison.surface is None else float(comparison.surface[i])
            d = o.distance_m
            h = o.height_m
            writer.writerow([
                "figure" if o.run is None else "sample", o.name, o.run or "", o.row or "",
                _cell(d, 2), _cell(None if d is None else d / M_PER_FT, 2),
                _cell(h, 2), _cell(None if h is None else h / M_PER_FT, 2),
                _cell(o.value), _cell(img), _cell(o.value - img), _cell(srf),
                _cell(None if srf is None else o.value - srf),
            ])  # fmt: skip


def plot_measured(result, comparison, path: Path) -> None:
    """``measured.png``: each run along the approach, measured against image theory and over the surface."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    unit = result.spec.units
    scale = M_PER_FT if unit == "ft" else 1.0
    runs: dict[str, list[int]] = {}
    for i, o in enumerate(comparison.observations):
        if o.run is not None:
            runs.setdefault(o.run, []).append(i)
    fig = Figure(figsize=(10, 3.2 * max(1, len(runs))))
    FigureCanvasAgg(fig)
    for k, (name, idx) in enumerate(runs.items() or [("none", [])]):
        ax = fig.add_subplot(max(1, len(runs)), 1, k + 1)
        if not idx:
            ax.text(0.5, 0.5, "no run along the approach in the measurement file", ha="center", transform=ax.transAxes)
            continue
        obs = [comparison.observations[i] for i in idx]
        d = np.array([o.distance_m for o in obs]) / scale
        ax.plot(d, [o.value for o in obs], "k.", ms=3, label="measured")
        ax.plot(d, comparison.image[idx], "-", color="tab:blue", label="image theory")
        if comparison.surface is not None and np.isfinite(comparison.surface[idx]).any():
            ax.plot(d, comparison.surface[idx], "-", color="tab:orange", label="over the surface")
        quantity = obs[0].name
        where = "level run" if obs[0].height_m is not None else "on the designed path"
        ax.set_ylabel("DDM (+ below the path)" if quantity == "ddm" else "path angle (deg)")
        ax.set_title(f"run {name}: {quantity} {where}", fontsize=9)
        ax.set_xlabel(f"distance before the threshold ({unit})")
        ax.grid(True, alpha=0.3)
        ax.legend(fontsize=8)
    fig.tight_layout()
    fig.savefig(path, dpi=110)


def _signed(value: float, decimals: int) -> str:
    """``+12``, ``-3``, ``0``: a sign, and no ``-0``."""
    text = f"{value:+.{decimals}f}"
    return text[1:] if float(text) == 0.0 else text


def measured_text(result, comparison, adj) -> str:
    """The screen summary: differences, findings, moves (mm and inches), the bias and the path after."""
    unit = result.spec.units
    lines = [f"Site: {result.spec.name}; {result.spec.array} array, design angle {result.spec.angle_deg:g} deg"]
    for f in _comparison_figures(comparison):
        name = f["figure"]
        key = "_m" if name == "rdh_m" else "_deg"
        show = (lambda v: format_length(v, unit)) if key == "_m" else (lambda v: f"{v:.4f} deg")
        srf = f["surface" + key]
        lines.append(f"  {name}: measured {show(f['measured' + key])}, image theory {show(f['image' + key])}"
                     + ("" if srf is None else f", over the surface {show(srf)}"))  # fmt: skip
    for r in _comparison_runs(comparison):
        lines.append(f"  run {r['run']} ({r['quantity']}, {r['samples']} samples): RMS measured - image "
                     f"{r['rms_measured_minus_image']:.4f}")  # fmt: skip
    lines.append("Findings:")
    lines += [f"  [{f.severity}] {f.message}" for f in comparison.findings] or ["  none"]
    lines.append(
        f"Proposed moves (rounded to {adj.step_m * 1000:g} mm; sensitivities: {_SENSITIVITIES[adj.surface_used]}):"
    )
    for s, m in zip(adj.settings, adj.moves_rounded):
        if s.kind == "height":
            h = result.antennas[s.index].height_m
            lines.append(
                f"  {s.role:<7} {_signed(m * 1000, 0)} mm ({_signed(m / 0.0254, 2)} in) "
                f"to {format_length(h + m, unit, 3)}"
            )
        elif s.kind == "amplitude":
            lines.append(f"  {s.role:<7} {s.feed.upper()} amplitude {100 * m:+.1f} %")
        else:
            lines.append(f"  {s.role:<7} {s.feed.upper()} phase {m:+.1f} deg")
    lines.append(f"Model's bias: electrical heights x {1 + adj.bias_scale:.5f}; misfit {adj.misfit_before:.2f} before, "
                 f"{adj.misfit_fitted:.2f} fitted (RMS in sigmas)")  # fmt: skip
    a = adj.after
    lines.append(f"Path after the moves: angle {a['path_angle_deg']:.4f} deg, half-sectors "
                 f"{a['half_sector_below_deg']:.4f}"
                 f" / {a['half_sector_above_deg']:.4f} deg, RDH {format_length(a['rdh_m'], unit)}")  # fmt: skip
    lines += ["Caution:", f"  {ADJUSTMENT_CAUTION}"]
    return "\n".join(lines)


def write_measured(result, measured, comparison, adj, out_dir, overwrite: bool = False, plots: bool = True) -> Path:
    """Write ``summary.json``, ``differences.csv`` and (``plots``) ``measured.png`` into ``out_dir``, atomically."""
    from geo.outputs.write import atomic_folder, write_json

    inputs = [Path(p) for p in (result.spec.source, measured.source) if p]

    def fill(folder: Path) -> None:
        write_json(folder / "summary.json", measured_summary(result, measured, comparison, adj))
        write_differences_csv(comparison, folder / "differences.csv")
        if plots:
            plot_measured(result, comparison, folder / "measured.png")

    return atomic_folder(out_dir, overwrite, fill, inputs)
