"""Reflection zones: exact first Fresnel zones for receivers along the approach, united.

Each antenna's zone for a set of receivers is the union of the exact ground ellipses
(:func:`geo.radio.fresnel.exact_ellipses`). The union is taken in closed form row by row: every
ellipse cuts a line ``w = const`` in an interval found from its quadratic, the intervals of a
row are merged, and the row ends trace the boundary. No polygon-by-polygon trial and error.

Coordinates: the reflecting plane with the foot of the mast (its lowest antenna) at the origin,
``u`` along the course toward the approach, ``w`` across toward the runway. A receiver "at
elevation e" stands ``tan(e)`` times its horizontal distance from the mast above the horizontal
through the mast's foot (the path is a cone about the mast); its height above a tilted plane
subtracts the plane's rise under it.

The coverage zone's azimuth spread is handled by :func:`swept_zone`: on a level plane the zone
of a receiver turned in azimuth is the same zone turned about the antenna's foot.

References
----------
.. [1] ICAO Annex 10, Volume I, 3.1.5.6 (displacement sensitivity: the half-sector, 0.12 theta
       below the path, here taken as 0.88 theta to 1.12 theta) and 3.1.5.3.1 (coverage:
       8 deg in azimuth each side, 1.75 theta down to 0.45 theta, to 10 NM).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from geo.radio.fresnel import exact_ellipses

__all__ = [
    "RANGE_M",
    "ZoneShape",
    "path_receivers",
    "coverage_receivers",
    "united_zone",
    "antenna_zone",
    "ReflectionZone",
    "reflection_zones",
    "shape_of",
    "coverage_grid",
    "coverage_zone",
    "swept_zone",
]

#: Receivers are placed out to 10 NM (Annex 10 Vol I 3.1.5.3.1). [m]
RANGE_M = 10 * 1852.0
#: Elevations of the path zone, as fractions of theta [1]_.
PATH_FRACTIONS = (0.88, 1.0, 1.12)
#: Coverage: azimuth half-width [deg] and elevation limits as fractions of theta [1]_.
COVERAGE_AZIMUTH_DEG = 8.0
COVERAGE_FRACTIONS = (0.45, 1.75)
_ROWS = 160


@dataclass(frozen=True)
class ZoneShape:
    """A united zone in the plane coordinates (u, w) of the mast.

    Attributes
    ----------
    polygon : shapely.Polygon or shapely.MultiPolygon
        The zone. [m]
    near_m, far_m : float
        Smallest and largest ``u``: distances from the mast along the course. [m]
    max_half_width_m : float
        Half the largest across-course extent of the zone at any ``u``. [m]
    area_m2 : float
        [m^2]
    receivers : int
        Receivers whose zones were united.
    """

    polygon: object
    near_m: float
    far_m: float
    area_m2: float
    receivers: int
    half_width_floor_m: float = 0.0

    @property
    def max_half_width_m(self) -> float:
        """Half the largest across-course extent (measured on demand; at least ``half_width_floor_m``). [m]"""
        cached = self.__dict__.get("_half_width")
        if cached is None:
            cached = max(_max_half_width(self.polygon), self.half_width_floor_m)
            object.__setattr__(self, "_half_width", cached)
        return cached


def _height_above_plane(u, w, height_above_horizontal, forward_gradient, lateral_gradient):
    return height_above_horizontal - forward_gradient * u - lateral_gradient * w


def path_receivers(
    setback_m: float,
    offset_m: float,
    angle_deg: float,
    count: int,
    forward_gradient: float = 0.0,
    lateral_gradient: float = 0.0,
    fractions=PATH_FRACTIONS,
) -> np.ndarray:
    """Receivers on the extended centre line at the path and half-sector elevations.

    Parameters
    ----------
    setback_m, offset_m : float
        Mast position. [m]
    angle_deg : float
        Path angle theta. [deg]
    count : int
        Receivers per elevation, from the threshold to 10 NM, spaced geometrically in range.
    forward_gradient, lateral_gradient : float
        Rise of the reflecting plane toward the approach and toward the runway. [m/m]
    fractions : sequence of float
        Elevations as fractions of theta.

    Returns
    -------
    numpy.ndarray, shape (len(fractions) * count, 3)
        (u, w, height above the plane). [m]
    """
    before = np.geomspace(1.0, RANGE_M + 1.0, count) - 1.0  # distance before the threshold
    u = np.tile(setback_m + before, len(fractions))
    w = np.full(u.size, offset_m)
    horizontal = np.hypot(u, w)
    tan_e = np.repeat([math.tan(math.radians(f * angle_deg)) for f in fractions], count)
    z = _height_above_plane(u, w, tan_e * horizontal, forward_gradient, lateral_gradient)
    return np.column_stack([u, w, z])


def coverage_receivers(
    setback_m: float,
    offset_m: float,
    angle_deg: float,
    count: int,
    forward_gradient: float = 0.0,
    lateral_gradient: float = 0.0,
) -> np.ndarray:
    """Receivers of the coverage volume on the course: 0.45-1.75 theta, from the threshold to 10 NM.

    The volume also spans +/-8 deg of azimuth; :func:`swept_zone` sweeps these receivers' zones
    through it in closed form, so they are placed at azimuth 0 only. ``count`` receivers fill a
    grid of elevations and ranges (1 : 250), ordered so that each elevation is one sweep in range.

    Returns
    -------
    numpy.ndarray, shape (n, 3)
        (u, w, height above the plane). [m]
    """
    n_el, n_range = coverage_grid(count)
    low, high = COVERAGE_FRACTIONS
    elevations = np.radians(angle_deg * np.linspace(low, high, n_el))
    start = math.hypot(setback_m, offset_m)
    ranges = np.geomspace(start, RANGE_M + setback_m, n_range)
    el, rng = np.meshgrid(elevations, ranges, indexing="ij")
    u = rng.ravel()
    w = np.zeros(u.size)
    z = _height_above_plane(u, w, (rng * np.tan(el)).ravel(), forward_gradient, lateral_gradient)
    return np.column_stack([u, w, z])


def coverage_grid(count: int) -> tuple[int, int]:
    """Elevations and ranges of about ``count`` coverage receivers."""
    n_el = max(2, int(round(math.sqrt(max(count, 8) / 250.0) * 8)))
    return n_el, max(2, int(math.ceil(count / n_el)))


def swept_zone(
    polygon, pivot_uw, half_angle_rad: float, receivers: int, bins: int = 1000, spacing_m: float = 0.25
) -> ZoneShape:
    """A zone turned through +/- ``half_angle_rad`` about a pivot: the zone of receivers spread in azimuth.

    On a level plane the zone of a receiver at azimuth ``phi`` is the azimuth-0 zone turned by ``phi``
    about the foot of the antenna, so the union over the azimuths is the azimuth-0 union swept through
    the angle. Every circle about the pivot meets the zone of receivers ahead in one arc; sweeping
    widens each arc by the half-angle on both sides. The arcs' ends are read off the zone's boundary
    (densified to ``spacing_m``) in ``bins`` rings of distance.

    Parameters
    ----------
    polygon : shapely.Polygon
        Union of the zones of receivers at azimuth 0 (u, w). [m]
    pivot_uw : sequence of float
        Foot of the antenna (u, w). [m]
    half_angle_rad : float
        Azimuth half-width of the receivers. [rad]
    receivers : int
        Receivers represented (recorded in the result).

    Returns
    -------
    ZoneShape
    """
    import shapely

    rings = [polygon] if polygon.geom_type == "Polygon" else list(polygon.geoms)
    points = np.concatenate([np.asarray(shapely.segmentize(p.exterior, spacing_m).coords) for p in rings])
    rel = points - np.asarray(pivot_uw, dtype=float)
    r = np.hypot(rel[:, 0], rel[:, 1])
    beta = np.arctan2(rel[:, 1], rel[:, 0])
    edges = np.linspace(r.min(), r.max(), bins + 1)
    index = np.clip(np.searchsorted(edges, r, side="right") - 1, 0, bins - 1)
    lo = np.full(bins, np.inf)
    hi = np.full(bins, -np.inf)
    np.minimum.at(lo, index, beta)
    np.maximum.at(hi, index, beta)
    keep = np.isfinite(lo)
    radius = np.clip(0.5 * (edges[:-1] + edges[1:]), r.min(), r.max())[keep]
    radius[0], radius[-1] = r.min(), r.max()
    lo, hi = lo[keep] - half_angle_rad, hi[keep] + half_angle_rad
    # Out along the low side, round the far arc, back along the high side, round the near arc.
    far = np.linspace(lo[-1], hi[-1], 65)[1:-1]
    near = np.linspace(hi[0], lo[0], 65)[1:-1]
    polar = np.r_[
        np.column_stack([radius, lo]),
        np.column_stack([np.full(far.size, radius[-1]), far]),
        np.column_stack([radius, hi])[::-1],
        np.column_stack([np.full(near.size, radius[0]), near]),
    ]
    ring = np.column_stack([polar[:, 0] * np.cos(polar[:, 1]), polar[:, 0] * np.sin(polar[:, 1])])
    ring += np.asarray(pivot_uw, dtype=float)
    swept = shapely.Polygon(ring)
    if not swept.is_valid:
        swept = shapely.make_valid(swept)
    swept = shapely.union(swept, polygon)  # the arcs' ends are samples: never lose the unswept zone
    u0, _, u1, _ = swept.bounds
    return ZoneShape(swept, float(u0), float(u1), float(swept.area), receivers)


def _row_intervals(centres, quadratics, rows):
    """Interval of every ellipse on every row ``w = rows[k]`` (NaN where it misses).

    The discriminant and the roots in place, term by term as written: the same figures, fewer
    temporary arrays.
    """
    q_uu, q_uw, q_ww = quadratics[:, 0, 0], quadratics[:, 0, 1], quadratics[:, 1, 1]
    dw = rows[:, None] - centres[None, :, 1]
    b = q_uw * dw
    disc = b * b  # (q_uw dw)^2 - q_uu (q_ww dw^2 - 1)
    dw *= dw
    dw *= q_ww
    dw -= 1.0
    dw *= q_uu
    disc -= dw
    with np.errstate(invalid="ignore"):
        root = np.sqrt(disc, out=disc)  # NaN where the row misses the ellipse
    np.negative(b, out=b)
    lo = b - root
    lo /= q_uu
    lo += centres[:, 0]
    hi = np.add(b, root, out=b)
    hi /= q_uu
    hi += centres[:, 0]
    return lo, hi


def _merge(lo, hi):
    """Merge the intervals of each row; returns (row index, start, end) of the merged ones."""
    hits = np.isfinite(lo)
    rows_idx = np.repeat(np.arange(lo.shape[0]), np.count_nonzero(hits, axis=1))
    lo_f, hi_f = lo[hits], hi[hits]  # row by row, as np.nonzero orders them
    base = float(lo_f.min()) if lo_f.size else math.nan
    span = float(hi_f.max() - base) + 1.0 if hi_f.size else math.nan
    # Offset each row by a multiple of the span so one global running maximum never crosses rows;
    # rows so offset never overlap, so sorting the offset starts sorts by row, then start.
    shift = rows_idx * 2.0 * span
    lo_o = (lo_f - base) + shift
    hi_o = (hi_f - base) + shift
    order = np.argsort(lo_o, kind="stable")
    lo_o, hi_o = lo_o[order], hi_o[order]
    reach = np.maximum.accumulate(hi_o)
    starts = np.r_[True, lo_o[1:] > reach[:-1]]
    start_idx = np.flatnonzero(starts)
    end_idx = np.r_[start_idx[1:] - 1, lo_o.size - 1]
    row = rows_idx[order[start_idx]]
    offset = row * 2.0 * span - base
    return row, lo_o[start_idx] - offset, reach[end_idx] - offset


def _simple_union(centres, quadratics, rows):
    """Union polygon when every row meets the union in one interval, else None."""
    import shapely

    det = quadratics[:, 0, 0] * quadratics[:, 1, 1] - quadratics[:, 0, 1] ** 2
    half_w = np.sqrt(quadratics[:, 0, 0] / det)  # w half-extent of each ellipse
    w_min = float(np.min(centres[:, 1] - half_w))
    w_max = float(np.max(centres[:, 1] + half_w))
    pad = 1e-9 * max(1.0, w_max - w_min)
    w_rows = np.linspace(w_min + pad, w_max - pad, rows)
    lo, hi = _row_intervals(centres, quadratics, w_rows)
    row, start, end = _merge(lo, hi)
    counts = np.bincount(row, minlength=rows)
    present = np.flatnonzero(counts)
    if not (np.all(counts[present] == 1) and present[-1] - present[0] + 1 == present.size):
        return None
    ring = np.column_stack([np.r_[start, end[::-1]], np.r_[w_rows[row], w_rows[row][::-1]]])
    polygon = shapely.Polygon(ring)
    return polygon if polygon.is_valid else shapely.make_valid(polygon)


def _union_polygon(centres, quadratics, rows):
    """Union of ellipses; a family that is not simple row by row is split in halves."""
    import shapely

    polygon = _simple_union(centres, quadratics, rows)
    if polygon is not None:
        return polygon
    half = centres.shape[0] // 2
    return shapely.union(
        _union_polygon(centres[:half], quadratics[:half], rows), _union_polygon(centres[half:], quadratics[half:], rows)
    )


def _max_half_width(polygon, lines: int = 120) -> float:
    """Half the largest extent across the course of the zone's cuts by ``lines`` lines ``u = const``.

    GEOS cuts only the lines that can hold the largest extent: each line's extent is first found
    from the boundary's edges that cross it (:func:`_crossing_extents`, a few 1e-12 m from GEOS's
    own figures), and lines more than :data:`_WIDTH_MARGIN_M` short of the widest are left out.
    The figure is GEOS's, as if every line were cut.
    """
    import shapely

    u0, w0, u1, w1 = polygon.bounds
    u = np.linspace(u0, u1, lines)[1:-1]
    near = _crossing_extents(polygon, u)
    if np.isfinite(near).any():
        u = u[near >= np.nanmax(near) - _WIDTH_MARGIN_M]
    cuts = shapely.intersection(
        shapely.linestrings(
            np.stack(
                [np.column_stack([u, np.full(u.size, w0 - 1.0)]), np.column_stack([u, np.full(u.size, w1 + 1.0)])],
                axis=1,
            )
        ),
        polygon,
    )
    bounds = shapely.bounds(cuts)
    spans = (bounds[:, 3] - bounds[:, 1]) / 2.0
    return float(np.nanmax(spans)) if np.isfinite(spans).any() else 0.0


#: Lines whose extent from the edges is this much below the widest are not cut by GEOS: far
#: above the rounding of the edge crossings (a few 1e-12 m on a zone 20 km long). [m]
_WIDTH_MARGIN_M = 1e-6


def _crossing_extents(polygon, u: np.ndarray) -> np.ndarray:
    """Half the span in ``w`` of the boundary's crossings of each line ``u = u[k]`` (sorted ``u``; NaN: none).

    Each edge crosses the lines between its ends' ``u`` (a contiguous run of the sorted lines); an
    edge along a line counts with both ends.
    """
    import shapely

    starts, ends = [], []
    for ring in shapely.get_rings(shapely.get_parts(polygon)):
        xy = shapely.get_coordinates(ring)
        starts.append(xy[:-1])
        ends.append(xy[1:])
    a, b = np.concatenate(starts), np.concatenate(ends)
    lo_u, hi_u = np.minimum(a[:, 0], b[:, 0]), np.maximum(a[:, 0], b[:, 0])
    first = np.searchsorted(u, lo_u, side="left")
    count = np.searchsorted(u, hi_u, side="right") - first
    edge = np.repeat(np.arange(a.shape[0]), count)
    line = np.repeat(first - np.cumsum(count) + count, count) + np.arange(edge.size)
    ua, wa, ub, wb = a[edge, 0], a[edge, 1], b[edge, 0], b[edge, 1]
    along = ub == ua
    with np.errstate(invalid="ignore", divide="ignore"):
        w = np.where(along, wa, wa + (u[line] - ua) * (wb - wa) / (ub - ua))
    w_min = np.full(u.size, np.inf)
    w_max = np.full(u.size, -np.inf)
    np.minimum.at(w_min, line, np.where(along, np.minimum(wa, wb), w))
    np.maximum.at(w_max, line, np.where(along, np.maximum(wa, wb), w))
    with np.errstate(invalid="ignore"):
        return np.where(np.isfinite(w_min), (w_max - w_min) / 2.0, np.nan)


def united_zone(centres: np.ndarray, quadratics: np.ndarray, rows: int = _ROWS, blocks: int = 1) -> ZoneShape:
    """Union of ground ellipses ``(p - c)^T Q (p - c) <= 1`` as one shape.

    Parameters
    ----------
    centres : numpy.ndarray, shape (n, 2)
    quadratics : numpy.ndarray, shape (n, 2, 2)
        Ellipses in receiver order; neighbours should be close so that halves stay simple.
    rows : int
        Lines ``w = const`` across each part's width; the boundary between them is linear.
    blocks : int
        Contiguous families of receivers (each one sweep in range) united separately first.

    Returns
    -------
    ZoneShape
    """
    import shapely

    parts = [
        _union_polygon(c, q, rows)
        for c, q in zip(np.array_split(centres, blocks), np.array_split(quadratics, blocks))
        if len(c)
    ]
    polygon = parts[0] if len(parts) == 1 else shapely.union_all(parts)
    u0, _, u1, _ = polygon.bounds
    return ZoneShape(polygon, float(u0), float(u1), float(polygon.area), int(centres.shape[0]))


def antenna_zone(
    height_m: float,
    shift_m: float,
    receivers_uwz: np.ndarray,
    wavelength_m: float,
    rows: int = _ROWS,
    blocks: int = 1,
) -> ZoneShape:
    """The united first Fresnel zone of one antenna for a set of receivers.

    Parameters
    ----------
    height_m : float
        Antenna height above the plane. [m]
    shift_m : float
        Proximity shift of the antenna toward the runway (its ``w``). [m]
    receivers_uwz : numpy.ndarray, shape (n, 3)
        Receivers from :func:`path_receivers` or :func:`coverage_receivers`. [m]
    wavelength_m : float
        [m]

    Returns
    -------
    ZoneShape
    """
    centres, quadratics = exact_ellipses([0.0, shift_m, height_m], receivers_uwz, wavelength_m)
    return united_zone(centres, quadratics, rows, blocks)


def coverage_zone(height_m: float, shift_m: float, receivers_uwz: np.ndarray, wavelength_m: float) -> ZoneShape:
    """The coverage zone of one antenna: its zones for receivers on the course swept through +/-8 deg.

    Parameters are those of :func:`antenna_zone`, with receivers from :func:`coverage_receivers`.
    """
    n_el, _ = coverage_grid(receivers_uwz.shape[0])
    ahead = antenna_zone(height_m, shift_m, receivers_uwz, wavelength_m, blocks=n_el)
    return swept_zone(ahead.polygon, (0.0, shift_m), math.radians(COVERAGE_AZIMUTH_DEG), receivers_uwz.shape[0])


@dataclass(frozen=True)
class ReflectionZone:
    """One antenna's (or all antennas') zone of one kind.

    Attributes
    ----------
    antenna : str
        ``"lower"``, ``"middle"``, ``"upper"`` or ``"all"``.
    kind : str
        ``"path"`` (receivers on the path and half-sector) or ``"coverage"``.
    shape : ZoneShape
    """

    antenna: str
    kind: str
    shape: ZoneShape


def shape_of(polygon, receivers: int) -> ZoneShape:
    """Figures of a zone polygon in mast plane coordinates."""
    u0, _, u1, _ = polygon.bounds
    return ZoneShape(polygon, float(u0), float(u1), float(polygon.area), receivers)


def reflection_zones(
    roles,
    heights_m,
    shifts_m,
    setback_m: float,
    offset_m: float,
    angle_deg: float,
    wavelength_m: float,
    forward_gradient: float = 0.0,
    lateral_gradient: float = 0.0,
    receivers: int = 2001,
) -> list[ReflectionZone]:
    """Path and coverage zones of every antenna, and of all antennas together.

    Parameters
    ----------
    roles : sequence of str
        Antenna roles, lowest first.
    heights_m, shifts_m : sequence of float
        Heights above the plane and proximity shifts. [m]
    setback_m, offset_m : float
        Mast position. [m]
    angle_deg : float
        Path angle. [deg]
    wavelength_m : float
        [m]
    forward_gradient, lateral_gradient : float
        Reflecting plane gradients (0 on flat ground). [m/m]
    receivers : int
        Receivers per antenna and kind (at least this many).

    Returns
    -------
    list of ReflectionZone
        Per kind: one per antenna, then ``"all"``.
    """
    import shapely

    per_elevation = int(math.ceil(receivers / len(PATH_FRACTIONS)))
    families = {
        "path": path_receivers(setback_m, offset_m, angle_deg, per_elevation, forward_gradient, lateral_gradient),
        "coverage": coverage_receivers(setback_m, offset_m, angle_deg, receivers, forward_gradient, lateral_gradient),
    }
    out = []
    for kind, rx in families.items():
        if kind == "path":  # one sweep in range per elevation
            shapes = [
                antenna_zone(h, s, rx, wavelength_m, blocks=len(PATH_FRACTIONS)) for h, s in zip(heights_m, shifts_m)
            ]
        else:
            shapes = [coverage_zone(h, s, rx, wavelength_m) for h, s in zip(heights_m, shifts_m)]
        out += [ReflectionZone(role, kind, shape) for role, shape in zip(roles, shapes)]
        union = shape_of(shapely.union_all([s.polygon for s in shapes]), rx.shape[0])
        widest = max(s.max_half_width_m for s in shapes)  # the union is at least as wide as any member
        out.append(ReflectionZone("all", kind, replace(union, half_width_floor_m=widest)))
    return out
