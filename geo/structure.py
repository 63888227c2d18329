"""Path structure: the bends of the DDM along the approach and their 95 % amplitude per segment.

A bend is the DDM on the designed path minus its smoothed mean. The mean is a centred running
average over ``BEND_WINDOW_M`` of distance along the approach (the window shrinks at the ends of
the approach). The choice of a running mean over a fixed distance is ours: flight inspection
filters the recorded DDM with a low-pass filter set by the aircraft's speed (ICAO Annex 10 Vol I
Attachment C 2.1.5 ff., from memory; the filter constants are not at hand), and 500 m is about
7 s of flight at 140 kt, common practice, no source. The 95 % amplitude of a segment is the 95th
percentile of ``|bend|`` over its length (samples interpolated to a uniform 5 m step), compared
with the Annex 10 Vol I 3.1.5.4 limits of :mod:`geo.structure_limits` (from memory, labelled so).

Distances are before the threshold along the centre line (positive on the approach). [m]

References
----------
.. [1] ICAO Annex 10, Volume I, 3.1.5.4 (glide path structure, 95 % probability) and Attachment
       C 2.1.5 (evaluation of bends); from memory, to be confirmed against the edition in force.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from geo.structure_limits import Segment

__all__ = ["BEND_WINDOW_M", "BEND_FILTER", "SegmentBends", "bends", "segment_bends"]

#: Length of the running mean that the bends are taken about. [m]
BEND_WINDOW_M = 500.0
#: Uniform step the DDM is interpolated to. [m]
STEP_M = 5.0
BEND_FILTER = (
    "bends = DDM minus its centred running mean over 500 m of approach (about 7 s at 140 kt); "
    "our choice, common practice, no source: flight inspection filters by the aircraft's speed "
    "(ICAO Annex 10 Vol I Attachment C, from memory)"
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
        The smallest limit inside the segment.
    bend_95_ddm : float
        95th percentile of ``|bend|`` over the segment's length.
    passed : bool
        Whether the 95th percentile of ``|bend| / limit`` is at most 1.
    """

    segment: str
    from_m: float
    to_m: float
    limit_ddm: float
    bend_95_ddm: float
    passed: bool


def bends(distance_m, ddm, window_m: float = BEND_WINDOW_M) -> tuple[np.ndarray, np.ndarray]:
    """Bends on a uniform grid: the DDM minus its centred running mean.

    Parameters
    ----------
    distance_m : array_like
        Distances before the threshold of the samples (any order). [m]
    ddm : array_like
        DDM at those points.
    window_m : float
        Length of the running mean. [m]

    Returns
    -------
    grid_m : numpy.ndarray
        Uniform distances before the threshold, increasing. [m]
    bend : numpy.ndarray
        DDM minus its running mean there.
    """
    d = np.asarray(distance_m, float)
    order = np.argsort(d)
    d, v = d[order], np.asarray(ddm, float)[order]
    grid = np.arange(d[0], d[-1] + STEP_M / 2, STEP_M)
    values = np.interp(grid, d, v)
    half = max(int(round(window_m / STEP_M / 2)), 1)
    csum = np.concatenate([[0.0], np.cumsum(values)])
    i = np.arange(grid.size)
    lo, hi = np.maximum(i - half, 0), np.minimum(i + half + 1, grid.size)
    mean = (csum[hi] - csum[lo]) / (hi - lo)
    return grid, values - mean


def segment_bends(segments: list[Segment], grid_m: np.ndarray, bend: np.ndarray) -> list[SegmentBends]:
    """95 % bend amplitude per segment against the limits [1]_."""
    out = []
    for seg in segments:
        inside = seg.contains(grid_m)
        if not inside.any():
            continue
        limit = seg.limit_at(grid_m[inside])
        amplitude = np.abs(bend[inside])
        b95 = float(np.percentile(amplitude, 95.0))
        ratio95 = float(np.percentile(amplitude / limit, 95.0))
        out.append(SegmentBends(seg.name, seg.from_m, seg.to_m, float(np.min(limit)), b95, ratio95 <= 1.0))
    return out
