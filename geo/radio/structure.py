"""Path structure as flight inspection measures it: bends about the mean path of each segment.

Flight inspection judges the structure of a segment about the mean path over that segment, not
about a short running fit (from memory of ICAO Annex 10 Vol I Attachment C 2.1.5 ff. and of the
flight-inspection practice it describes; we do not have the text at hand: confirm against the
edition in force and the flight-inspection manual). Here, per approach segment of
:mod:`geo.radio.structure_limits`:

1. the DDM, linear between its samples, is interpolated to a uniform grid along the approach and
   passed through the recorder's low-pass filter in the order flown (coverage limit first;
   :mod:`geo.radio.bend_filter`, length ``filter_m``);
2. the reference is a straight line fitted by least squares to the filtered DDM over the segment
   for the far segments (coverage limit to ILS point A, A to B: the segments that end at or beyond
   point B, where the mean path may slope), and the mean of the filtered DDM over the segment
   nearer the threshold (B to C, or B to the ILS reference datum for Categories II and III);
3. the bend is the filtered DDM minus that reference, and the segment's 95 % amplitude the 95th
   percentile of ``|bend|`` over its length, against the limits of Annex 10 Vol I 3.1.5.4 (from
   memory, labelled so in :mod:`geo.radio.structure_limits`).

Where the caller gives the undisturbed DDM (image theory over the fitted plane), the mean path is
taken to follow the undisturbed path's own smooth course: the rule runs on the difference of the
DDM from the undisturbed DDM, so that the curvature of the path near the threshold over a plane
(which the straight designed path's DDM shows, and which a mean over B-C would count) is no bend.

A steady shift or slope of the DDM over a segment is thus no bend; a bend of period ``P`` keeps
:func:`geo.radio.bend_filter.kept_fraction` of its amplitude, less what the line or mean over the
segment follows of it (most of it once ``P`` approaches the segment's length).

Beside the bend, the raw 95 % departure: the 95th percentile over the segment of ``|DDM -
undisturbed DDM|`` (unfiltered, no reference removed), the undisturbed DDM given by the caller (for
example image theory's DDM on the designed path). It shows what the reference took away.

**Sampling.** The samples may be spaced unevenly; inside a segment they should be at most
``MAX_GAP_M`` (20 m) apart. A coarser segment is still evaluated, but its ``well_sampled`` flag is
false (the linear interpolation loses short bends), and so is that of a segment the samples do
not cover to its ends.

Distances are before the threshold along the centre line (positive on the approach). [m]

References
----------
.. [1] ICAO Annex 10, Volume I, 3.1.5.4 (glide path structure, 95 % probability) and Attachment
       C 2.1.5 ff. (evaluation of bends); from memory, to be confirmed against the edition in force.
.. [2] Press, W. H. et al., *Numerical Recipes*, 3rd ed., Cambridge University Press, 2007,
       sec. 15.2 (fitting data to a straight line by least squares).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import NamedTuple

import numpy as np

from geo.radio.bend_filter import FILTER_LENGTH_M, FILTER_NOTE, GRID_STEP_M, MAX_GAP_M, low_pass
from geo.radio.structure_limits import POINT_B_M, Segment

__all__ = [
    "BEND_FILTER",
    "SegmentBends",
    "Structure",
    "StructureArrays",
    "reference_kind",
    "structure_arrays",
    "segment_structure",
]

BEND_FILTER = (
    "bends as flight inspection measures them (from memory of ICAO Annex 10 Vol I Attachment C, text not at "
    "hand): per segment, the filtered DDM minus its straight-line fit (coverage limit to A, A to B) or its mean "
    "(B to C, B to the datum); " + FILTER_NOTE
)


@dataclass(frozen=True)
class SegmentBends:
    """Bends of one approach segment against its limit.

    Attributes
    ----------
    segment : str
    from_m, to_m : float
        Distances before the threshold. [m]
    limit_ddm : float
        The smallest limit inside the segment. [DDM]
    bend_95_ddm : float
        95th percentile of ``|bend|`` over the segment's length. [DDM]
    passed : bool
        Whether the 95th percentile of ``|bend| / limit`` is at most 1.
    departure_95_ddm : float or None
        95th percentile of ``|DDM - undisturbed DDM|`` over the segment (None without an
        undisturbed DDM). [DDM]
    reference : {"line", "mean"}
        What the bends are taken about.
    largest_gap_m : float
        Largest gap between the samples over the segment (an end not reached counts). [m]
    well_sampled : bool
        ``largest_gap_m <= MAX_GAP_M``.
    """

    segment: str
    from_m: float
    to_m: float
    limit_ddm: float
    bend_95_ddm: float
    passed: bool
    departure_95_ddm: float | None
    reference: str
    largest_gap_m: float
    well_sampled: bool


class StructureArrays(NamedTuple):
    """The structure of many DDM series on the same samples (rows), per segment (columns).

    ``bend_95_ddm``, ``ratio_95``, ``departure_95_ddm``: shape (..., S), NaN for a segment without
    grid points (``departure_95_ddm`` NaN without an undisturbed DDM); ``largest_gap_m``: (S,);
    ``grid_m``: (N,), increasing; ``bend_ddm``: (..., N), NaN outside every segment.
    """

    bend_95_ddm: np.ndarray
    ratio_95: np.ndarray
    departure_95_ddm: np.ndarray
    largest_gap_m: np.ndarray
    grid_m: np.ndarray
    bend_ddm: np.ndarray


class Structure(NamedTuple):
    """One DDM series: the segments' verdicts, and the bends on a uniform grid for plots."""

    segments: list[SegmentBends]
    grid_m: np.ndarray
    bend_ddm: np.ndarray


def reference_kind(segment: Segment) -> str:
    """``"line"`` for a segment that ends at or beyond ILS point B, ``"mean"`` nearer the threshold [1]_."""
    return "line" if segment.to_m >= POINT_B_M - 1e-6 else "mean"


def _interp_rows(x_new: np.ndarray, x: np.ndarray, values: np.ndarray) -> np.ndarray:
    """Linear interpolation of every row of ``values`` (along the last axis) from increasing ``x`` to ``x_new``."""
    j = np.clip(np.searchsorted(x, x_new, side="right") - 1, 0, x.size - 2)
    t = (x_new - x[j]) / (x[j + 1] - x[j])
    return values[..., j] * (1.0 - t) + values[..., j + 1] * t


def _largest_gap_m(d: np.ndarray, seg: Segment) -> float:
    """Largest gap between increasing samples ``d`` over the segment, the uncovered ends included. [m]"""
    lo, hi = np.clip(d[:-1], seg.to_m, seg.from_m), np.clip(d[1:], seg.to_m, seg.from_m)
    gap = float(np.max(hi - lo, initial=0.0))
    return max(gap, float(d[0]) - seg.to_m, seg.from_m - float(d[-1]), 0.0)


def _recorded(segments, d: np.ndarray, v: np.ndarray, filter_m: float):
    """The grid in the order flown, the DDM interpolated to it, and the filtered DDM.

    The grid runs from the farthest sample to the nearest one in uniform pieces of at most
    ``GRID_STEP_M`` between the segment ends (which are nodes, so each segment is evaluated over
    its exact length); the filter runs on through the pieces, each continuing the last.
    """
    ends = [e for seg in segments for e in (seg.from_m, seg.to_m) if d[0] < e < d[-1]]
    breaks = np.unique(np.concatenate([[d[0], d[-1]], ends]))[::-1]
    pieces = []
    for hi, lo in zip(breaks[:-1], breaks[1:]):
        count = max(int(np.ceil((hi - lo) / GRID_STEP_M)), 1) + 1
        pieces.append(np.linspace(hi, lo, count))
    raw_parts, recorded_parts = [], []
    for k, piece in enumerate(pieces):
        raw = _interp_rows(piece, d, v)
        step = (piece[0] - piece[-1]) / (piece.size - 1)
        initial = None if k == 0 else recorded_parts[-1][..., -1:]
        rec = low_pass(raw, step, filter_m, initial)
        keep = slice(None) if k == 0 else slice(1, None)  # a piece starts on the last one's end
        raw_parts.append(raw[..., keep])
        recorded_parts.append(rec[..., keep])
    flown = np.concatenate([pieces[0]] + [p[1:] for p in pieces[1:]])
    return flown, np.concatenate(raw_parts, axis=-1), np.concatenate(recorded_parts, axis=-1)


def _about_reference(x: np.ndarray, y: np.ndarray, kind: str) -> np.ndarray:
    """``y`` minus its least-squares line in ``x`` (or its mean), along the last axis [2]_."""
    if kind == "mean" or x.size < 2:
        return y - y.mean(axis=-1, keepdims=True)
    xc = x - x.mean()
    slope = (y * xc).sum(axis=-1, keepdims=True) / float((xc * xc).sum())  # [2], eq. 15.2.6, centred
    return y - y.mean(axis=-1, keepdims=True) - slope * xc


def structure_arrays(
    segments: list[Segment],
    distance_m,
    ddm,
    undisturbed_ddm=None,
    filter_m: float = FILTER_LENGTH_M,
) -> StructureArrays:
    """95 % bends, their share of the limit and the raw departure, per segment, of DDM series [1]_.

    Parameters
    ----------
    segments : list of Segment
    distance_m : array_like, shape (R,)
        Distances before the threshold of the samples, any order and spacing, no repeats (at least
        2); inside a segment at most ``MAX_GAP_M`` apart for a well-sampled verdict. [m]
    ddm : array_like, shape (..., R)
        DDM at those samples; leading axes are independent series.
    undisturbed_ddm : array_like, shape (..., R), optional
        The undisturbed DDM at the samples, for the raw departure; given, the bends are measured on
        the difference from it (see the module notes).
    filter_m : float
        Length of the recorder's filter (:mod:`geo.radio.bend_filter`; 0: none). [m]

    Returns
    -------
    StructureArrays
    """
    d = np.asarray(distance_m, float)
    order = np.argsort(d)
    d = d[order]
    v = np.asarray(ddm, float)[..., order]
    flown, raw, recorded = _recorded(segments, d, v, filter_m)
    departure = None
    if undisturbed_ddm is not None:
        base = np.broadcast_to(np.asarray(undisturbed_ddm, float), np.shape(np.asarray(ddm)))[..., order]
        departure = np.abs(raw - _interp_rows(flown, d, base))
        # The mean path follows the undisturbed path's own course (its curvature near the threshold
        # over a plane is no bend): the rule runs on the DDM's difference from the undisturbed DDM.
        recorded = _recorded(segments, d, v - base, filter_m)[2]
    shape = raw.shape[:-1] + (len(segments),)
    b95, r95, dep95 = np.full(shape, np.nan), np.full(shape, np.nan), np.full(shape, np.nan)
    gaps = np.array([_largest_gap_m(d, seg) for seg in segments])
    bend = np.full(raw.shape, np.nan)
    for i in range(len(segments) - 1, -1, -1):  # where segments share an end, the first one's bend is drawn
        seg = segments[i]
        inside = seg.contains(flown)
        if not inside.any():
            continue
        about = _about_reference(flown[inside], recorded[..., inside], reference_kind(seg))
        bend[..., inside] = about
        b95[..., i] = np.percentile(np.abs(about), 95.0, axis=-1)
        r95[..., i] = np.percentile(np.abs(about) / seg.limit_at(flown[inside]), 95.0, axis=-1)
        if departure is not None:
            dep95[..., i] = np.percentile(departure[..., inside], 95.0, axis=-1)
    return StructureArrays(b95, r95, dep95, gaps, flown[::-1].copy(), bend[..., ::-1].copy())


def segment_structure(
    segments: list[Segment],
    distance_m,
    ddm,
    undisturbed_ddm=None,
    filter_m: float = FILTER_LENGTH_M,
) -> Structure:
    """The structure of one DDM series along the approach, per segment, as flight inspection measures it [1]_.

    Parameters
    ----------
    segments : list of Segment
        From :func:`geo.radio.structure_limits.structure_segments`.
    distance_m : array_like, shape (R,)
        Distances before the threshold of the samples (any order, uneven spacing allowed; at most
        ``MAX_GAP_M`` = 20 m apart inside a segment, else its ``well_sampled`` is false). [m]
    ddm : array_like, shape (R,)
        DDM at those samples.
    undisturbed_ddm : array_like, shape (R,), optional
        The undisturbed DDM there (e.g. image theory on the designed path), for ``departure_95_ddm``;
        given, the bends are measured on the difference from it (see the module notes).
    filter_m : float
        Length of the recorder's filter; default ``FILTER_LENGTH_M`` (25.7 m, from memory, see
        :mod:`geo.radio.bend_filter`). [m]

    Returns
    -------
    Structure
        ``segments``: a :class:`SegmentBends` per segment the samples reach; ``grid_m``: uniform
        distances before the threshold, increasing, step at most ``GRID_STEP_M`` [m];
        ``bend_ddm``: the bends there (NaN outside the segments).
    """
    arrays = structure_arrays(segments, distance_m, np.asarray(ddm, float), undisturbed_ddm, filter_m)
    out = []
    for i, seg in enumerate(segments):
        if np.isnan(arrays.bend_95_ddm[i]):
            continue
        dep = None if undisturbed_ddm is None else float(arrays.departure_95_ddm[i])
        gap = float(arrays.largest_gap_m[i])
        limit = float(min(seg.limit_from_ddm, seg.limit_to_ddm))
        out.append(
            SegmentBends(
                seg.name,
                seg.from_m,
                seg.to_m,
                limit,
                float(arrays.bend_95_ddm[i]),
                bool(arrays.ratio_95[i] <= 1.0),
                dep,
                reference_kind(seg),
                gap,
                gap <= MAX_GAP_M,
            )
        )
    return Structure(out, arrays.grid_m, arrays.bend_ddm)
