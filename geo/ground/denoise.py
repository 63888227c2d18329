"""The DEM's cell-scale noise taken out of the geometry, to be counted as roughness instead.

A DEM's posts carry measurement noise of a few centimetres that the bilinear surface turns into
geometry: facets finer than a cell tilt with it, and at grazing incidence its bumps cast shadows.
Physically that noise is roughness: its coherent effect on the reflected wave is the Ament factor
(:func:`geo.radio.reflection.coherent_roughness_factor`), about 1 at glide path grazing angles. So
the surface the physical optics integrates over is the DEM with that noise shrunk away:

- the smooth part ``s``: the DEM averaged with binomial weights (1, 2, 1) / 4 along and across at
  one DEM cell on either side (a Gaussian of standard deviation ``cell / sqrt(2)``);
- the detail ``r = z - s``, whose noise level ``sigma`` is estimated robustly from the median
  absolute deviation, ``sigma = MAD / 0.6745`` [1]_ (a ditch or a bank occupies few samples and
  hardly moves the median);
- the geometry ``s + shrink(r)``, with the soft threshold ``shrink(r) = sign(r) max(|r| - t, 0)``
  at ``t = THRESHOLD_SIGMAS sigma`` [1]_: detail well above the noise (a 1.6 m ditch) is kept
  within ``t``, detail at the noise level is removed. The RMS of what is removed is the
  roughness the Ament factor is given.

Coordinates and heights are those of the callable it wraps. [m]

References
----------
.. [1] Donoho, D. L. and Johnstone, I. M., "Ideal spatial adaptation by wavelet shrinkage",
       Biometrika 81 (1994) 425-455 (soft thresholding; the noise level from the median absolute
       deviation over 0.6745).
.. [2] Ament, W. S., "Toward a theory of reflection by a rough surface", Proc. IRE 41 (1953)
       142-146 (the coherent reflection of a rough surface).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["THRESHOLD_SIGMAS", "Denoised", "denoise_heights"]

#: Soft threshold in noise standard deviations (3: 99.7 % of Gaussian noise lies within it).
THRESHOLD_SIGMAS = 3.0
#: MAD of a Gaussian over its standard deviation [1]_.
_MAD_PER_SIGMA = 0.6745
_BINOMIAL = ((-1.0, 0.25), (0.0, 0.5), (1.0, 0.25))


@dataclass
class Denoised:
    """A heights callable with the cell-scale noise shrunk away (see the module notes).

    Attributes
    ----------
    heights : callable
        The wrapped ``heights(u, w) -> Z`` (NaN off the DEM). [m]
    cell_m : float
        DEM cell: the smoothing step. [m]
    noise_sigma_m : float or None
        The noise level estimated at the first call (kept for every later call, so that every
        grid sees the same surface). [m]
    removed_rms_m : float or None
        RMS of what the first call removed: the roughness for the Ament factor. [m]
    """

    heights: object
    cell_m: float
    noise_sigma_m: float | None = None
    removed_rms_m: float | None = None

    def smooth(self, u_m, w_m) -> np.ndarray:
        """The binomial average at one cell either way along and across. [m]"""
        u, w = np.asarray(u_m, float), np.asarray(w_m, float)
        out = np.zeros(np.broadcast(u, w).shape)
        for du, a in _BINOMIAL:
            for dw, b in _BINOMIAL:
                out += a * b * np.asarray(self.heights(u + du * self.cell_m, w + dw * self.cell_m), float)
        return out

    def __call__(self, u_m, w_m) -> np.ndarray:
        """Heights with the noise shrunk away: ``s + shrink(z - s)``. [m]"""
        raw = np.asarray(self.heights(u_m, w_m), float)
        smooth = self.smooth(u_m, w_m)
        detail = raw - smooth
        if self.noise_sigma_m is None:
            finite = detail[np.isfinite(detail)]
            if finite.size == 0:
                self.noise_sigma_m, self.removed_rms_m = 0.0, 0.0
            else:
                mad = float(np.median(np.abs(finite - np.median(finite))))
                self.noise_sigma_m = mad / _MAD_PER_SIGMA
        t = THRESHOLD_SIGMAS * self.noise_sigma_m
        kept = np.sign(detail) * np.maximum(np.abs(detail) - t, 0.0)
        if self.removed_rms_m is None:
            removed = (detail - kept)[np.isfinite(detail)]
            self.removed_rms_m = float(np.sqrt(np.mean(removed**2))) if removed.size else 0.0
        return smooth + kept


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
    >>> bool(np.allclose(z, 0.01 * np.arange(0.0, 50.0, 2.5))), d.removed_rms_m
    (True, 0.0)
    """
    return Denoised(heights, float(cell_m))
