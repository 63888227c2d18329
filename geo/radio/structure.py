"""Path structure: the bends of the DDM along the approach and their 95 % amplitude per segment.

A bend is the DDM on the designed path minus its smoothed mean. The mean is a centred local
quadratic fit over ``BEND_WINDOW_M`` of distance along the approach (a Savitzky-Golay filter [2]_;
at the ends of the approach the quadratic of the first and last windows): unlike a running
average it follows the smooth rise of the DDM on the straight path near the threshold (where the
real path curves away from it) instead of counting it as a bend. The choice of filter and length
is ours: flight inspection filters the recorded DDM with a low-pass filter set by the aircraft's
speed (ICAO Annex 10 Vol I Attachment C 2.1.5 ff., from memory; the filter constants are not at
hand), and 500 m is about 7 s of flight at 140 kt, common practice, no source. The 95 % amplitude
of a segment is the 95th percentile of ``|bend|`` over its length (samples interpolated to a uniform 5 m step), compared
with the Annex 10 Vol I 3.1.5.4 limits of :mod:`geo.radio.structure_limits` (from memory, labelled so).

Distances are before the threshold along the centre line (positive on the approach). [m]

References
----------
.. [1] ICAO Annex 10, Volume I, 3.1.5.4 (glide path structure, 95 % probability) and Attachment
       C 2.1.5 (evaluation of bends); from memory, to be confirmed against the edition in force.
.. [2] Savitzky, A. and Golay, M. J. E., "Smoothing and differentiation of data by simplified
       least squares procedures", Analytical Chemistry 36 (1964) 1627-1639.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from geo.radio.structure_limits import Segment

__all__ = ["BEND_WINDOW_M", "BEND_FILTER", "SegmentBends", "bends", "segment_bends", "smoothed"]

#: Length of the running mean that the bends are taken about. [m]
BEND_WINDOW_M = 500.0
#: Uniform step the DDM is interpolated to. [m]
STEP_M = 5.0
BEND_FILTER = (
    "bends = DDM minus its centred local quadratic fit over 500 m of approach (Savitzky-Golay; about "
    "7 s at 140 kt); our choice, common practice, no source: flight inspection filters by the "
    "aircraft's speed (ICAO Annex 10 Vol I Attachment C, from memory)"
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


def smoothed(values: np.ndarray, half: int) -> np.ndarray:
    """Local quadratic least-squares fit over ``2 half + 1`` uniform samples (Savitzky-Golay) [2]_.

    The first and last ``half`` samples take the quadratic fitted to the first and last window.
    """
    n = values.size
    if n < 2 * half + 1:
        x = np.arange(n, dtype=float)
        return np.polyval(np.polyfit(x, values, min(2, n - 1)), x)
    x = np.arange(-half, half + 1, dtype=float)
    vander = np.vander(x, 3, increasing=True)
    weights = np.linalg.pinv(vander)[0]  # the fitted value at the centre
    out = np.empty(n)
    out[half : n - half] = np.convolve(values, weights[::-1], mode="valid")
    ends = np.arange(2 * half + 1, dtype=float)
    out[:half] = np.polyval(np.polyfit(ends, values[: 2 * half + 1], 2), ends[:half])
    out[n - half :] = np.polyval(np.polyfit(ends, values[n - 2 * half - 1 :], 2), ends[half + 1 :])
    return out


def bends(distance_m, ddm, window_m: float = BEND_WINDOW_M) -> tuple[np.ndarray, np.ndarray]:
    """Bends on a uniform grid: the DDM minus its smoothed mean (:func:`smoothed`).

    Parameters
    ----------
    distance_m : array_like
        Distances before the threshold of the samples (any order). [m]
    ddm : array_like
        DDM at those points.
    window_m : float
        Length of the smoothing window. [m]

    Returns
    -------
    grid_m : numpy.ndarray
        Uniform distances before the threshold, increasing. [m]
    bend : numpy.ndarray
        DDM minus its smoothed mean there.
    """
    d = np.asarray(distance_m, float)
    order = np.argsort(d)
    d, v = d[order], np.asarray(ddm, float)[order]
    grid = np.arange(d[0], d[-1] + STEP_M / 2, STEP_M)
    values = np.interp(grid, d, v)
    half = max(int(round(window_m / STEP_M / 2)), 1)
    return grid, values - smoothed(values, half)


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
