"""The site file's buildings in the outputs of ``mastplan run``: the map's layer, the summary, the report.

``prediction.surface.buildings`` of ``summary.json`` and the report's table; the GeoJSON layer is
:func:`geo.outputs.geojson.study_layers`' ``buildings``.

Writers only: every figure comes from :mod:`geo.study.buildings`.
"""

from __future__ import annotations

import html

import numpy as np

__all__ = ["BUILDINGS_LAYER", "buildings_group", "buildings_summary", "buildings_report"]

#: The map's and the legend's name of the layer.
BUILDINGS_LAYER = "Buildings (site file)"
_COLOUR = "#5f3dc4"


def buildings_group(fc: dict, unit: str):
    """The map's layer of the buildings, with a tooltip of name, height and share."""
    import folium

    from geo.units import format_length

    group = folium.FeatureGroup(name=BUILDINGS_LAYER)
    for f in fc["features"]:
        p = f["properties"]
        words = f"{html.escape(p['name'])}: {format_length(p['height_above_ground_m'], unit, 1)} high, {p['cladding']}"
        if "largest_share_of_limit" in p:
            words += f"; {p['largest_share_of_limit']:.0%} of a bend limit, angle {p['path_angle_shift_deg']:+.4f} deg"
        style = {"color": _COLOUR, "weight": 2, "fillColor": _COLOUR, "fillOpacity": 0.35}
        folium.GeoJson(f, style_function=lambda _f, s=style: s, tooltip=words).add_to(group)
    return group


def _structure(rows) -> list[dict]:
    return [
        {"segment": s.segment, "limit_ddm": s.limit_ddm, "bend_95_ddm": s.bend_95_ddm, "pass": s.passed} for s in rows
    ]


def _number(value):
    return float(value) if np.isfinite(value) else "infinity"


def buildings_summary(result) -> dict | None:
    """``prediction.surface.buildings``: the path with and without the buildings, and each building's effect."""
    from geo.radio.structure_limits import LIMITS_SOURCE
    from geo.study.buildings import BUILDINGS_CAUTION, BUILDINGS_METHOD

    found = result.buildings
    if found is None:
        return None
    return {
        "over": found.over,
        "method": BUILDINGS_METHOD,
        "without_buildings": {
            "fitted_path_angle_deg": found.fitted_angle_without_deg,
            "structure": _structure(found.structure_without),
        },
        "with_buildings": {
            "fitted_path_angle_deg": found.fitted_angle_with_deg,
            "structure": _structure(found.structure_with),
        },
        "each": [
            {
                "name": e.spec.name,
                "height_m": e.spec.height_m,
                "base_above_plane_m": e.shape.base_m,
                "cladding": e.spec.cladding,
                "constants_source": e.spec.constants_source,
                "path_angle_shift_deg": e.angle_shift_deg,
                "deepest_shadow_db": e.deepest_shadow_db,
                "largest_share_of_limit": _number(e.worst_share),
                "segments": [
                    {
                        "segment": seg.name,
                        "limit_ddm": float(seg.limit_to_ddm),
                        "added_bend_95_ddm": _number(b),
                        "share_of_limit": _number(s),
                    }
                    for seg, b, s in zip(found.segments, e.added_bend_95_ddm, e.share)
                    if not np.isnan(b)
                ],  # fmt: skip
            }
            for e in found.effects
        ],
        "limits_source": LIMITS_SOURCE,
        "caution": BUILDINGS_CAUTION,
    }


def buildings_report(result) -> str:
    """The report's section on the buildings (empty without them)."""
    from geo.study.buildings import BUILDINGS_CAUTION
    from geo.units import format_length

    found = result.buildings
    if found is None:
        return ""
    unit = result.spec.units
    rows = "".join(
        f"<tr><td>{html.escape(e.spec.name)}</td><td>{format_length(e.spec.height_m, unit, 1)}</td>"
        f"<td>{e.spec.cladding}</td><td>{e.worst_share:.0%}</td><td>{e.angle_shift_deg:+.4f} deg</td>"
        f"<td>{e.deepest_shadow_db:.1f} dB</td></tr>"
        for e in found.effects
    )
    return (
        "<h2>Buildings</h2><table><tr><th>building</th><th>height</th><th>cladding</th>"
        "<th>largest share of a bend limit</th><th>path angle shift</th><th>deepest shadow</th></tr>"
        f"{rows}</table><p>Fitted path angle over the {found.over}: {found.fitted_angle_without_deg:.3f} deg without "
        f"the buildings, {found.fitted_angle_with_deg:.3f} deg with them. {html.escape(BUILDINGS_CAUTION)}</p>"
    )
