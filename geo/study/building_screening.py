"""A planned building of the site file checked against the map of allowed heights and the full prediction.

Two checks, each with its margin (issue 22's screening case):

- **the map** (:mod:`geo.optics.building_heights`): the allowed height of the map's footprint, in the
  orientation nearest the building's (its longest side along or across the runway), at the cell
  holding the building's centre; the building passes when it is no taller. The map's footprint
  may differ from the building's own: the map screens, the full prediction decides here.
- **the full prediction** (:func:`geo.study.buildings.buildings_for_study`, the building's own
  footprint, height and cladding, on the path's receivers from 10 NM to the threshold): its
  largest share of a structure limit against the map's share.

A screening aid: the authority's assessment and flight inspection decide; the Annex 14 obstacle
surfaces apply on top.

References
----------
.. [1] ICAO Annex 10, Volume I, 3.1.5.4 (structure limits, from memory).
"""

from __future__ import annotations

import math

import numpy as np

from geo.study.buildings import building_shapes, buildings_for_study
from geo.study.findings import Finding
from geo.units import format_length

__all__ = ["screen_buildings", "screening_findings"]


def _orientation(outline: np.ndarray, mapped) -> str:
    edges = np.roll(outline, -1, axis=0) - outline
    longest = edges[np.argmax(np.linalg.norm(edges, axis=1))]
    want = "along" if abs(longest[0]) >= abs(longest[1]) else "across"
    return want if want in mapped else mapped[0]


def _map_height(hm, centre, orientation: str) -> float:
    step = hm.settings.step_m
    i = int(math.floor((centre[0] - hm.u_m[0]) / step + 0.5))
    j = int(math.floor((centre[1] - hm.w_m[0]) / step + 0.5))
    if not (0 <= i < hm.u_m.size and 0 <= j < hm.w_m.size):
        return math.nan
    m = next(m for m in hm.maps if m.orientation == orientation)
    return float(hm.grid(m.height_m)[j, i])


def screen_buildings(hm, result) -> list[dict]:
    """Each site-file building against the map and against its own full prediction (module notes).

    Returns
    -------
    list of dict
        Per building: name, height, the map's cell, orientation and allowed height with the margin,
        the full prediction's share with its margin, and the verdicts (metre keys).
    """
    out = []
    share = hm.settings.share
    mapped = [m.orientation for m in hm.maps]
    for b in result.spec.buildings:
        (shape,) = building_shapes(result, (b,))
        orientation = _orientation(shape.outline_m, mapped)
        allowed = _map_height(hm, shape.centre_m, orientation)
        worst = buildings_for_study(result, (b,)).effects[0].worst_share
        map_pass = bool(math.isfinite(allowed) and b.height_m <= allowed)
        out.append(
            {
                "name": b.name,
                "height_m": b.height_m,
                "ahead_of_mast_m": round(float(shape.centre_m[0]), 1),
                "toward_runway_m": round(float(shape.centre_m[1]), 1),
                "map_orientation": orientation,
                "map_allowed_height_m": allowed if math.isfinite(allowed) else None,
                "map_margin_m": allowed - b.height_m if math.isfinite(allowed) else None,
                "map_pass": map_pass,
                "full_share_of_limit": worst if math.isfinite(worst) else "infinity",
                "full_margin_share": share - worst if math.isfinite(worst) else "infinity",
                "full_pass": bool(worst <= share),
                "pass": bool(map_pass and worst <= share),
            }
        )
    return out


def screening_findings(screening: list[dict], share: float, unit: str) -> list[Finding]:
    """One finding per screened building: pass or fail, with both margins [1]_."""
    out = []
    for s in screening:
        if s["map_allowed_height_m"] is None:
            on_map = "outside the map (or on the mast)"
        else:
            on_map = (
                f"the map allows {format_length(s['map_allowed_height_m'], unit, 1)} there ({s['map_orientation']} "
                f"the runway), margin {format_length(s['map_margin_m'], unit, 1, signed=True)}"
            )
        full = s["full_share_of_limit"]
        full_words = "infinite" if full == "infinity" else f"{full:.0%}"
        out.append(
            Finding(
                "building-screening",
                "pass" if s["pass"] else "fail",
                f"Planned building {s['name']} ({format_length(s['height_m'], unit, 1)} high): {on_map}; its own "
                f"full prediction takes {full_words} of a structure limit against {share:.0%} "
                f"({'pass' if s['full_pass'] else 'fail'}). A screening aid: the authority's assessment and flight "
                "inspection decide, Annex 14 surfaces apply on top.",
            )
        )
    return out
