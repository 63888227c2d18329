"""Taxiways and holding positions against the derived critical area of their largest user.

Along each ``[[taxiway]]`` centre line, sampled every 10 m at most (the grid spacing when finer;
:data:`geo.optics.areas.SAMPLE_STEP_M`), the taxiway's design aircraft (``code``,
:mod:`geo.site.design_objects`) stands with its tail fin's centre on the line, heading along the
runway or across it, whichever is nearer the line's own direction there, and its disturbance of the
path is computed at that very point (the same black box as the grid:
:func:`geo.optics.areas.position_shares`). A point is **inside** the critical area where that share
exceeds ``critical_share``, or where the point lies in the cell union of that aircraft's derived
critical area.

The proposed **holding position** is found walking the line from its end farther from the runway
centre line toward the nearer one: the last point before the first one inside. An aircraft
held there stands outside the critical area, and so does every point behind it on the way in.
Its distance from the runway centre line is given in both units. A ``[[holding_position]]`` of
the site file fails where the aircraft standing there disturbs the path beyond the critical
share.

ICAO Annex 14 places the ILS holding position where the holding aircraft stays outside the
critical and sensitive areas (from memory); which area governs is the authority's decision.
These are planning aids beside the authority's rules and flight inspection, never in place of them.

References
----------
.. [1] ICAO Annex 14, Volume I, 3.12 (holding positions; an ILS critical or sensitive area
       decides where the holding position goes; from memory).
.. [2] ICAO Annex 10, Volume I, Attachment C, 2.1.10 (critical and sensitive areas; from memory).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from geo.site.design_objects import DESIGN_OBJECTS, DESIGN_SOURCE
from geo.site.site_file import ObjectSpec

__all__ = [
    "TaxiwayResult",
    "HoldingCheck",
    "object_for_code",
    "sample_line",
    "holding_index",
]


@dataclass(frozen=True)
class TaxiwayResult:
    """The disturbance along one taxiway and its proposed holding position.

    Attributes
    ----------
    name, code : str
    distance_m : numpy.ndarray, shape (N,)
        Along the line from its first point. [m]
    ahead_m, toward_runway_m : numpy.ndarray, shape (N,)
        The points in the mast frame. [m]
    lat, lon : numpy.ndarray, shape (N,)
    from_centre_line_m : numpy.ndarray, shape (N,)
        Distance from the runway centre line. [m]
    heading : tuple of str
    share : numpy.ndarray, shape (N,)
        The aircraft's largest share of the limit there (inf against the mast).
    inside : numpy.ndarray of bool, shape (N,)
        In the critical area (share above the critical share, or in its cell union).
    holding : int or None
        Index of the proposed holding position; None when the far end is already inside.
    """

    name: str
    code: str
    distance_m: np.ndarray
    ahead_m: np.ndarray
    toward_runway_m: np.ndarray
    lat: np.ndarray
    lon: np.ndarray
    from_centre_line_m: np.ndarray
    heading: tuple
    share: np.ndarray
    inside: np.ndarray
    holding: int | None

    @property
    def inside_length_m(self) -> float:
        """Length of the line inside the critical area (each point taken for its spacing). [m]"""
        if self.distance_m.size < 2:
            return 0.0
        spacing = np.gradient(self.distance_m)
        return float(spacing[self.inside].sum())

    def stretches(self) -> list[tuple[int, int]]:
        """Runs of consecutive points inside the critical area: (first, last) indices."""
        runs, start = [], None
        for k, flag in enumerate(self.inside):
            if flag and start is None:
                start = k
            if not flag and start is not None:
                runs.append((start, k - 1))
                start = None
        if start is not None:
            runs.append((start, self.inside.size - 1))
        return runs


@dataclass(frozen=True)
class HoldingCheck:
    """A holding position of the site file, checked: the aircraft's share there against the critical share."""

    name: str
    code: str
    lat: float
    lon: float
    ahead_m: float
    toward_runway_m: float
    from_centre_line_m: float
    heading: str
    share: float
    critical_share: float

    @property
    def passes(self) -> bool:
        return bool(self.share <= self.critical_share)


def object_for_code(code: str) -> ObjectSpec:
    """The design object of a code as an object of the areas, both headings."""
    d = DESIGN_OBJECTS[code]
    name = d.what.split(" (")[0]
    return ObjectSpec(name, d.height_m, d.length_m, d.width_m, d.base_m, ("along", "across"),
                      f"code {code}: {d.what}, {DESIGN_SOURCE}", code)  # fmt: skip


def sample_line(points_m: np.ndarray, step_m: float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Points every at most ``step_m`` along a polyline (its vertices kept), their distances and headings.

    Parameters
    ----------
    points_m : numpy.ndarray, shape (V, 2)
        The vertices in the mast frame (u, w). [m]
    step_m : float

    Returns
    -------
    samples : numpy.ndarray, shape (N, 2)
    distance_m : numpy.ndarray, shape (N,)
    heading : numpy.ndarray of str, shape (N,)
        ``"along"`` where the line's segment runs nearer the runway's direction (|du| >= |dw|).
    """
    out, dist, head = [points_m[:1]], [np.zeros(1)], []
    total = 0.0
    for a, b in zip(points_m[:-1], points_m[1:]):
        length = float(np.hypot(*(b - a)))
        if length == 0.0:
            continue
        n = max(int(math.ceil(length / step_m)), 1)
        t = np.arange(1, n + 1) / n
        out.append(a + t[:, None] * (b - a))
        dist.append(total + t * length)
        total += length
        along = abs(b[0] - a[0]) >= abs(b[1] - a[1])
        head += ["along" if along else "across"] * n
    head = [head[0] if head else "along", *head]
    return np.vstack(out), np.concatenate(dist), np.array(head)


def holding_index(inside: np.ndarray, from_centre_line_m: np.ndarray) -> int | None:
    """The proposed holding position: from the end farther from the centre line, the last point before the first inside.

    Returns the nearer end's index when no point is inside, None when the far end is inside.
    """
    n = inside.size
    order = np.arange(n) if from_centre_line_m[0] >= from_centre_line_m[-1] else np.arange(n)[::-1]
    hits = np.flatnonzero(inside[order])
    if hits.size == 0:
        return int(order[-1])
    if hits[0] == 0:
        return None
    return int(order[hits[0] - 1])


def to_mast_frame(result, lat, lon) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """WGS 84 points to the mast frame (u ahead, w toward the runway) and their distance from the centre line. [m]"""
    mast = result.mast
    along, cross = result.runway.frame.to_plane(np.asarray(lat, float), np.asarray(lon, float))
    sign = 1.0 if mast.side == "right" else -1.0
    along, cross = np.atleast_1d(along), np.atleast_1d(cross)
    return mast.setback_m - along, mast.offset_m - sign * cross, np.abs(cross)


def _shares_by_heading(shares, heading: np.ndarray, u: np.ndarray, w: np.ndarray) -> np.ndarray:
    out = np.full(u.size, np.nan)
    for h in np.unique(heading):
        pick = heading == h
        out[pick] = shares(str(h), u[pick], w[pick])
    return out


def follow_taxiway(result, taxiway, shares, critical_polygon, critical_share: float, step_m: float) -> TaxiwayResult:
    """The disturbance along a taxiway, the points inside the critical area, and the proposed holding position.

    Parameters
    ----------
    result : StudyResult
    taxiway : TaxiwaySpec
    shares : callable
        ``shares(heading, u, w) -> share`` of the taxiway's design aircraft.
    critical_polygon : shapely geometry
        That aircraft's derived critical area (cell union, mast frame).
    critical_share : float
    step_m : float
        Largest spacing of the points. [m]
    """
    import shapely

    lat, lon = np.array(taxiway.line).T
    u, w, _ = to_mast_frame(result, lat, lon)
    samples, distance, heading = sample_line(np.column_stack([u, w]), step_m)
    su, sw = samples[:, 0], samples[:, 1]
    mast, sign = result.mast, (1.0 if result.mast.side == "right" else -1.0)
    cross = sign * (mast.offset_m - sw)
    plat, plon = result.runway.frame.to_geographic(mast.setback_m - su, cross)
    share = _shares_by_heading(shares, heading, su, sw)
    in_cells = shapely.covers(critical_polygon, shapely.points(su, sw)) if not critical_polygon.is_empty else False
    inside = (share > critical_share) | np.asarray(in_cells, dtype=bool)
    holding = holding_index(inside, np.abs(cross))
    return TaxiwayResult(taxiway.name, taxiway.code, distance, su, sw, np.atleast_1d(plat), np.atleast_1d(plon),
                         np.abs(cross), tuple(heading.tolist()), share, inside, holding)  # fmt: skip


def check_holding(result, hold, code: str, taxiway, shares, critical_share: float) -> HoldingCheck:
    """A holding position checked: the aircraft's share there (its taxiway's heading nearby, else the worse)."""
    u, w, off = to_mast_frame(result, hold.lat, hold.lon)
    headings = ("along", "across")
    if taxiway is not None:
        lat, lon = np.array(taxiway.line).T
        tu, tw, _ = to_mast_frame(result, lat, lon)
        samples, _, heading = sample_line(np.column_stack([tu, tw]), 1.0)
        nearest = int(np.argmin(np.hypot(samples[:, 0] - u[0], samples[:, 1] - w[0])))
        headings = (str(heading[nearest]),)
    values = {h: float(shares(h, u, w)[0]) for h in headings}
    worst = max(values, key=values.get)
    return HoldingCheck(hold.name, code, hold.lat, hold.lon, float(u[0]), float(w[0]), float(off[0]), worst,
                        values[worst], critical_share)  # fmt: skip


def taxiway_findings(taxiways, holds, unit: str) -> list[tuple[str, str, str]]:
    """``(code, severity, message)`` per taxiway (its proposed holding position) and per holding position checked."""
    from geo.units import format_length

    out = []
    for t in taxiways:
        if t.holding is None:
            out.append(("taxiway_holding", "warning", f"taxiway {t.name} (code {t.code}): its far end is already "
                        "inside the critical area; no holding position on it keeps the aircraft outside"))  # fmt: skip
            continue
        k = t.holding
        where = (f"{t.lat[k]:.6f}, {t.lon[k]:.6f}, {format_length(t.from_centre_line_m[k], unit, 0)} from the runway "
                 "centre line")  # fmt: skip
        if not t.inside.any():
            out.append(("taxiway_holding", "pass", f"taxiway {t.name} (code {t.code}): no point inside the critical "
                        f"area; nearest the runway at {where}"))  # fmt: skip
        else:
            out.append(("taxiway_holding", "info", f"taxiway {t.name} (code {t.code}): "
                        f"{format_length(t.inside_length_m, unit, 0)} of it inside the critical area; holding "
                        f"position nearest the runway outside it at {where}"))  # fmt: skip
    for h in holds:
        verdict = "pass" if h.passes else "fail"
        out.append(("holding_position", verdict, f"holding position {h.name} (code {h.code}, {h.heading}): "
                    f"{h.share:.2f} of the structure limit against the critical share {h.critical_share:g}"
                    f" ({'outside' if h.passes else 'inside'} the critical area)"))  # fmt: skip
    return out
