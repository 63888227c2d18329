"""Where along the approach the surface integral is taken, and the scattered field between those points.

The surface prediction wants the DDM every ``APPROACH_STEP_M`` (20 m) along the approach, so that
the structure is measured on samples the integral gives. Far out, the ground's scattered field
changes slowly along the path: every facet's wave ``exp(-j k r2)`` turns at the rate
``-k dr2/ds`` as the receiver moves a distance ``s`` along the path, and seen from a receiver
several kilometres out every facet of the area lies in nearly the same direction, so those rates
differ little. With the field's phase taken off at the middle rate (``exp(+j k int rho_mid ds)``)
what remains turns at most at ``beta = k (rho_max - rho_min) / 2`` radians per metre: it is a
band-limited signal of the path distance [1]_, known at every point from samples spaced well below
``pi / beta`` [2]_.

So the integral is taken at *nodes*: every sample near the threshold, and farther out samples
spaced up to ``STEP_PHASE_RAD / beta`` (``beta`` measured per sample from the facets of the area);
the demodulated field is read between them by the cubic through the four nearest nodes
(Lagrange), and the phase put back. Cubic interpolation of ``exp(j beta s)`` with node spacing
``h`` errs by at most ``(beta h)^4 / 24 * 9 / 16`` of the field's amplitude [2]_: at
``beta h = 0.35`` that is 3.5e-4 of the scattered field (a few per cent of the direct wave over
real ground), far below the DDM tolerance of the convergence check; ``tests/optics/test_approach_nodes.py``
measures the DDM against the integral taken at every sample.

References
----------
.. [1] Bracewell, R. N., *The Fourier Transform and Its Applications*, 3rd ed., McGraw-Hill, 2000,
       ch. 10 (sampling theorem; band-limited functions, modulation).
.. [2] Abramowitz, M. and Stegun, I. A., *Handbook of Mathematical Functions*, NBS, 1964, 25.2.1
       and 25.2.3 (Lagrange interpolation and its remainder).
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["STEP_PHASE_RAD", "ApproachNodes", "approach_nodes"]

#: Largest ``beta h`` between nodes (the demodulated field's phase over one node spacing). [rad]
STEP_PHASE_RAD = 0.25
#: Facet points the rates are measured on: a lattice of at most this many along and across the area.
_LATTICE = 48
#: Fewest receivers for which nodes are worth it (below: every receiver is a node).
_FEWEST = 16


class ApproachNodes:
    """The nodes of an evenly sampled approach and the phase taken off between them.

    Attributes
    ----------
    nodes : numpy.ndarray of int
        Indices of the samples the integral is taken at (first and last included, increasing).
    phase_rad : numpy.ndarray
        ``k int rho_mid ds`` at every sample: the demodulating phase. [rad]
    along_m : numpy.ndarray
        Distance of every sample along the path. [m]
    """

    def __init__(self, nodes: np.ndarray, phase_rad: np.ndarray, along_m: np.ndarray):
        self.nodes = nodes
        self.phase_rad = phase_rad
        self.along_m = along_m

    def spread(self, at_nodes: np.ndarray) -> np.ndarray:
        """Fields at the nodes, (..., nodes), to every sample, (..., samples): demodulated cubic interpolation."""
        values = np.asarray(at_nodes) * np.exp(1j * self.phase_rad[self.nodes])
        x, xn = self.along_m, self.along_m[self.nodes]
        n = xn.size
        if n < 4:  # too few for a cubic: every sample is a node
            return np.asarray(at_nodes)
        # The four nodes around each sample: the interval's two ends and one beyond each (clipped at the ends).
        right = np.clip(np.searchsorted(xn, x, side="right"), 2, n - 2)
        first = right - 2
        stencil = first[:, None] + np.arange(4)[None, :]  # (samples, 4)
        xs = xn[stencil]
        weights = np.ones_like(xs)
        for j in range(4):
            for m in range(4):
                if m != j:
                    weights[:, j] *= (x - xs[:, m]) / (xs[:, j] - xs[:, m])
        out = np.einsum("...sk,sk->...s", values[..., stencil], weights)
        out[..., self.nodes] = values  # the nodes themselves exactly
        return out * np.exp(-1j * self.phase_rad)


def _path_rates(receivers_m: np.ndarray, points_m: np.ndarray, tangent: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Least and largest ``d r2 / ds`` over ``points_m`` at each receiver moving by ``tangent`` per unit ``s``."""
    lo = np.empty(receivers_m.shape[0])
    hi = np.empty(receivers_m.shape[0])
    for start in range(0, receivers_m.shape[0], 64):
        rx = receivers_m[start : start + 64]
        d = rx[:, None, :] - points_m[None, :, :]
        rate = np.einsum("rpi,ri->rp", d, tangent[start : start + 64]) / np.linalg.norm(d, axis=2)
        lo[start : start + rx.shape[0]] = rate.min(axis=1)
        hi[start : start + rx.shape[0]] = rate.max(axis=1)
    return lo, hi


def approach_nodes(along_m, receivers_m, points_m, wavelength_m: float) -> ApproachNodes:
    """The nodes of evenly spaced receivers along a path, for the facets at ``points_m``.

    Parameters
    ----------
    along_m : array_like, shape (N,)
        Distance of each receiver along the path, increasing in equal steps. [m]
    receivers_m : array_like, shape (N, 3)
        The receivers. [m]
    points_m : array_like, shape (P, 3)
        Points spanning the facets the receivers see (their rates bound the field's band). [m]
    wavelength_m : float
        [m]

    Returns
    -------
    ApproachNodes
        Every sample a node when there are fewer than ``_FEWEST``.

    References
    ----------
    .. [1] Bracewell (2000), ch. 10 (module References): a signal whose spectrum lies within
           ``+-beta`` is fixed by samples closer than ``pi / beta``; here ``STEP_PHASE_RAD / beta``.
    """
    along = np.asarray(along_m, float)
    rx = np.asarray(receivers_m, float)
    n = along.size
    if n < _FEWEST:
        return ApproachNodes(np.arange(n), np.zeros(n), along)
    k = 2.0 * math.pi / wavelength_m
    tangent = np.gradient(rx, along, axis=0)  # d rx / d along, not a unit vector: the rates are per metre of along
    lo, hi = _path_rates(rx, np.asarray(points_m, float), tangent)
    beta = 0.5 * k * (hi - lo)  # [rad/m]
    mid = 0.5 * k * (hi + lo)
    phase = np.r_[0.0, np.cumsum(0.5 * (mid[1:] + mid[:-1]) * np.diff(along))]
    allowed = STEP_PHASE_RAD / np.maximum(beta, 1e-12)  # [m]
    nodes = [0]
    while nodes[-1] < n - 1:
        i = nodes[-1]
        # the farthest sample j with every sample from i to j allowing the spacing along[j] - along[i]
        reach = np.minimum.accumulate(allowed[i + 1 :])
        fits = int(np.count_nonzero(along[i + 1 :] - along[i] <= reach))  # a prefix: reach falls, distance grows
        nodes.append(i + max(fits, 1))
    return ApproachNodes(np.asarray(nodes), phase, along)


def facet_points(u_m: np.ndarray, w_m: np.ndarray, z_m: np.ndarray) -> np.ndarray:
    """A lattice of the grid's nodes (its edges included), for :func:`approach_nodes`. [m]

    ``z_m`` has the shape ``(w_m.size, u_m.size)`` (as :class:`geo.optics.surface_facets.SurfaceGrid`).
    """
    iu = np.unique(np.linspace(0, u_m.size - 1, min(_LATTICE, u_m.size)).astype(int))
    iw = np.unique(np.linspace(0, w_m.size - 1, min(_LATTICE, w_m.size)).astype(int))
    ww, uu = np.meshgrid(w_m[iw], u_m[iu], indexing="ij")
    return np.column_stack([uu.ravel(), ww.ravel(), z_m[np.ix_(iw, iu)].ravel()])
