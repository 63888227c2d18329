"""Allowed building heights around the mast: the building restricted area as a map of heights.

For a footprint (default a large hangar, :data:`DEFAULT_FOOTPRINT_M`) in each orientation (its
length along the runway or across it) and each cell of a square grid centred on the mast, the
tallest building that keeps its disturbance of the path under ``share`` of the structure limits
in every segment. The disturbance is the building's change of the DDM along the designed straight
path (receivers at most 20 m apart, :func:`geo.optics.areas.path_receivers`), measured by the one
structure rule (:func:`geo.radio.structure.structure_arrays`: per segment the 95th percentile of
``|bend| / limit``), exactly as the derived areas measure objects; the building's field is that of
:mod:`geo.optics.buildings` (walls and roof as one-sided plates of the optics core with the four
ground paths of :func:`geo.optics.scatter_paths.four_path_field`, and its knife-edge shadow).

**Bracketing.** A taller building of the same footprint scatters more and shadows more, so the
disturbance grows with height on the whole; not at every height: a wall and its image in the
ground form a vertical aperture whose lobes swing across the path's receivers as it grows, so the
share of a cell can dip at some heights (a bisection from the top may then stop in a dip). The
bracket is therefore grown from below: every cell is evaluated at ``min_height_m`` (cells that fail
there are allowed nothing, 0), then at doubled heights up to ``max_height_m`` until it fails
(cells that never fail are allowed at least the top). Between the last height that passed and
the first that failed, bisection halves the bracket until it is narrower than ``resolution_m``;
the lower end is reported. A failure between two heights of the ladder that both pass is not
searched for. All cells of a step are evaluated in one vectorised call.

**Speed.** Facets follow the phase criterion (:func:`geo.optics.objects.facet_side_m`) at each
cell's distance from the antennas and receivers: far from both, each wall is a few large facets.
Cells whose footprint, with its plan-view reach, meets no ray from the antennas toward the path's
receivers skip the shadow (it is exactly 1 there).

Ground: the study's reflecting plane, each cell's building standing on it (without a DEM) or on the
DEM under its centre (the height above the plane, at least 0). The heights above the survey datum
add the ground's elevation at the cell (the DEM's, or the plane's on flat ground).

A screening aid: the authority's assessment and flight inspection decide, and the Annex 14
obstacle limitation surfaces apply on top of these heights.

References
----------
.. [1] ICAO Annex 10, Volume I, 3.1.5.4 (structure limits, from memory in
       :mod:`geo.radio.structure_limits`); ICAO EUR Doc 015, *European Guidance Material on
       Managing Building Restricted Areas* (the trade term; from memory, not consulted).
.. [2] Press, W. H. et al., *Numerical Recipes*, 3rd ed., Cambridge, 2007, sec. 9.1 (bracketing
       and bisection).
"""

from __future__ import annotations

import math
import os
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass, field

import numpy as np

from geo.optics.areas import array_model, path_receivers
from geo.optics.buildings import (
    BuildingShape,
    plates_facets,
    rectangle_outline,
    scattered_fields,
    shadow_fields,
)
from geo.optics.objects import facet_side_m
from geo.radio.prediction import ddm
from geo.radio.structure import structure_arrays
from geo.radio.structure_limits import structure_segments

__all__ = [
    "HEIGHTS_CAUTION",
    "DEFAULT_FOOTPRINT_M",
    "FOOTPRINT_SOURCE",
    "HeightSettings",
    "AllowedHeights",
    "HeightMap",
    "cell_grid",
    "box_shapes",
    "box_disturbance",
    "allowed_heights",
    "building_heights",
]

HEIGHTS_CAUTION = (
    "Allowed building heights are a screening aid: the authority's assessment and flight inspection decide, and "
    "the Annex 14 obstacle limitation surfaces and local rules apply on top of them."
)
#: A large hangar (length, width): common practice, no source (a wide-body maintenance hangar is of this size).
DEFAULT_FOOTPRINT_M = (80.0, 60.0)
FOOTPRINT_SOURCE = "a large hangar, 80 m x 60 m (common practice, no source)"
#: Cells evaluated together (bounds memory: facets x receivers pairs per call).
_CELLS_PER_CHUNK = 64
#: Clearance around an antenna's foot inside which a footprint counts as standing on the mast. [m]
_MAST_CLEARANCE_M = 5.0


@dataclass(frozen=True)
class HeightSettings:
    """What ``mastplan building-heights`` maps.

    Attributes
    ----------
    extent_m : float
        Half-side of the square grid centred on the mast (each way along and across the runway). [m]
    step_m : float
        Cell size. [m]
    length_m, width_m : float
        The footprint. [m]
    orientations : tuple of str
        ``"along"`` (length along the runway) and/or ``"across"``.
    share : float
        Share of the structure limit the building may take in any segment.
    min_height_m, max_height_m : float
        The bracket. [m]
    resolution_m : float
        Bisection stops when the bracket is narrower. [m]
    """

    extent_m: float = 2000.0
    step_m: float = 20.0
    length_m: float = DEFAULT_FOOTPRINT_M[0]
    width_m: float = DEFAULT_FOOTPRINT_M[1]
    orientations: tuple = ("along", "across")
    share: float = 0.5
    min_height_m: float = 2.0
    max_height_m: float = 100.0
    resolution_m: float = 1.0
    footprint_source: str = FOOTPRINT_SOURCE
    share_source: str = "the derived areas' critical share (common practice, no source)"


@dataclass(frozen=True)
class AllowedHeights:
    """Allowed heights for one orientation.

    Attributes
    ----------
    orientation : str
    height_m : numpy.ndarray, shape (G,)
        Tallest height found to pass (``max_height_m``: at least that; 0: not even ``min_height_m``;
        NaN: the footprint stands on the mast). [m]
    share : numpy.ndarray, shape (G,)
        Largest share of a limit at that height (at ``min_height_m`` where 0).
    limiting_segment : numpy.ndarray of int, shape (G,)
        The segment with that share (-1 where not computed).
    evaluations : int
        Cell evaluations made (all steps).
    """

    orientation: str
    height_m: np.ndarray
    share: np.ndarray
    limiting_segment: np.ndarray
    evaluations: int


@dataclass(frozen=True)
class HeightMap:
    """Everything ``mastplan building-heights`` computes.

    Attributes
    ----------
    study : StudyResult
    settings : HeightSettings
    u_m, w_m : numpy.ndarray
        Grid axes (toward the approach, toward the runway). [m]
    ground_elevation_m : numpy.ndarray, shape (W, U)
        The ground's elevation in the survey datum at each cell. [m]
    base_m : numpy.ndarray, shape (W, U)
        The ground above the reflecting plane (at least 0). [m]
    maps : list of AllowedHeights
        Per orientation, values in (W, U) order raveled.
    segments : list of Segment
    screening : list of dict
        The site file's buildings against the map and the full prediction (:func:`screen_buildings`).
    """

    study: object
    settings: HeightSettings
    u_m: np.ndarray
    w_m: np.ndarray
    ground_elevation_m: np.ndarray
    base_m: np.ndarray
    maps: list
    segments: list
    screening: list = field(default_factory=list)

    def grid(self, values: np.ndarray) -> np.ndarray:
        """Values per cell as a (W, U) array (rows across the runway, columns along it)."""
        return np.asarray(values).reshape(self.w_m.size, self.u_m.size)

    @property
    def lowest_m(self) -> np.ndarray:
        """Per cell, the lower of the orientations' allowed heights. [m]"""
        return np.nanmin(np.stack([m.height_m for m in self.maps]), axis=0)


def cell_grid(settings: HeightSettings) -> tuple[np.ndarray, np.ndarray]:
    """Grid axes u, w: cell centres from ``-extent`` to ``+extent`` around the mast. [m]"""
    count = int(round(2 * settings.extent_m / settings.step_m))
    axis = (np.arange(count) + 0.5) * settings.step_m - settings.extent_m
    return axis.copy(), axis.copy()


def box_shapes(u, w, base_m, heights_m, settings: HeightSettings, orientation: str) -> list[BuildingShape]:
    """Rectangular buildings at the cells, length along (u) or across (w) the runway."""
    angle = 0.0 if orientation == "along" else math.pi / 2
    return [
        BuildingShape("cell", rectangle_outline((a, b), settings.length_m, settings.width_m, angle), float(h), float(z))
        for a, b, z, h in zip(u, w, base_m, heights_m)
    ]


def _box_plates(model, u, w, base_m, heights_m, settings, orientation, receivers_m):
    """Walls and roof of rectangular buildings at many cells, cut by the phase criterion (vectorised)."""
    along = orientation == "along"
    lu, lw = (settings.length_m, settings.width_m) if along else (settings.width_m, settings.length_m)
    n = model.normal
    z0 = -(n[0] * u + n[1] * w) / n[2] + base_m
    h = np.asarray(heights_m, float)
    centres = np.column_stack([u, w, z0 + h / 2.0])
    reach = np.hypot(0.5 * math.hypot(lu, lw), h / 2.0)
    near_a = np.linalg.norm(centres[:, None, :] - model.positions_m[None, :, :], axis=2).min(axis=1)
    rx = receivers_m
    near_r = np.full(u.size, np.inf)
    for start in range(0, rx.shape[0], 256):
        block = rx[start : start + 256]
        near_r = np.minimum(near_r, np.linalg.norm(centres[:, None, :] - block[None, :, :], axis=2).min(axis=1))
    side = facet_side_m(np.minimum(near_a, near_r) - reach, model.wavelength_m)
    g = u.size
    zeros = np.zeros(g)
    walls = [  # (centre offset u, w), edge a; counter-clockwise outline, a x up outward
        ((0.0, -lw / 2), (lu, 0.0)),
        ((lu / 2, 0.0), (0.0, lw)),
        ((0.0, lw / 2), (-lu, 0.0)),
        ((-lu / 2, 0.0), (0.0, -lw)),
    ]
    cs, as_, bs = [], [], []
    for (du, dw), (au, aw) in walls:
        cs.append(np.column_stack([u + du, w + dw, z0 + h / 2.0]))
        as_.append(np.tile([au, aw, 0.0], (g, 1)))
        bs.append(np.column_stack([zeros, zeros, h]))
    cs.append(np.column_stack([u, w, z0 + h]))
    as_.append(np.tile([lu, 0.0, 0.0], (g, 1)))
    bs.append(np.tile([0.0, lw, 0.0], (g, 1)))
    groups = np.tile(np.arange(g), 5)
    facets, groups = plates_facets(np.vstack(cs), np.vstack(as_), np.vstack(bs), groups, np.tile(side, 5))
    return facets, groups, centres


def _in_ray_fan(model, u, w, reach_m, receivers_m) -> np.ndarray:
    """Cells whose footprint (within ``reach_m`` of the centre) can meet a ray from an antenna to a receiver."""
    import shapely

    rx = receivers_m[:, :2]
    feet = model.positions_m[:, :2]
    fan = shapely.MultiPoint(np.vstack([feet, rx])).convex_hull
    return shapely.distance(fan, shapely.points(u, w)) <= reach_m


def box_disturbance(model, receivers, segments, u, w, base_m, heights_m, settings, orientation):
    """Largest share of a limit (G,) and its segment (G,) of rectangular buildings at the cells.

    Parameters
    ----------
    model : ArrayModel
    receivers : geo.optics.areas.PathReceivers
    segments : list of Segment
    u, w, base_m, heights_m : numpy.ndarray, shape (G,)
        Cell centres, ground above the plane and building heights. [m]
    settings : HeightSettings
    orientation : {"along", "across"}
    """
    rx = receivers.points_m
    facets, groups, centres = _box_plates(model, u, w, base_m, heights_m, settings, orientation, rx)
    d_csb, d_sbo = scattered_fields(model, facets, groups, centres, rx, (None, None))
    reach = 0.5 * math.hypot(settings.length_m, settings.width_m)
    for g in np.flatnonzero(_in_ray_fan(model, u, w, reach, rx)):
        (shape,) = box_shapes(
            u[g : g + 1], w[g : g + 1], base_m[g : g + 1], heights_m[g : g + 1], settings, orientation
        )
        sc, ss = shadow_fields(model, shape, rx)
        d_csb[g] += sc
        d_sbo[g] += ss
    c, s, k = receivers.csb, receivers.sbo, receivers.sbo_scale
    swamped = np.abs(d_csb) >= np.abs(c)
    with np.errstate(divide="ignore", invalid="ignore"):
        change = np.where(swamped, 0.0, ddm(c + d_csb, s + d_sbo, k) - ddm(c, s, k))
    ratio = structure_arrays(segments, receivers.before_threshold_m, change).ratio_95
    for i, seg in enumerate(segments):
        ratio[swamped[:, seg.contains(receivers.before_threshold_m)].any(axis=1), i] = np.inf
    ratio = np.where(np.isnan(ratio), -np.inf, ratio)
    worst = np.argmax(ratio, axis=1)
    return ratio[np.arange(u.size), worst], worst


def _at_mast(model, u, w, settings, orientation) -> np.ndarray:
    along = orientation == "along"
    lu, lw = (settings.length_m, settings.width_m) if along else (settings.width_m, settings.length_m)
    hit = np.zeros(u.shape, dtype=bool)
    for pu, pw, _ in model.positions_m:
        hit |= (np.abs(u - pu) <= lu / 2 + _MAST_CLEARANCE_M) & (np.abs(w - pw) <= lw / 2 + _MAST_CLEARANCE_M)
    return hit


def _grow_bracket(evaluate, todo: np.ndarray, settings: HeightSettings):
    """From ``min_height_m`` up, doubling, until each cell fails (or passes ``max_height_m``).

    Returns per cell of ``todo``: the last height that passed (0 when the lowest failed), its share
    and segment, the first height that failed (NaN: none up to the top), and ``todo`` itself.
    """
    lo = np.zeros(todo.size)
    hi = np.full(todo.size, np.nan)
    s_lo, seg_lo = evaluate(todo, np.full(todo.size, settings.min_height_m))
    passed = s_lo <= settings.share
    lo[passed] = settings.min_height_m
    hi[~passed] = settings.min_height_m
    active = np.flatnonzero(passed)
    while active.size:
        trial = np.minimum(2.0 * lo[active], settings.max_height_m)
        s_t, seg_t = evaluate(todo[active], trial)
        ok = s_t <= settings.share
        lo[active[ok]], s_lo[active[ok]], seg_lo[active[ok]] = trial[ok], s_t[ok], seg_t[ok]
        hi[active[~ok]] = trial[~ok]
        active = active[ok & (trial < settings.max_height_m)]
    return lo, s_lo, seg_lo, hi, todo


def allowed_heights(model, receivers, segments, u, w, base_m, settings, orientation, workers=None, progress=None):
    """The tallest height under the share at every cell, by bracketing and bisection (module notes) [2]_.

    Returns
    -------
    AllowedHeights
    """
    g = u.size
    height = np.full(g, np.nan)
    share = np.full(g, np.nan)
    segment = np.full(g, -1)
    todo = np.flatnonzero(~_at_mast(model, u, w, settings, orientation))
    pool = ThreadPoolExecutor(max_workers=workers or min(os.cpu_count() or 1, 2))
    count = [0]

    def evaluate(index, heights):
        chunks = [index[i : i + _CELLS_PER_CHUNK] for i in range(0, index.size, _CELLS_PER_CHUNK)]
        parts = [heights[i : i + _CELLS_PER_CHUNK] for i in range(0, index.size, _CELLS_PER_CHUNK)]
        got = list(pool.map(lambda a: box_disturbance(model, receivers, segments, u[a[0]], w[a[0]], base_m[a[0]],
                                                      a[1], settings, orientation), zip(chunks, parts)))  # fmt: skip
        count[0] += index.size
        if progress is not None:
            progress(count[0])
        if not got:
            return np.zeros(0), np.zeros(0, int)
        return np.concatenate([a for a, _ in got]), np.concatenate([b for _, b in got])

    try:
        lo, s_lo, seg_lo, hi, index = _grow_bracket(evaluate, todo, settings)
        for k in (0, 1, 2):  # cells allowed nothing (lo 0) or at least the top (hi NaN) are settled here
            (height, share, segment)[k][index] = (lo, s_lo, seg_lo)[k]
        rest = np.flatnonzero(np.isfinite(hi) & (lo > 0.0))
        lo, hi, s_lo, seg_lo = lo[rest], hi[rest], s_lo[rest], seg_lo[rest]
        index = index[rest]
        while index.size and np.max(hi - lo) > settings.resolution_m:
            mid = (lo + hi) / 2.0
            s_mid, seg_mid = evaluate(index, mid)
            passed = s_mid <= settings.share
            lo, hi = np.where(passed, mid, lo), np.where(passed, hi, mid)
            s_lo, seg_lo = np.where(passed, s_mid, s_lo), np.where(passed, seg_mid, seg_lo)
        height[index], share[index], segment[index] = lo, s_lo, seg_lo
    finally:
        pool.shutdown(wait=True, cancel_futures=True)
    return AllowedHeights(orientation, height, share, segment, count[0])


def _ground(result, u, w, model) -> tuple[np.ndarray, np.ndarray]:
    """Ground elevation (survey datum) and ground above the plane (at least 0) at the cells. [m]"""
    mast = result.mast
    n = model.normal
    plane = mast.plane_elevation_m - (n[0] * u + n[1] * w) / n[2]
    if result.spec.terrain is None or result.terrain is None:
        return plane, np.zeros(u.size)
    from geo.ground.dem import Dem

    sign = 1.0 if mast.side == "right" else -1.0
    with Dem.open(result.spec.terrain) as dem:
        ground = np.asarray(
            dem.sample_frame(result.runway.frame, mast.setback_m - u, sign * (mast.offset_m - w)), float
        )
    ground = np.where(np.isfinite(ground), ground, plane)
    return ground, np.maximum(ground - plane, 0.0)


def building_heights(result, settings: HeightSettings, workers=None, progress=None, receivers=None) -> HeightMap:
    """Allowed heights of ``settings``' footprint around the mast of a study (module notes).

    Parameters
    ----------
    result : StudyResult
    settings : HeightSettings
    workers : int, optional
        Threads over the chunks of cells (default 2; each kernel call has its own threads).
    progress : callable, optional
        ``progress(cells_done)`` after each evaluation step.
    receivers : geo.optics.areas.PathReceivers, optional
        The path's receivers (default :func:`geo.optics.areas.path_receivers`, the derived areas');
        ``mastplan building-heights`` gives those of ``mastplan run``'s buildings
        (:func:`geo.study.buildings.study_receivers`), so that the map and the run measure alike.

    Returns
    -------
    HeightMap
    """
    spec = result.spec
    model = array_model(result)
    segments = structure_segments(spec.category, result.rdh_m, spec.angle_deg)
    receivers = path_receivers(result, model, segments) if receivers is None else receivers
    u_axis, w_axis = cell_grid(settings)
    uu, ww = np.meshgrid(u_axis, w_axis)  # rows across the runway (w), columns along it (u)
    u, w = uu.ravel(), ww.ravel()
    ground, base = _ground(result, u, w, model)
    maps = [
        allowed_heights(model, receivers, segments, u, w, base, settings, o, workers, progress)
        for o in settings.orientations
    ]
    return HeightMap(result, settings, u_axis, w_axis, ground.reshape(uu.shape), base.reshape(uu.shape), maps, segments)
