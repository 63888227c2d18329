"""Critical and sensitive areas derived from the disturbance an object causes on the path.

For each object (``[[object]]`` of the site file, or three generic classes), each heading and
each position of a grid around the mast, the object's scattered field (:mod:`geo.optics.objects`,
:mod:`geo.optics.scatter_paths`) adds to the CSB and SBO of every antenna with its feeds. The
disturbance is the change of ``DDM = 2 k Re(S / C)`` (module notes of :mod:`geo.radio.prediction`)
it causes along the designed straight path, at receivers at most 20 m apart, measured as flight
inspection measures bends (:mod:`geo.radio.structure`: the recorder's filter, then per approach
segment of :mod:`geo.radio.structure_limits` about a straight line or the mean of the segment, 95 %
amplitude). The rule is linear in the DDM, so the bends of the disturbed path are those of the
undisturbed one plus those of the change: the change alone is the object's share. Where the
object's carrier outweighs the array's at a receiver, the position's share is infinite.

:func:`bend_amplitude` keeps the envelope ``2 k |dS - (S / C) dC| / (|C| - |dC|)``, the largest DDM
change at one receiver as the scattered phase turns: an upper bound of the change, no longer the
measure of the areas.

A position is **critical** when its judged share (:mod:`geo.optics.disturbance_rule`: the 95th
percentile of ``|bend| / limit`` in the worst segment combined with the terrain's own bends by root
sum of squares, or the steady shift of the path angle or the sector in the far segments over the
monitor limits) exceeds ``critical_share``, **sensitive** above ``sensitive_share``; positions
where the object would stand against the mast count as both. The
areas are the union of the grid cells (squares of the grid spacing centred on the positions) over
the object's headings: a cell union, not a contour, so the outline shows the grid it came from.
Ground: with a DEM, the objects stand on it and their four ground paths reflect on its local
surface at each specular point (:mod:`geo.optics.object_ground`); on flat ground, the plane.

The antennas' element pattern is the study's (``[prediction] element``, :mod:`geo.radio.element`;
generic by default), in the undisturbed fields and in the illumination of the objects
(:func:`element_pattern`), so objects behind the mast see the element's back level.

Derived areas are a planning aid beside the authority's rules and flight inspection, never in
place of them.

References
----------
.. [1] ICAO Annex 10, Volume I, 3.1.5.4 (glide path structure limits; values from memory in
       :mod:`geo.radio.structure_limits`).
.. [2] Knott, E. F., Shaeffer, J. F. and Tuley, M. T., *Radar Cross Section*, 2nd ed., Artech
       House, 1993, ch. 5 (physical optics of plates).
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass, field

import numpy as np

from geo.optics.area_grid import SIDES, grow_grids, initial_lattice
from geo.optics.disturbance_rule import judged_figures, shift_receivers, steady_shifts, terrain_shares
from geo.optics.kernel import Facets
from geo.optics.object_ground import local_ground
from geo.optics.objects import (
    GENERIC_OBJECTS,
    HEADING_SAMPLES,
    HEADING_SPREAD_DEG,
    heading_offsets_deg,
    object_facets,
    object_half_diagonal_m,
)
from geo.optics.scatter_paths import four_path_fields
from geo.radio.bend_filter import MAX_GAP_M
from geo.radio.element import element_for
from geo.radio.prediction import ArrayModel, ddm
from geo.radio.structure import structure_arrays
from geo.radio.structure_limits import COVERAGE_M, Segment, structure_segments
from geo.site.site_file import AreaSpec, ObjectSpec

__all__ = [
    "AREAS_CAUTION",
    "PathReceivers",
    "ObjectDisturbance",
    "DerivedArea",
    "AreasResult",
    "array_model",
    "path_receivers",
    "position_grid",
    "object_fields",
    "element_pattern",
    "bend_amplitude",
    "disturbance",
    "cell_union",
    "derive_areas",
    "COARSE_OBJECT_SHARE",
    "COARSE_ZONE_SHARE",
    "coarse_grid_warnings",
    "position_shares",
    "area_objects",
    "union_areas",
    "UNION_NAME",
    "SIDE_WORDS",
]

AREAS_CAUTION = (
    "Derived critical and sensitive areas are a planning aid beside the authority's rules and flight "
    "inspection, never in place of them."
)
#: Position-receiver pairs evaluated together (bounds memory: about 20 facets x 16 bytes x 20 arrays each).
_PAIRS_PER_CHUNK = 30_000
#: Clearance around the mast inside which an object counts as standing against it. [m]
_MAST_CLEARANCE_M = 2.0
#: A grid spacing above this share of an object's length is too coarse for it (our choice, no
#: source; measured: a 10 m fuel truck's critical area on a flat invented site changed by 11 % from
#: a 20 m grid to 10 m, by 3 % from 10 m to 5 m; tests/optics/test_areas_closed.py).
COARSE_OBJECT_SHARE = 1.0
#: A grid spacing above this share of the path zone's width is too coarse for it (our choice: at
#: least four positions across the zone; no source).
COARSE_ZONE_SHARE = 0.25
#: Largest spacing of the points along a taxiway (the grid's when finer). [m]
SAMPLE_STEP_M = 10.0
#: Name of the union of the objects' areas in outputs.
UNION_NAME = "all objects"
#: Words of the grid's sides (geo.optics.area_grid.SIDES).
SIDE_WORDS = {
    "ahead": "ahead",
    "behind": "behind",
    "toward_runway": "toward the runway",
    "away": "away from the runway",
}


@dataclass(frozen=True)
class PathReceivers:
    """Receivers on the designed straight path, with the undisturbed fields there.

    Attributes
    ----------
    points_m : numpy.ndarray, shape (R, 3)
        In the mast frame. [m]
    before_threshold_m : numpy.ndarray, shape (R,)
        Distance before the threshold along the centre line. [m]
    csb, sbo : numpy.ndarray of complex, shape (R,)
        Undisturbed fields.
    sbo_scale : float
    limit_ddm : numpy.ndarray, shape (R,)
        Structure limit at each receiver.
    segment : numpy.ndarray of int, shape (R,)
        Index of each receiver's segment.
    """

    points_m: np.ndarray
    before_threshold_m: np.ndarray
    csb: np.ndarray
    sbo: np.ndarray
    sbo_scale: float
    limit_ddm: np.ndarray
    segment: np.ndarray


@dataclass(frozen=True)
class ObjectDisturbance:
    """One object's disturbance at every position and heading.

    Attributes
    ----------
    obj : ObjectSpec
    ahead_m, toward_runway_m : numpy.ndarray, shape (G,)
        Positions (u, w) of the object's centre in the mast frame. [m]
    at_mast : numpy.ndarray of bool, shape (G,)
        The object would stand against the mast there (not computed; inside both areas).
    segment_ddm : dict of str to numpy.ndarray, shape (G, S)
        Per heading, the 95 % bend of the disturbance per segment (NaN at the mast, inf where the
        object's carrier outweighs the array's). [DDM]
    share : dict of str to numpy.ndarray, shape (G,)
        Per heading, the judged share of :mod:`geo.optics.disturbance_rule`: the larger of the bend
        share (the 95th percentile of ``|bend| / limit``, the worst segment, combined with the
        terrain's) and the shift share of the far segments (inf at the mast).
    figures : dict of str to dict of str to numpy.ndarray, shape (G,)
        Per heading, every figure of :func:`geo.optics.disturbance_rule.judged_figures` (NaN at the mast).
        Per heading, the largest over the segments of the 95th percentile of ``|bend| / limit``
        (inf at the mast).
    extent_m : dict of str to float
        Reach of the object's grid from the mast per side (:data:`geo.optics.area_grid.SIDES`). [m]
    growth_rounds : int
        Blocks the grid grew by after the first rectangle.
    """

    obj: ObjectSpec
    ahead_m: np.ndarray
    toward_runway_m: np.ndarray
    at_mast: np.ndarray
    segment_ddm: dict
    share: dict
    extent_m: dict = field(default_factory=dict)
    growth_rounds: int = 0
    figures: dict = field(default_factory=dict)

    @property
    def worst_share(self) -> np.ndarray:
        """The largest share over the headings. [-]"""
        return np.max(np.stack(list(self.share.values())), axis=0)


@dataclass(frozen=True)
class DerivedArea:
    """One derived area.

    Attributes
    ----------
    object_name : str
    kind : {"critical", "sensitive"}
    polygon : shapely geometry
        In the mast frame (u toward the approach, w toward the runway). [m]
    share : float
        The share of the structure limit that defines it.
    open_sides : tuple of str
        Sides (:data:`geo.optics.area_grid.SIDES`) where the area still has cells on the edge of the
        grid grown to ``[areas] max_extent``: it may go on beyond (empty: closed).
    """

    object_name: str
    kind: str
    polygon: object
    share: float
    open_sides: tuple = ()

    @property
    def reaches_grid_edge(self) -> bool:
        """The area has cells on the edge of the grid at its largest extent: it is not closed."""
        return bool(self.open_sides)

    @property
    def area_m2(self) -> float:
        return float(self.polygon.area)

    @property
    def outline(self):
        """The planner's outline: the rectangle in the mast frame, sides along and across the runway, holding it."""
        import shapely

        return shapely.Polygon() if self.polygon.is_empty else shapely.box(*self.polygon.bounds)

    def reach_m(self) -> dict:
        """Reach from the mast: ahead, behind, toward the runway and away from it (0 when not reached). [m]"""
        if self.polygon.is_empty:
            return {"ahead_m": 0.0, "behind_m": 0.0, "toward_runway_m": 0.0, "away_m": 0.0}
        u0, w0, u1, w1 = self.polygon.bounds
        return {
            "ahead_m": max(u1, 0.0),
            "behind_m": max(-u0, 0.0),
            "toward_runway_m": max(w1, 0.0),
            "away_m": max(-w0, 0.0),
        }


@dataclass(frozen=True)
class AreasResult:
    """Everything ``mastplan areas`` computes.

    Attributes
    ----------
    study : StudyResult
    settings : AreaSpec
    segments : list of Segment
    receivers : PathReceivers
    disturbances : list of ObjectDisturbance
    areas : list of DerivedArea
        Critical then sensitive, per object.
    objects_source : str
        ``"site file"`` or ``"generic, no source"``.
    rule : dict
        How the disturbance was judged: ``element`` (the antennas' :class:`geo.radio.element.ElementPattern`
        or None), ``terrain_share`` (per segment) and ``terrain_source``.
    warnings : tuple of str
        Areas left open at the largest extent, grids too coarse for an object or the zone.
    unions : tuple of DerivedArea
        Per kind, the union of every object's area (``object_name`` :data:`UNION_NAME`).
    taxiways : tuple of geo.optics.taxiways.TaxiwayResult
    holding_checks : tuple of geo.optics.taxiways.HoldingCheck
    findings : tuple of (code, severity, message)
        The taxiways' holding positions and the holding positions checked.
    """

    study: object
    settings: AreaSpec
    segments: list[Segment]
    receivers: PathReceivers
    disturbances: list[ObjectDisturbance]
    areas: list[DerivedArea]
    objects_source: str
    rule: dict = field(default_factory=dict)
    warnings: tuple = ()
    unions: tuple = ()
    taxiways: tuple = ()
    holding_checks: tuple = ()
    findings: tuple = ()


def array_model(result) -> ArrayModel:
    """The study's array over its reflecting plane, with its feeds, as the prediction built it."""
    spec = result.spec
    plane = result.terrain.plane if result.terrain is not None else None
    gu, gw = (plane.forward_gradient, plane.lateral_gradient) if plane is not None else (0.0, 0.0)
    return ArrayModel.build(
        [a.height_m for a in result.antennas],
        [a.shift_toward_runway_m for a in result.antennas],
        result.feeds[0],
        result.feeds[1],
        result.wavelength_m,
        gu,
        gw,
        spec.prediction.relative_permittivity,
        spec.prediction.conductivity_s_m,
        phase_for_angle_deg=spec.angle_deg,
        element=element_for(spec.prediction.element, spec.prediction.element_front_to_back_db),
    )


def path_receivers(result, model: ArrayModel, segments: list[Segment], count: int | None = None) -> PathReceivers:
    """Receivers on the designed straight path over the segments, evenly spaced.

    ``count`` receivers, by default as few as keep them at most ``MAX_GAP_M`` (20 m) apart, the
    spacing the structure rule asks for (:mod:`geo.radio.structure`); fewer are allowed (checks).
    """
    mast = result.mast
    theta = math.radians(result.spec.angle_deg)
    intercept_z = result.intercept_elevation_m - mast.plane_elevation_m
    end = max(min(s.to_m for s in segments), 0.0)
    if count is None:
        count = int(math.ceil((COVERAGE_M - end) / MAX_GAP_M)) + 1
    before = np.linspace(end, COVERAGE_M, count)  # the ends exactly on the segment ends
    u = mast.setback_m + before
    points = np.column_stack([u, np.full(count, mast.offset_m), intercept_z + u * math.tan(theta)])
    csb, sbo = model.fields(points)
    limit = np.full(count, np.nan)
    segment = np.full(count, -1)
    for i in range(len(segments) - 1, -1, -1):  # the first segment containing a receiver wins
        inside = segments[i].contains(before)
        limit = np.where(inside, segments[i].limit_at(before), limit)
        segment = np.where(inside, i, segment)
    return PathReceivers(points, before, csb, sbo, result.prediction.sbo_scale, limit, segment)


def position_grid(result, settings: AreaSpec) -> tuple[np.ndarray, np.ndarray]:
    """The first object positions (u, w) around the mast: behind to ahead, beyond the mast to past the centre line.

    Whole steps of the lattice anchored at the mast (:func:`geo.optics.area_grid.initial_lattice`). [m]
    """
    return initial_lattice(settings, result.mast.offset_m).positions()


def _feet(model: ArrayModel, u: np.ndarray, w: np.ndarray) -> np.ndarray:
    """Ground points under the positions: on the plane through the origin."""
    n = model.normal
    return np.column_stack([u, w, -(n[0] * u + n[1] * w) / n[2]])


def _at_mast(obj: ObjectSpec, heading: str, model: ArrayModel, u: np.ndarray, w: np.ndarray) -> np.ndarray:
    """Whether the object's footprint (with a clearance) holds an antenna's foot."""
    along, across = (obj.length_m, obj.width_m) if heading == "along" else (obj.width_m, obj.length_m)
    hit = np.zeros(u.shape, dtype=bool)
    for pu, pw, _ in model.positions_m:
        hit |= (np.abs(u - pu) <= along / 2 + _MAST_CLEARANCE_M) & (np.abs(w - pw) <= across / 2 + _MAST_CLEARANCE_M)
    return hit


def object_fields(
    model: ArrayModel,
    obj: ObjectSpec,
    heading: str,
    u: np.ndarray,
    w: np.ndarray,
    receivers_m: np.ndarray,
    refine: float = 1.0,
    offsets_deg=None,
    ground=None,
    blocks=None,
) -> tuple[np.ndarray, np.ndarray]:
    """CSB and SBO fields the object scatters, per position and receiver (and turned heading).

    Parameters
    ----------
    model : ArrayModel
        With its element pattern (:attr:`ArrayModel.element`), which weights the object's
        illumination along each leg from the antenna (:func:`element_pattern`).
    obj : ObjectSpec
    heading : {"along", "across"}
    u, w : numpy.ndarray, shape (G,)
        Positions of the object's centre. [m]
    receivers_m : numpy.ndarray, shape (R, 3)
    refine : float
        Finer facets than the phase criterion asks (for checks).
    offsets_deg : array_like, shape (N,), optional
        Headings turned by these about the vertical (:func:`geo.optics.objects.heading_offsets_deg`),
        all through the kernel at once. [deg]
    ground : geo.optics.object_ground.LocalGround, optional
        The DEM: the object stands on it and its ground paths reflect on its local surface
        (:mod:`geo.optics.object_ground`); None: the plane of ``model``.
    blocks : list of numpy.ndarray, optional
        Receivers that share a reflecting plane per position over the DEM (an approach segment each).

    Returns
    -------
    d_csb, d_sbo : numpy.ndarray of complex, shape (G, R), or (N, G, R) with ``offsets_deg``
        In the units of :meth:`geo.radio.prediction.ArrayModel.fields`.
    """
    feet = _feet(model, np.asarray(u, float), np.asarray(w, float))
    if ground is not None:  # standing on the DEM
        feet[:, 2] = ground.surface(feet[:, 0], feet[:, 1])[0]
    centres = feet + np.array([0.0, 0.0, (obj.height_m + obj.base_m) / 2.0])
    to_antennas = np.linalg.norm(centres[:, None, :] - model.positions_m[None, :, :], axis=2).min(axis=1)
    rx = np.asarray(receivers_m, float)
    to_receivers = np.linalg.norm(centres[:, None, :] - rx[None, :, :], axis=2).min(axis=1)
    reach = math.hypot(object_half_diagonal_m(obj), (obj.height_m - obj.base_m) / 2.0)
    ranges = np.minimum(to_antennas, to_receivers) - reach
    turns = [0.0] if offsets_deg is None else [float(t) for t in np.atleast_1d(offsets_deg)]
    cut = [object_facets(obj, heading, feet, ranges, model.wavelength_m, refine, t) for t in turns]
    count = feet.shape[0]
    facets = Facets(*(np.concatenate([getattr(f, k) for f, _ in cut]) for k in ("centres_m", "edge_a_m", "edge_b_m")),
                    two_sided=True)  # fmt: skip
    groups = np.concatenate([g + i * count for i, (_, g) in enumerate(cut)])  # heading i, position g
    centres = np.tile(centres, (len(turns), 1))
    element = None if model.element is None or model.element.is_isotropic else model.element_field
    e = four_path_fields(
        model.positions_m,
        facets,
        groups,
        centres,
        rx,
        model.wavelength_m,
        model.normal,
        model.relative_permittivity,
        model.conductivity_s_m,
        element=element,
        ground=ground,
        blocks=blocks,
    )  # (antennas, N G, R): every antenna and heading through the kernel at once
    d_csb, d_sbo = np.tensordot(model.csb, e, axes=1), np.tensordot(model.sbo, e, axes=1)
    if offsets_deg is None:
        return d_csb, d_sbo
    return d_csb.reshape(len(turns), count, -1), d_sbo.reshape(len(turns), count, -1)


def element_pattern(model: ArrayModel, direction_m: np.ndarray) -> np.ndarray:
    """The field of the model's element toward directions (P, 3) leaving an antenna (1 for point sources).

    The element of :mod:`geo.radio.element` (generic by default: a raised ``cos^(2n)(phi / 2)``
    in azimuth with its front-to-back ratio, ``cos e`` in elevation), facing the approach (+u).
    Along the four ground paths it weights the leg from the antenna toward each facet and the leg
    toward the ground on the way to it (:func:`geo.optics.scatter_paths.four_path_field`), as the
    image prediction weights its direct and reflected waves.

    References
    ----------
    .. [1] Balanis, C. A., *Antenna Theory*, 3rd ed., Wiley, 2005, sec. 6.2 (the cardioid);
           IEEE Std 145-2013 (front-to-back ratio).
    """
    return np.broadcast_to(model.element_field(np.asarray(direction_m, float)), np.shape(direction_m)[:-1])


def bend_amplitude(csb, sbo, d_csb, d_sbo, sbo_scale: float) -> np.ndarray:
    """``2 k |dS - (S / C) dC| / (|C| - |dC|)``: the largest DDM change as the scattered phase turns.

    Exactly, ``DDM' - DDM = 2 k Re[(dS - (S / C) dC) / (C + dC)]``; with a common phase turning
    ``dS`` and ``dC`` its magnitude never exceeds this value, which is reached to first order in
    ``dC / C`` (module notes). Infinite when the object's carrier outweighs the array's.
    """
    csb_abs, d_abs = np.abs(csb), np.abs(d_csb)
    margin = np.where(csb_abs > d_abs, csb_abs - d_abs, np.nan)
    bend = 2.0 * abs(sbo_scale) * np.abs(d_sbo - (sbo / csb) * d_csb) / margin
    return np.where(np.isnan(margin), np.inf, bend)


def _ddm_change(c, s, d_csb, d_sbo, k: float) -> tuple[np.ndarray, np.ndarray]:
    """The exact DDM change (0 where swamped) and where the object's carrier outweighs the array's."""
    swamped = np.abs(d_csb) >= np.abs(c)
    with np.errstate(divide="ignore", invalid="ignore"):
        change = np.where(swamped, 0.0, ddm(c + d_csb, s + d_sbo, k) - ddm(c, s, k))
    return change, swamped


def disturbance(
    model: ArrayModel,
    receivers: PathReceivers,
    segments,
    obj: ObjectSpec,
    heading: str,
    u,
    w,
    refine: float = 1.0,
    terrain_share=None,
    figures: dict | None = None,
    spread=(HEADING_SPREAD_DEG, HEADING_SAMPLES),
    ground=None,
) -> tuple[np.ndarray, np.ndarray]:
    """95 % bend of the disturbance per segment (G, S) and the position's judged share (G,) at (u, w).

    The change of the DDM along the path (exact, no linearisation) measured by
    :func:`geo.radio.structure.structure_arrays` (module notes), infinite where the object's carrier
    outweighs the array's at a receiver of the segment; then judged by
    :mod:`geo.optics.disturbance_rule`: the bend share combined with the terrain's own
    (``terrain_share`` per segment, zero by default) by root sum of squares, and the steady shifts
    of the path angle and the sector in the far segments against the monitor limits. Each figure is
    the 95th percentile over the headings sampled about ``heading``
    (:func:`geo.optics.objects.heading_offsets_deg`; signed figures: of their magnitude, with the
    sign of the largest).

    Parameters
    ----------
    terrain_share : array_like, shape (S,), optional
        The terrain's own 95 % bend over the limit per segment.
    figures : dict, optional
        Filled with every figure per position (:func:`geo.optics.disturbance_rule.judged_figures`).
    spread : tuple of (float, int)
        Headings spread over ``+-spread[0]`` degrees, ``spread[1]`` samples (1: the exact heading).
    ground : geo.optics.object_ground.LocalGround, optional
        The DEM under the objects and their ground paths (one plane per position and segment for
        the receivers); None: the fitted plane.
    """
    shift = shift_receivers(receivers, segments, model.fields, lambda c, s: ddm(c, s, receivers.sbo_scale))
    r, q = receivers.points_m.shape[0], shift.before_threshold_m.size
    points = np.concatenate([receivers.points_m, shift.below_m, shift.above_m])
    blocks = None if ground is None else _segment_blocks(segments, receivers, shift)
    turns = heading_offsets_deg(*spread)
    d_csb, d_sbo = object_fields(model, obj, heading, u, w, points, refine, turns, ground, blocks)
    turns, count = d_csb.shape[:2]
    c, s = model.fields(points[r:])
    c, s = np.r_[receivers.csb, c], np.r_[receivers.sbo, s]
    change, swamped = _ddm_change(c, s, d_csb.reshape(turns * count, -1), d_sbo.reshape(turns * count, -1),
                                  receivers.sbo_scale)  # fmt: skip
    found = structure_arrays(segments, receivers.before_threshold_m, change[:, :r])
    per_segment = found.bend_95_ddm
    ratio = found.ratio_95.copy()
    for i in range(len(segments)):
        hit = swamped[:, :r][:, segments[i].contains(receivers.before_threshold_m)].any(axis=1)
        per_segment[hit, i] = np.inf
        ratio[hit, i] = np.inf
    shifts = steady_shifts(segments, receivers, change[:, :r], shift, change[:, r : r + q], change[:, r + q :])
    shifts["shift_share"] = np.where(swamped[:, r:].any(axis=1), np.inf, shifts["shift_share"])
    terrain = np.zeros(len(segments)) if terrain_share is None else np.asarray(terrain_share, float)
    judged = judged_figures(ratio, terrain, shifts)
    signed = ("angle_shift_deg", "sensitivity_change")
    judged = {k: _over_headings(v.reshape(turns, count), k in signed) for k, v in judged.items()}
    if figures is not None:
        figures.update(judged)
    return _over_headings(per_segment.reshape(turns, count, -1)), judged["judged_share"]


def _segment_blocks(segments, receivers: PathReceivers, shift) -> list[np.ndarray]:
    """Indices of the receivers (path, then below and above it) of each segment, the first containing one."""
    r, q = receivers.before_threshold_m.size, shift.before_threshold_m.size
    taken = np.zeros(r + 2 * q, dtype=bool)
    distance = np.r_[receivers.before_threshold_m, shift.before_threshold_m, shift.before_threshold_m]
    blocks = []
    for seg in segments:
        inside = seg.contains(distance) & ~taken
        taken |= inside
        blocks.append(np.flatnonzero(inside))
    blocks.append(np.flatnonzero(~taken))
    return [b for b in blocks if b.size]


def _over_headings(values: np.ndarray, signed: bool = False) -> np.ndarray:
    """The 95th percentile over the sampled headings (axis 0; linear between samples), inf kept.

    Signed values: the percentile of the magnitude, with the sign of the largest magnitude.
    """
    v = np.abs(values) if signed else values
    top = np.percentile(np.where(np.isinf(v), 1e300, v), 95.0, axis=0)
    top = np.where(top >= 1e299, np.inf, top)
    if not signed:
        return top
    largest = np.take_along_axis(values, np.nanargmax(np.abs(values), axis=0)[None], axis=0)[0]
    return np.sign(largest) * top


def cell_union(u, w, mask, step_m: float):
    """The union of square cells of side ``step_m`` centred on the selected positions (shapely)."""
    import shapely

    uu, ww = np.asarray(u)[mask], np.asarray(w)[mask]
    if uu.size == 0:
        return shapely.Polygon()
    h = step_m / 2.0
    cells = shapely.box(uu - h, ww - h, uu + h, ww + h)
    return shapely.union_all(cells).simplify(0.0)


def position_shares(model, receivers, segments, obj: ObjectSpec, heading: str, u, w, terrain=None, ground=None):
    """The disturbance at (u, w): bend per segment, judged share and the rule's figures (NaN or inf at the mast).

    The one call of :func:`disturbance` for the grid, the taxiways and the holding positions; ``terrain``
    the terrain's own share per segment, ``ground`` the DEM's local surface (:func:`disturbance`).
    """
    u, w = np.asarray(u, float), np.asarray(w, float)
    per_segment = np.full((u.size, len(segments)), np.nan)
    share = np.full(u.size, np.inf)
    figures: dict = {}
    free = ~_at_mast(obj, heading, model, u, w)
    if free.any():
        found: dict = {}
        per_segment[free], share[free] = disturbance(
            model, receivers, segments, obj, heading, u[free], w[free], 1.0, terrain, found, ground=ground
        )
        for name, values in found.items():
            figures.setdefault(name, np.full(u.size, np.nan))[free] = values
    return per_segment, share, figures


def coarse_grid_warnings(result, settings: AreaSpec, objects) -> list[str]:
    """Warnings where the grid spacing exceeds a share of an object's length or of the path zone's width."""
    from geo.units import format_length

    unit, step = result.spec.units, settings.grid_m
    out = []
    for obj in objects:
        if step > COARSE_OBJECT_SHARE * obj.length_m:
            out.append(
                f"{obj.name}: the grid spacing {format_length(step, unit, 1)} is above "
                f"{COARSE_OBJECT_SHARE:g} x the object's length {format_length(obj.length_m, unit, 1)}: its areas may "
                f"be missed or misshapen; set [areas] grid to at most "
                f"{format_length(COARSE_OBJECT_SHARE * obj.length_m, unit, 1)}"
            )
    widths = [z.shape.polygon.bounds[3] - z.shape.polygon.bounds[1] for z in result.zones if z.kind == "path"]
    if widths and step > COARSE_ZONE_SHARE * min(widths):
        width = min(widths)
        out.append(
            f"the grid spacing {format_length(step, unit, 1)} is above {COARSE_ZONE_SHARE:g} x the path zone's "
            f"width {format_length(width, unit, 1)}: set [areas] grid to at most "
            f"{format_length(COARSE_ZONE_SHARE * width, unit, 1)}"
        )
    return out


def area_objects(spec) -> tuple[ObjectSpec, ...]:
    """The objects whose areas are derived: the site file's (or the generic classes), then taxiway users.

    The design aircraft of the taxiways and holding positions whose code no object has.
    """
    from geo.optics.taxiways import object_for_code

    objects = tuple(spec.objects) or GENERIC_OBJECTS
    taxiway_codes = {t.name: t.code for t in spec.taxiways}
    codes = [t.code for t in spec.taxiways] + [h.code or taxiway_codes[h.taxiway] for h in spec.holding_positions]
    have = {o.code for o in objects}
    for code in dict.fromkeys(codes):
        if code not in have:
            objects += (object_for_code(code),)
    return objects


def _taxiways(result, objects, areas, position, settings):
    """The taxiways followed and the holding positions checked, with their findings (:mod:`geo.optics.taxiways`)."""
    from geo.optics.taxiways import check_holding, follow_taxiway, taxiway_findings

    spec = result.spec
    index = {o.code: k for k, o in reversed(list(enumerate(objects))) if o.code is not None}
    critical = {a.object_name: a.polygon for a in areas if a.kind == "critical"}

    def shares(code):
        return lambda heading, u, w: position(index[code], heading, u, w)[1]

    step = min(SAMPLE_STEP_M, settings.grid_m)
    taxiways = tuple(
        follow_taxiway(result, t, shares(t.code), critical[objects[index[t.code]].name], settings.critical_share, step)
        for t in spec.taxiways
    )
    by_name = {t.name: t for t in spec.taxiways}
    holds = []
    for h in spec.holding_positions:
        code = h.code or by_name[h.taxiway].code
        holds.append(check_holding(result, h, code, by_name.get(h.taxiway), shares(code), settings.critical_share))
    return taxiways, tuple(holds), tuple(taxiway_findings(taxiways, holds, spec.units))


def derive_areas(
    result, progress=None, receivers_count: int | None = None, workers: int | None = None, plan=None
) -> AreasResult:
    """Disturbance maps and derived areas for every object of a study's site, on grids grown until closed.

    Parameters
    ----------
    result : StudyResult
    progress : callable, optional
        ``progress(done, total)`` in position-headings, after each chunk (the total grows with the grid).
    receivers_count : int, optional
        Receivers on the designed path (default: at most 20 m apart, :func:`path_receivers`).
    workers : int, optional
        Threads (default: the processor count, at most 4).
    plan : callable, optional
        ``plan(positions, seconds)`` once, after a small timed first block: the position-headings of
        the first grid and an estimate of their time (:func:`geo.optics.area_grid.grow_grids`). [s]

    Returns
    -------
    AreasResult
    """
    spec = result.spec
    settings = spec.areas
    objects = area_objects(spec)
    segments = structure_segments(spec.category, result.rdh_m, spec.angle_deg)
    model = array_model(result)
    receivers = path_receivers(result, model, segments, receivers_count)

    terrain, terrain_source = terrain_shares(result.surface, segments)
    reach = settings.max_extent_m + 100.0  # the DEM's local surface over the largest grid and the ground before it
    ground = local_ground(result, model, (-reach, reach + 900.0, -reach, reach))

    def evaluate(k, heading, u, w):
        return position_shares(model, receivers, segments, objects[k], heading, u, w, terrain, ground)

    grids = grow_grids(
        initial_lattice(settings, result.mast.offset_m),
        [o.headings for o in objects],
        len(segments),
        evaluate,
        settings.sensitive_share,
        settings.max_extent_m,
        max(_PAIRS_PER_CHUNK // receivers.before_threshold_m.size, 1),
        workers or min(os.cpu_count() or 1, 4),
        progress,
        plan,
    )
    disturbances, areas = [], []
    warnings = coarse_grid_warnings(result, settings, objects)
    for obj, g in zip(objects, grids):
        d = _object_disturbance(obj, g, model)
        disturbances.append(d)
        edges = g.lattice.edge(d.ahead_m, d.toward_runway_m)
        for kind, limit in (("critical", settings.critical_share), ("sensitive", settings.sensitive_share)):
            inside = d.worst_share > limit
            open_sides = tuple(s for s in SIDES if (inside & edges[s]).any())
            areas.append(DerivedArea(obj.name, kind, cell_union(d.ahead_m, d.toward_runway_m, inside, settings.grid_m),
                                     limit, open_sides))  # fmt: skip
            if open_sides:
                warnings.append(_open_warning(obj.name, kind, open_sides, spec.units, settings.max_extent_m))
    source = "site file" if spec.objects else GENERIC_OBJECTS[0].source
    taxiways, holds, findings = _taxiways(result, objects, areas, evaluate, settings)
    on = "the DEM's local surface at each specular point" if ground is not None else "the fitted plane"
    rule = {"element": model.element, "terrain_share": tuple(map(float, terrain)), "terrain_source": terrain_source}
    rule["ground"] = on
    return AreasResult(result, settings, segments, receivers, disturbances, areas, source, rule=rule,
                       warnings=tuple(warnings), unions=union_areas(areas), taxiways=taxiways, holding_checks=holds,
                       findings=findings)  # fmt: skip


def union_areas(areas) -> tuple[DerivedArea, ...]:
    """Per kind, the union of the objects' areas: the design objects' area a planner paints."""
    import shapely

    out = []
    for kind in ("critical", "sensitive"):
        mine = [a for a in areas if a.kind == kind]
        if not mine:
            continue
        polygon = shapely.union_all([a.polygon for a in mine]).simplify(0.0)
        sides = tuple(s for s in SIDES if any(s in a.open_sides for a in mine))
        out.append(DerivedArea(UNION_NAME, kind, polygon, mine[0].share, sides))
    return tuple(out)


def _object_disturbance(obj: ObjectSpec, grid, model: ArrayModel) -> ObjectDisturbance:
    """One object's grid in the order ahead, then toward the runway, with its positions against the mast."""
    order = np.lexsort((grid.w, grid.u))
    u, w = grid.u[order], grid.w[order]
    at_mast = np.zeros(u.size, dtype=bool)
    for h in obj.headings:
        at_mast |= _at_mast(obj, h, model, u, w)
    return ObjectDisturbance(
        obj,
        u,
        w,
        at_mast,
        {h: grid.segment_ddm[h][order] for h in obj.headings},
        {h: grid.share[h][order] for h in obj.headings},
        grid.lattice.extent_m(),
        grid.rounds,
        {h: {name: v[order] for name, v in grid.figures.get(h, {}).items()} for h in obj.headings},
    )


def _open_warning(name: str, kind: str, sides, unit: str, max_extent_m: float) -> str:
    from geo.units import format_length

    where = ", ".join(SIDE_WORDS[s] for s in sides)
    return (
        f"{name}: the {kind} area stays open {where} at the largest extent of the grid, "
        f"{format_length(max_extent_m, unit, 0)} from the mast: it may go on beyond; raise [areas] max_extent"
    )
