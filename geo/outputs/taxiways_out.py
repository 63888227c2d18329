"""Writers of the taxiways and holding positions of ``mastplan areas``: tables, plots, layers, summary.

Every writer reads an :class:`geo.optics.areas.AreasResult` and recomputes nothing.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from geo.optics.areas import AREAS_CAUTION
from geo.outputs.summary import share_value
from geo.units import with_foot_twins

__all__ = [
    "taxiway_rows",
    "taxiway_layers",
    "taxiways_summary",
    "plot_taxiway",
    "taxiway_file_stem",
]


def taxiway_file_stem(k: int, name: str) -> str:
    """``taxiway_<k>_<name>``, the stem of a taxiway's table and plot (k from 1)."""
    keep = "".join(c if c.isalnum() else "_" for c in name.lower())
    return f"taxiway_{k}_" + ("_".join(p for p in keep.split("_") if p) or "line")


def taxiway_rows(t) -> list[dict]:
    """One row per point along a taxiway: where, the aircraft's heading and share, inside the critical area."""
    rows = []
    for k in range(t.distance_m.size):
        rows.append(
            {
                "distance_along_m": round(float(t.distance_m[k]), 2),
                "lat": round(float(t.lat[k]), 8),
                "lon": round(float(t.lon[k]), 8),
                "ahead_m": round(float(t.ahead_m[k]), 2),
                "toward_runway_m": round(float(t.toward_runway_m[k]), 2),
                "from_centre_line_m": round(float(t.from_centre_line_m[k]), 2),
                "heading": t.heading[k],
                "share_of_limit": share_value(float(t.share[k])),
                "inside_critical": bool(t.inside[k]),
                "holding_position": k == t.holding,
            }
        )
    return rows


def _holding_entry(t) -> dict | None:
    if t.holding is None:
        return None
    k = t.holding
    return {
        "lat": round(float(t.lat[k]), 8),
        "lon": round(float(t.lon[k]), 8),
        "from_centre_line_m": round(float(t.from_centre_line_m[k]), 2),
        "distance_along_m": round(float(t.distance_m[k]), 2),
        "share_of_limit": share_value(float(t.share[k])),
    }


def taxiways_summary(areas) -> dict:
    """``taxiways``, ``holding_positions`` and ``findings`` of the areas' ``summary.json`` (with foot twins)."""
    taxiways = [
        {
            "name": t.name,
            "code": t.code,
            "points": int(t.distance_m.size),
            "length_m": round(float(t.distance_m[-1]), 2),
            "inside_critical_m": round(t.inside_length_m, 2),
            "largest_share_of_limit": share_value(float(np.max(t.share))),
            "holding_position": _holding_entry(t),
        }
        for t in areas.taxiways
    ]
    holds = [
        {
            "name": h.name,
            "code": h.code,
            "lat": h.lat,
            "lon": h.lon,
            "from_centre_line_m": round(h.from_centre_line_m, 2),
            "heading": h.heading,
            "share_of_limit": share_value(h.share),
            "pass": h.passes,
        }
        for h in areas.holding_checks
    ]
    findings = [{"code": c, "severity": s, "message": m} for c, s, m in areas.findings]
    return with_foot_twins({"taxiways": taxiways, "holding_positions": holds, "findings": findings})


def _line(result, u, w) -> list:
    from geo.outputs.geojson import _coord

    mast, frame = result.mast, result.runway.frame
    sign = 1.0 if mast.side == "right" else -1.0
    lat, lon = frame.to_geographic(mast.setback_m - np.asarray(u), sign * (mast.offset_m - np.asarray(w)))
    return [_coord(a, o) for a, o in zip(np.atleast_1d(lat), np.atleast_1d(lon))]


def taxiway_layers(areas) -> dict:
    """``taxiways`` (centre lines), ``taxiway_critical_stretches`` and ``holding_positions`` as GeoJSON."""
    from geo.outputs.geojson import collection, feature

    study = areas.study
    lines, stretches, points = [], [], []
    for t in areas.taxiways:
        geometry = {"type": "LineString", "coordinates": _line(study, t.ahead_m, t.toward_runway_m)}
        lines.append(feature(geometry, {"name": t.name, "code": t.code}))
        for a, b in t.stretches():
            stop = min(b + 1, t.distance_m.size - 1)  # to the next point, so one point is a stretch too
            coords = _line(study, t.ahead_m[a : stop + 1], t.toward_runway_m[a : stop + 1])
            props = {"name": t.name, "code": t.code, "from_m": float(t.distance_m[a]), "to_m": float(t.distance_m[b])}
            stretches.append(feature({"type": "LineString", "coordinates": coords}, with_foot_twins(props, 2)))
        entry = _holding_entry(t)
        if entry is not None:
            props = {"name": f"{t.name} holding position (proposed)", "code": t.code, "kind": "proposed", **entry}
            point = {"type": "Point", "coordinates": [entry["lon"], entry["lat"]]}
            points.append(feature(point, with_foot_twins(props, 2)))
    for h in areas.holding_checks:
        props = {
            "name": h.name,
            "code": h.code,
            "kind": "pass" if h.passes else "fail",
            "from_centre_line_m": round(h.from_centre_line_m, 2),
            "share_of_limit": share_value(h.share),
        }
        points.append(feature({"type": "Point", "coordinates": [h.lon, h.lat]}, with_foot_twins(props, 2)))
    return {
        "taxiways": collection(lines),
        "taxiway_critical_stretches": collection(stretches),
        "holding_positions": collection(points),
    }


def plot_taxiway(areas, index: int, path: Path) -> None:
    """The aircraft's share of the limit along a taxiway, the shares, the stretch inside and the holding position."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    from geo.units import LENGTH_UNITS, format_length

    t = areas.taxiways[index]
    unit = areas.study.spec.units
    s = areas.settings
    fig = Figure(figsize=(10, 4.8))
    FigureCanvasAgg(fig)
    ax = fig.add_subplot(1, 1, 1)
    x = t.distance_m / LENGTH_UNITS[unit]
    share = np.where(np.isfinite(t.share), t.share, np.nan)
    ax.plot(x, share, color="#1864ab", lw=1.5, marker=".", label=f"code {t.code}: largest 95 % bend / structure limit")
    ax.axhline(s.critical_share, color="#a61e4d", ls="--", lw=1, label=f"critical share {s.critical_share:g}")
    ax.axhline(s.sensitive_share, color="#f08c00", ls=":", lw=1, label=f"sensitive share {s.sensitive_share:g}")
    half = np.gradient(x) / 2.0 if x.size > 1 else np.zeros(1)
    for k, (a, b) in enumerate(t.stretches()):
        label = "inside the critical area" if k == 0 else None
        ax.axvspan(x[a] - half[a], x[b] + half[b], color="#a61e4d", alpha=0.12, label=label)
    if t.holding is not None:
        k = t.holding
        where = format_length(t.from_centre_line_m[k], unit, 0)
        ax.axvline(x[k], color="k", lw=1.2, label=f"holding position, {where} from the centre line")
    ax.set_yscale("log")
    ax.set_xlabel(f"along the taxiway from its first point [{unit}]")
    ax.set_ylabel("share of the structure limit")
    ax.set_title(f"Taxiway {t.name}: disturbance of the path by its largest user (code {t.code})", fontsize=10)
    ax.legend(loc="best", fontsize=8)
    fig.text(0.01, 0.01, AREAS_CAUTION, fontsize=7, color="#555")
    fig.savefig(path, dpi=110, bbox_inches="tight")
