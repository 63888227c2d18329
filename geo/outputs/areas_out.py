"""Writers of ``mastplan areas``: the derived-area layer, ``areas.csv``, the disturbance maps, the summary.

Every writer reads an :class:`geo.optics.areas.AreasResult` and recomputes nothing.
"""

from __future__ import annotations

import csv
import math
from pathlib import Path

import numpy as np

from geo.optics.area_grid import BLOCK_M
from geo.optics.areas import AREAS_CAUTION, AreasResult
from geo.optics.objects import FIN_SWEEP_DEG, FIN_TAPER, HEADING_SAMPLES, HEADING_SPREAD_DEG
from geo.outputs.summary import INFINITE_SHARE, share_value
from geo.outputs.webmap import DERIVED_AREA_COLOURS
from geo.units import with_foot_twins
from geo.version import __version__

__all__ = [
    "derived_areas_layer",
    "write_areas_csv",
    "plot_disturbance",
    "areas_summary",
    "write_areas",
    "MODEL_TEXT",
]

MODEL_TEXT = (
    "Each object is three plates through its middle (side, end, top; a fin on a base above the ground "
    f"as a tapered, swept plate: taper {FIN_TAPER:g}, leading-edge sweep {FIN_SWEEP_DEG:g} deg, generic, from "
    f"memory) scattering by physical optics, at headings spread over +-{HEADING_SPREAD_DEG:g} deg about along "
    f"and across ({HEADING_SAMPLES} samples, the middles of equal bins; every figure the 95th percentile over "
    "them), "
    "with the four ground paths over the DEM's local surface at each specular point (over flat ground, the "
    "plane); its field adds to the CSB and SBO "
    "of every antenna. Disturbance: the change of the DDM it causes along the designed straight path "
    "(receivers 20 m apart), measured as flight inspection measures bends: the recorder's filter, then per "
    "segment about a straight line (coverage limit to A, A to B) or the mean (nearer the threshold), 95 % "
    "amplitude (from memory of ICAO Annex 10 Vol I Attachment C), combined with the terrain's own bends; "
    "in the far segments also the steady shift of the path angle and the sector against the monitor "
    "limits (disturbance_rule). The antennas carry the element pattern of the study (element). "
    "Areas: union of grid cells where the judged share exceeds the area's share, over the object's "
    "headings; positions against the mast count as both."
)


def _slug(text: str) -> str:
    keep = "".join(c if c.isalnum() else "_" for c in text.lower())
    return "_".join(part for part in keep.split("_") if part) or "object"


def _area_properties(areas: AreasResult, area) -> dict:
    reach = area.reach_m()
    outline = area.outline
    return {
        "object": area.object_name,
        "kind": area.kind,
        "share_of_limit": area.share,
        "area_m2": round(area.area_m2, 1),
        "reach_ahead_m": reach["ahead_m"],
        "reach_behind_m": reach["behind_m"],
        "reach_toward_runway_m": reach["toward_runway_m"],
        "reach_away_m": reach["away_m"],
        "outline_area_m2": round(float(outline.area), 1),
        "grid_m": areas.settings.grid_m,
        "reaches_grid_edge": area.reaches_grid_edge,
        "open_sides": ", ".join(area.open_sides),
    }


def unit_first(row: dict, unit: str) -> dict:
    """A row with each foot twin before its metre key when the site file is in feet (the file's unit first)."""
    if unit != "ft":
        return row
    out = {}
    for key, value in row.items():
        for suffix, twin in (("_m", "_ft"), ("_m2", "_ft2")):
            if key.endswith(suffix) and key[: -len(suffix)] + twin in row:
                out[key[: -len(suffix)] + twin] = row[key[: -len(suffix)] + twin]
        out.setdefault(key, value)
    return out


def derived_areas_layer(areas: AreasResult) -> dict:
    """The derived areas as GeoJSON polygons in WGS 84 (empty areas left out), lengths with foot twins."""
    from geo.outputs.geojson import _mast_plane_polygon, collection, feature

    features = []
    for area in [*areas.areas, *areas.unions]:
        if area.polygon.is_empty:
            continue
        props = with_foot_twins(_area_properties(areas, area))
        features.append(feature(_mast_plane_polygon(areas.study, area.polygon), props))
    return collection(features)


def outlines_layer(areas: AreasResult) -> dict:
    """The planner's outlines (rectangles along and across the runway holding each area) as GeoJSON."""
    from geo.outputs.geojson import _mast_plane_polygon, collection, feature

    features = []
    for area in [*areas.areas, *areas.unions]:
        if area.polygon.is_empty:
            continue
        props = with_foot_twins(_area_properties(areas, area))
        features.append(feature(_mast_plane_polygon(areas.study, area.outline), props))
    return collection(features)


def outline_rows(areas: AreasResult) -> list[dict]:
    """``outlines.csv``: per object (and the union of the objects) and kind, the outline's sides from the mast."""
    rows = []
    for area in [*areas.areas, *areas.unions]:
        p = _area_properties(areas, area)
        rows.append({k: p[k] for k in ("object", "kind", "share_of_limit", "reach_ahead_m", "reach_behind_m",
                                       "reach_toward_runway_m", "reach_away_m", "area_m2", "outline_area_m2",
                                       "open_sides")})  # fmt: skip
    return rows


def write_rows_csv(rows: list[dict], path: Path, unit: str) -> None:
    """A table with foot twins, the site file's unit first."""
    rows = [unit_first(with_foot_twins(r, digits=2), unit) for r in rows]
    with path.open("w", newline="", encoding="utf-8") as fh:
        writer = csv.DictWriter(fh, fieldnames=list(rows[0]) if rows else ["object"], lineterminator="\n")
        writer.writeheader()
        writer.writerows(rows)


def screen_lines(areas: AreasResult) -> list[str]:
    """What ``mastplan areas`` prints: per area its size and outline (the file's unit first), then the warnings."""
    from geo.units import format_area, format_length

    unit = areas.study.spec.units
    lines = []
    for a in [*areas.areas, *areas.unions]:
        r = a.reach_m()
        sides = ", ".join(
            f"{format_length(r[k + '_m'], unit, 0)} {w}"
            for k, w in (("ahead", "ahead"), ("behind", "behind"), ("toward_runway", "toward the runway"),
                         ("away", "away"))
        )  # fmt: skip
        lines.append(
            f"{a.object_name}, {a.kind} (> {a.share:g} of the limit): {format_area(a.area_m2, unit)}; "
            f"outline {sides}" + ("" if a.open_sides else " (closed)")
        )
    lines += [f"{severity.capitalize()}: {message}" for _, severity, message in areas.findings]
    lines += [f"Warning: {w}" for w in areas.warnings]
    return lines


def areas_rows(areas: AreasResult) -> list[dict]:
    """One row per object, position and heading: the disturbance per segment and the share of the limit."""
    rows = []
    names = [s.name for s in areas.segments]
    frame, mast = areas.study.runway.frame, areas.study.mast
    sign = 1.0 if mast.side == "right" else -1.0
    for d in areas.disturbances:
        lat, lon = frame.to_geographic(mast.setback_m - d.ahead_m, sign * (mast.offset_m - d.toward_runway_m))
        lat, lon = np.atleast_1d(lat), np.atleast_1d(lon)
        for heading in d.share:
            per_segment, share = d.segment_ddm[heading], d.share[heading]
            for g in range(d.ahead_m.size):
                row = {
                    "object": d.obj.name,
                    "heading": heading,
                    "ahead_m": round(float(d.ahead_m[g]), 2),
                    "toward_runway_m": round(float(d.toward_runway_m[g]), 2),
                    "lat": round(float(lat[g]), 8),
                    "lon": round(float(lon[g]), 8),
                    "at_mast": bool(d.at_mast[g]),
                }
                for i, name in enumerate(names):
                    row[f"bend_95_ddm_{_slug(name)}"] = _cell(per_segment[g, i], 6)
                row["share_of_limit"] = _cell(share[g], 4)
                row.update(_figure_cells(d.figures.get(heading, {}), g))
                rows.append(row)
    return rows


#: The columns of each position's figures (:func:`geo.optics.disturbance_rule.judged_figures`) and their decimals.
FIGURE_COLUMNS = (
    ("bend_share", 4),
    ("combined_bend_share", 4),
    ("angle_shift_deg", 6),
    ("sensitivity_change", 5),
    ("shift_share", 4),
    ("judged_share", 4),
)


def _figure_cells(figures: dict, g: int) -> dict:
    """Every figure of the disturbance rule at position ``g`` (empty cells where not computed)."""
    return {name: _cell(float(figures[name][g]), digits) if name in figures else "" for name, digits in FIGURE_COLUMNS}


def _cell(value: float, decimals: int) -> str:
    """A table cell: empty when not computed (NaN), ``infinity`` when the object outweighs the array's carrier."""
    if math.isnan(value):
        return ""
    return INFINITE_SHARE if math.isinf(value) else f"{value:.{decimals}f}"


def write_areas_csv(areas: AreasResult, path: Path) -> None:
    """``areas.csv``: one row per object, position and heading (lengths with foot twins, the file's unit first)."""
    write_rows_csv(areas_rows(areas), path, areas.study.spec.units)


def plot_disturbance(areas: AreasResult, index: int, path: Path) -> None:
    """One object's worst share of the structure limit over the grid, with the derived outlines."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.colors import LogNorm
    from matplotlib.figure import Figure

    d = areas.disturbances[index]
    s = areas.settings
    u_values, w_values = np.unique(d.ahead_m), np.unique(d.toward_runway_m)
    share = np.full((w_values.size, u_values.size), np.nan)
    iu = np.searchsorted(u_values, d.ahead_m)
    iw = np.searchsorted(w_values, d.toward_runway_m)
    share[iw, iu] = np.where(d.at_mast, np.nan, d.worst_share)
    fig = Figure(figsize=(11, 6.5))
    FigureCanvasAgg(fig)
    ax = fig.add_subplot(1, 1, 1)
    step = s.grid_m
    extent = (u_values[0] - step / 2, u_values[-1] + step / 2, w_values[0] - step / 2, w_values[-1] + step / 2)
    finite = share[np.isfinite(share)]
    low = max(float(finite.min()) if finite.size else 1e-3, 1e-3)
    high = max(float(finite.max()) if finite.size else 1.0, low * 10)
    image = ax.imshow(
        share,
        origin="lower",
        extent=extent,
        aspect="equal",
        cmap="viridis",
        norm=LogNorm(low, high),
        interpolation="nearest",
    )
    fig.colorbar(image, ax=ax, label="largest 95 % bend / structure limit (worst heading)", shrink=0.8)
    for area in areas.areas:
        if area.object_name != d.obj.name or area.polygon.is_empty:
            continue
        parts = list(area.polygon.geoms) if hasattr(area.polygon, "geoms") else [area.polygon]
        for k, part in enumerate(parts):
            x, y = part.exterior.xy
            label = f"{area.kind} (> {area.share:g} of the limit)" if k == 0 else None
            ax.plot(x, y, color=DERIVED_AREA_COLOURS[area.kind], lw=1.5, label=label)
    mast = areas.study.mast
    ax.plot([0.0], [0.0], "s", color="#1864ab", label="mast")
    ax.axhline(mast.offset_m, color="k", ls="--", lw=0.8, label="runway centre line")
    ax.set_xlabel("ahead of the mast, toward the approach [m]")
    ax.set_ylabel("toward the runway [m]")
    o = d.obj
    ax.set_title(
        f"{o.name}: height {o.height_m:g} m (from {o.base_m:g} m), length {o.length_m:g} m, width {o.width_m:g} m; "
        f"headings {', '.join(o.headings)}",
        fontsize=10,
    )
    ax.legend(loc="upper right", fontsize=8)
    fig.text(0.01, 0.01, AREAS_CAUTION, fontsize=7, color="#555")
    fig.savefig(path, dpi=110, bbox_inches="tight")


def areas_summary(areas: AreasResult) -> dict:
    """``summary.json`` of ``mastplan areas``: settings, segments, objects and their ``derived_areas``."""
    from geo.radio.structure_limits import LIMITS_SOURCE

    s = areas.settings
    study = areas.study
    derived = []
    for d in areas.disturbances:
        o = d.obj
        entry = {
            "object": o.name,
            "height_m": o.height_m,
            "base_m": o.base_m,
            "length_m": o.length_m,
            "width_m": o.width_m,
            "headings": list(o.headings),
            "sizes_source": o.source,
            "largest_share_of_limit": _largest_share(d),
            "positions_against_mast": int(d.at_mast.sum()),
            "positions": int(d.ahead_m.size),
            "grid_extent": {f"{k}_m": v for k, v in d.extent_m.items()},
            "grid_growth_blocks": d.growth_rounds,
        }
        for area in areas.areas:
            if area.object_name == o.name:
                props = _area_properties(areas, area)
                entry[area.kind] = {k: v for k, v in props.items() if k not in ("object", "kind", "grid_m")}
        derived.append(entry)
    summary = {
        "mastplan_version": __version__,
        "site": study.spec.name,
        "site_file_sha256": study.spec.sha256,
        "category": study.spec.category,
        "wavelength_m": study.wavelength_m,
        "ground": "flat ground" if study.terrain is None else areas.rule.get("ground", "plane fitted to the DEM"),
        "settings": {
            "critical_share": s.critical_share,
            "sensitive_share": s.sensitive_share,
            "shares_source": s.shares_source,
            "grid_m": s.grid_m,
            "ahead_m": s.ahead_m,
            "behind_m": s.behind_m,
            "away_m": s.away_m,
            "beyond_m": s.beyond_m,
            "receivers_on_path": int(areas.receivers.points_m.shape[0]),
            "max_extent_m": s.max_extent_m,
            "growth_block_m": BLOCK_M,
        },
        "element": _element_summary(areas.rule.get("element")),
        "disturbance_rule": _rule_summary(areas),
        "segments": [
            {
                "name": g.name,
                "from_m": g.from_m,
                "to_m": g.to_m,
                "limit_from_ddm": g.limit_from_ddm,
                "limit_to_ddm": g.limit_to_ddm,
            }
            for g in areas.segments
        ],  # fmt: skip
        "limits_source": LIMITS_SOURCE,
        "objects_source": areas.objects_source,
        "model": MODEL_TEXT,
        "derived_areas": derived,
        "union_of_objects": {
            a.kind: {k: v for k, v in _area_properties(areas, a).items() if k not in ("object", "kind", "grid_m")}
            for a in areas.unions
        },
        "warnings": list(areas.warnings),
        "cautions": [AREAS_CAUTION],
    }
    if areas.taxiways or areas.holding_checks:
        from geo.outputs.taxiways_out import taxiways_summary

        return {**with_foot_twins(summary), **taxiways_summary(areas)}
    return with_foot_twins(summary)


def _element_summary(element) -> dict:
    """The antennas' element pattern as the fields took it."""
    from geo.radio.element import ISOTROPIC

    return (element or ISOTROPIC).summary()


def _rule_summary(areas: AreasResult) -> dict:
    """What a disturbance is per segment (:mod:`geo.optics.disturbance_rule`) and the terrain's own shares."""
    from geo.optics.disturbance_rule import ANGLE_MONITOR, MONITOR_SOURCE, RULE_TEXT, SENSITIVITY_MONITOR, far_segments

    terrain = areas.rule.get("terrain_share", ())
    return {
        "text": RULE_TEXT,
        "far_segments": [areas.segments[i].name for i in far_segments(areas.segments)],
        "angle_monitor_theta": list(ANGLE_MONITOR),
        "sensitivity_monitor": SENSITIVITY_MONITOR,
        "monitor_source": MONITOR_SOURCE,
        "terrain_bend_share": {g.name: round(v, 4) for g, v in zip(areas.segments, terrain)},
        "terrain_source": areas.rule.get("terrain_source", ""),
    }


def _largest_share(disturbance) -> float | str | None:
    """The worst share of the limit off the mast: a number, ``"infinity"``, or None with no position."""
    shares = disturbance.worst_share[~disturbance.at_mast]
    return share_value(float(np.max(shares))) if shares.size else None


def write_areas(areas: AreasResult, out_dir, overwrite: bool = False, plots: bool = True) -> Path:
    """Write every output of ``mastplan areas`` into ``out_dir``, atomically.

    Parameters
    ----------
    areas : AreasResult
    out_dir : str or Path
    overwrite : bool
        Replace a non-empty folder.
    plots : bool
        Draw the disturbance maps (PNG, one per object).

    Returns
    -------
    Path
    """
    from geo.outputs.geojson import study_layers
    from geo.outputs.gpkg import write_gpkg
    from geo.outputs.kml import write_kml
    from geo.outputs.taxiways_out import plot_taxiway, taxiway_file_stem, taxiway_layers, taxiway_rows
    from geo.outputs.webmap import write_map
    from geo.outputs.write import atomic_folder, write_json

    spec = areas.study.spec
    inputs = [Path(spec.source)] if spec.source else []

    def fill(folder: Path) -> None:
        layers = {
            **study_layers(areas.study),
            "derived_areas": derived_areas_layer(areas),
            "derived_outlines": outlines_layer(areas),
            **(taxiway_layers(areas) if areas.taxiways or areas.holding_checks else {}),
        }
        write_json(folder / "summary.json", areas_summary(areas))
        (folder / "layers").mkdir()
        for name in (
            "derived_areas",
            "derived_outlines",
            "taxiways",
            "taxiway_critical_stretches",
            "holding_positions",
        ):
            if name in layers:
                write_json(folder / "layers" / f"{name}.geojson", layers[name], compact=True)
        for k, t in enumerate(areas.taxiways):
            write_rows_csv(taxiway_rows(t), folder / f"{taxiway_file_stem(k + 1, t.name)}.csv", spec.units)
            if plots:
                plot_taxiway(areas, k, folder / f"{taxiway_file_stem(k + 1, t.name)}.png")
        write_areas_csv(areas, folder / "areas.csv")
        write_rows_csv(outline_rows(areas), folder / "outlines.csv", spec.units)
        write_gpkg(layers, folder / "areas.gpkg")
        write_kml(f"{spec.name}: derived areas", layers, folder / "areas.kml", spec.units)
        write_map(areas.study, layers, folder / "map.html")
        if plots:
            for k, d in enumerate(areas.disturbances):
                plot_disturbance(areas, k, folder / f"disturbance_{k + 1}_{_slug(d.obj.name)}.png")

    return atomic_folder(out_dir, overwrite, fill, inputs)
