"""The DEM's cell-scale noise taken out of the geometry, to be counted as roughness instead.

A DEM's posts carry measurement noise of a few centimetres that the bilinear surface turns into
geometry: facets finer than a cell tilt with it, and at grazing incidence its bumps cast shadows.
Physically that noise is roughness: its coherent effect on the reflected wave is the Ament factor
(:func:`geo.radio.reflection.coherent_roughness_factor`), about 1 at glide path grazing angles. So
the surface the physical optics integrates over is the DEM with that noise shrunk away:

- the DEM read on a lattice of half its cell over the points asked for (bilinear between its
  posts, as everywhere), one call of the wrapped heights;
- the smooth part ``s``: that lattice convolved with a Gaussian of standard deviation
  ``SMOOTHING_CELLS`` DEM cells (the ground's own shape at the scale of a few cells stays in
  ``s``; most of the posts' independent noise is averaged away: about ``1 / (2 sqrt(pi) 2)`` of
  it is left for 2 cells);
- the detail ``r = z - s``, whose noise level ``sigma`` is estimated robustly from the median
  absolute deviation, ``sigma = MAD / 0.6745`` [1]_ (a ditch or a bank occupies few samples and
  hardly moves the median);
- the geometry ``s + shrink(r)``, with the soft threshold ``shrink(r) = sign(r) max(|r| - t, 0)``
  at ``t = THRESHOLD_SIGMAS sigma`` [1]_: detail well above the noise (a 1.6 m ditch) is kept
  within ``t``, detail at the noise level is removed, so the geometry departs from the DEM by at
  most ``t`` plus the noise. The RMS of what is removed is the roughness the Ament factor is
  given;
- the heights asked for, read bilinearly on that lattice [3]_.

A detail level above ``NOISE_LIMIT_M``, or a DEM cell above ``CELL_LIMIT_M``, is not taken as
noise: on a coarse DEM, or on rough ground, the detail at the cell scale is the ground's own
shape, and the heights are returned as they are (``removed_rms_m`` 0).

Coordinates and heights are those of the callable it wraps. [m]

References
----------
.. [1] Donoho, D. L. and Johnstone, I. M., "Ideal spatial adaptation by wavelet shrinkage",
       Biometrika 81 (1994) 425-455 (soft thresholding; the noise level from the median absolute
       deviation over 0.6745).
.. [2] Ament, W. S., "Toward a theory of reflection by a rough surface", Proc. IRE 41 (1953)
       142-146 (the coherent reflection of a rough surface).
.. [3] Press, W. H. et al., *Numerical Recipes*, 3rd ed., 2007, sec. 3.6 (bilinear
       interpolation); sec. 13.1 (convolution with a Gaussian, separable in two dimensions).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

__all__ = ["CELL_LIMIT_M", "NOISE_LIMIT_M", "THRESHOLD_SIGMAS", "Denoised", "denoise_heights"]

#: Soft threshold in noise standard deviations (3: 99.7 % of Gaussian noise lies within it).
THRESHOLD_SIGMAS = 3.0
#: Spacing of the lattice the DEM is read on, in DEM cells.
LATTICE_CELLS = 0.5
#: Standard deviation of the Gaussian that makes the smooth part, in DEM cells.
SMOOTHING_CELLS = 2.0
#: Largest noise level taken as noise: a detail level above it is the ground's own shape (a coarse
#: DEM of rough ground), kept as geometry. 0.1 m: 2 k sigma sin psi = 0.07 at 3 deg and 335 MHz,
#: where the Ament factor is still 0.998 (our choice). [m]
NOISE_LIMIT_M = 0.10
#: Coarsest DEM cell whose noise is shrunk away. The posts' noise tilts facets finer than the cell;
#: on a coarser DEM the cell-scale detail is the ground's shape (our choice). [m]
CELL_LIMIT_M = 10.0
#: MAD of a Gaussian over its standard deviation [1]_.
_MAD_PER_SIGMA = 0.6745


def _convolve_axis(values: np.ndarray, taps: np.ndarray, axis: int) -> np.ndarray:
    """``values`` convolved with symmetric ``taps`` along ``axis``, zeros beyond the edges.

    A sum of shifted copies (numpy only, so that a study does not import scipy.ndimage, about
    0.3 s, for one small separable filter).
    """
    half = taps.size // 2
    n = values.shape[axis]
    padding = [(0, 0)] * values.ndim
    padding[axis] = (half, half)
    padded = np.pad(values, padding)
    out = np.zeros_like(values, dtype=float)
    before = (slice(None),) * axis
    for k, tap in enumerate(taps):
        out += tap * padded[before + (slice(k, k + n),)]
    return out


def _gaussian_smooth(values: np.ndarray, sigma_steps: float) -> np.ndarray:
    """Separable Gaussian convolution of a 2-D lattice, NaN-aware (normalised by the valid weights) [3]_."""
    half = int(math.ceil(3.0 * sigma_steps))
    taps = np.exp(-0.5 * (np.arange(-half, half + 1) / sigma_steps) ** 2)
    valid = np.isfinite(values)
    filled = np.where(valid, values, 0.0)
    weight = valid.astype(float)
    for axis in (0, 1):
        filled = _convolve_axis(filled, taps, axis)
        weight = _convolve_axis(weight, taps, axis)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(valid & (weight > 0.0), filled / weight, np.nan)


def _bilinear(lu, lw, lattice, u, w):
    """``lattice`` (len(lu), len(lw)) read bilinearly at (u, w) [3]_."""
    fu = np.clip((u - lu[0]) / (lu[1] - lu[0]), 0.0, lu.size - 1.000001)
    fw = np.clip((w - lw[0]) / (lw[1] - lw[0]), 0.0, lw.size - 1.000001)
    i, j = fu.astype(int), fw.astype(int)
    a, b = fu - i, fw - j
    return (
        lattice[i, j] * (1 - a) * (1 - b)
        + lattice[i + 1, j] * a * (1 - b)
        + lattice[i, j + 1] * (1 - a) * b
        + lattice[i + 1, j + 1] * a * b
    )


@dataclass
class Denoised:
    """A heights callable with the cell-scale noise shrunk away (see the module notes).

    Attributes
    ----------
    heights : callable
        The wrapped ``heights(u, w) -> Z`` (NaN off the DEM). [m]
    cell_m : float
        DEM cell: the lattice is ``LATTICE_CELLS`` of it, the smoothing ``SMOOTHING_CELLS`` of it. [m]
    noise_sigma_m : float or None
        The noise level estimated at the first call (kept for every later call, so that every
        grid sees the same surface). [m]
    removed_rms_m : float or None
        RMS of what the first call removed: the roughness for the Ament factor. [m]

    Each lattice made is kept with the box of the points it was made for: points inside a kept
    box are read from it (every grid of one prediction inside the first one's box sees the same
    surface, made once).
    """

    heights: object
    cell_m: float
    noise_sigma_m: float | None = None
    removed_rms_m: float | None = None
    _lattices: list = field(default_factory=list, repr=False)

    def _as_given(self, u: np.ndarray, w: np.ndarray) -> np.ndarray:
        """The heights as they are: the cell-scale detail is the ground's own (see the module notes). [m]"""
        self.noise_sigma_m = self.noise_sigma_m or 0.0
        self.removed_rms_m = 0.0
        return np.asarray(self.heights(u.ravel(), w.ravel()), float).reshape(u.shape)

    def __call__(self, u_m, w_m) -> np.ndarray:
        """Heights with the noise shrunk away: ``s + shrink(z - s)``, read on the lattice. [m]"""
        u, w = np.broadcast_arrays(np.asarray(u_m, float), np.asarray(w_m, float))
        if u.size == 0:
            return np.zeros(u.shape)
        if self.cell_m > CELL_LIMIT_M or (self.noise_sigma_m or 0.0) > NOISE_LIMIT_M:
            return self._as_given(u, w)
        box = (float(np.min(u)), float(np.max(u)), float(np.min(w)), float(np.max(w)))
        for held, lu, lw, lattice in self._lattices:  # a lattice made for a box that holds these points
            if held[0] <= box[0] and box[1] <= held[1] and held[2] <= box[2] and box[3] <= held[3]:
                return _bilinear(lu, lw, lattice, u, w)
        step = self.cell_m * LATTICE_CELLS
        sigma_steps = SMOOTHING_CELLS * self.cell_m / step
        margin = (math.ceil(3.0 * sigma_steps) + 2) * step
        lu = np.arange(np.min(u) - margin, np.max(u) + margin + step, step)
        lw = np.arange(np.min(w) - margin, np.max(w) + margin + step, step)
        uu, ww = np.meshgrid(lu, lw, indexing="ij")
        raw = np.asarray(self.heights(uu.ravel(), ww.ravel()), float).reshape(uu.shape)
        smooth = _gaussian_smooth(raw, sigma_steps)
        detail = raw - smooth
        inner = np.ix_((lu >= np.min(u)) & (lu <= np.max(u)), (lw >= np.min(w)) & (lw <= np.max(w)))
        if detail[inner].size == 0:
            inner = np.ix_(np.ones(lu.size, bool), np.ones(lw.size, bool))
        finite = detail[inner][np.isfinite(detail[inner])]  # the statistics inside the points' box, not its margin
        if self.noise_sigma_m is None:
            mad = float(np.median(np.abs(finite - np.median(finite)))) if finite.size else 0.0
            self.noise_sigma_m = mad / _MAD_PER_SIGMA
        if self.noise_sigma_m > NOISE_LIMIT_M:
            return self._as_given(u, w)
        t = THRESHOLD_SIGMAS * self.noise_sigma_m
        kept = np.sign(detail) * np.maximum(np.abs(detail) - t, 0.0)
        if self.removed_rms_m is None:
            removed = (detail - kept)[inner]
            removed = removed[np.isfinite(removed)]
            self.removed_rms_m = float(np.sqrt(np.mean(removed**2))) if removed.size else 0.0
        self._lattices.append((box, lu, lw, smooth + kept))
        return _bilinear(lu, lw, smooth + kept, u, w)


def denoise_heights(heights, cell_m: float) -> Denoised:
    """Wrap ``heights(u, w)`` so that its cell-scale noise is shrunk away (see the module notes).

    Parameters
    ----------
    heights : callable
        ``heights(u, w) -> Z`` for arrays of points (NaN off the DEM). [m]
    cell_m : float
        DEM cell. [m]

    Returns
    -------
    Denoised
        Callable like ``heights``; its noise level and removed RMS are set at its first call.

    Examples
    --------
    A plane is smooth: nothing is removed.

    >>> d = denoise_heights(lambda u, w: 0.01 * np.asarray(u) + 0.02 * np.asarray(w), 5.0)
    >>> z = d(np.arange(0.0, 50.0, 2.5), np.zeros(20))
    >>> bool(np.allclose(z, 0.01 * np.arange(0.0, 50.0, 2.5))), d.removed_rms_m < 1e-12
    (True, True)
    """
    return Denoised(heights, float(cell_m))
