"""A coordinate transform of many points, read from a lattice of exactly transformed ones.

The surface prediction samples the DEM at a few hundred thousand runway-frame points a study;
transforming each through PROJ (transverse Mercator to the DEM's projection) costs about 1 us a
point. Over the few kilometres a study covers the transform is smooth (map projections are
conformal with slowly varying scale), so it is read bilinearly from a lattice of points
transformed exactly, ``LATTICE_STEP_M`` apart. The error of bilinear interpolation is at most
``h^2 / 8`` times the largest second derivative [1]_ (about 1e-7 per metre for a projection's
scale over a few km: 0.1 mm at 100 m); it is not assumed but measured at the middle of every
lattice cell, where it is largest, and where it exceeds ``TOLERANCE_M`` (1 mm; also across the
antimeridian, where longitudes jump) every point is transformed exactly.

References
----------
.. [1] Abramowitz, M. and Stegun, I. A., *Handbook of Mathematical Functions*, NBS, 1964, 25.2.66
       (bivariate linear interpolation) and 25.2.1 (its remainder).
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["LATTICE_STEP_M", "TOLERANCE_M", "transform_many"]

#: Spacing of the exactly transformed lattice. [m]
LATTICE_STEP_M = 100.0
#: Largest error allowed at the lattice cells' middles (in the target's units, metres or degrees
#: times 111 km). [m]
TOLERANCE_M = 1e-3
#: Fewer points than this are transformed exactly (the lattice would not pay).
_FEWEST = 20_000


def _bilinear(east0, north0, step, xs, ys, east, north):
    """Read the lattice arrays ``xs``, ``ys`` (rows north, columns east) bilinearly at the points."""
    fe = (east - east0) / step
    fn = (north - north0) / step
    i = np.clip(fn.astype(int), 0, xs.shape[0] - 2)
    j = np.clip(fe.astype(int), 0, xs.shape[1] - 2)
    a, b = fn - i, fe - j
    w00, w10, w01, w11 = (1 - a) * (1 - b), a * (1 - b), (1 - a) * b, a * b
    return [v[i, j] * w00 + v[i + 1, j] * w10 + v[i, j + 1] * w01 + v[i + 1, j + 1] * w11 for v in (xs, ys)]


def transform_many(transformer, east_m, north_m, metres_per_unit: float = 1.0):
    """``transformer.transform(east, north)`` for many points, from a checked lattice (module notes).

    Parameters
    ----------
    transformer : pyproj.Transformer
        From a metric CRS (the runway frame's transverse Mercator).
    east_m, north_m : array_like
        Points in the source CRS. [m]
    metres_per_unit : float
        Length of the target CRS's unit on the ground, for the check: 1 for a projection in
        metres, 0.3048 in feet, about 111,000 for degrees (a degree of latitude; a degree of
        longitude is shorter, so the check is stricter there). [m]

    Returns
    -------
    x, y : numpy.ndarray
        In the target CRS, within ``TOLERANCE_M`` of the exact transform (exact when few points,
        or when the check fails).
    """
    east = np.asarray(east_m, dtype=float)
    north = np.asarray(north_m, dtype=float)
    finite = np.isfinite(east) & np.isfinite(north)
    if east.size < _FEWEST or not finite.all():
        return transformer.transform(east, north)
    e0, e1, n0, n1 = float(east.min()), float(east.max()), float(north.min()), float(north.max())
    step = LATTICE_STEP_M
    ne, nn = int(math.ceil((e1 - e0) / step)) + 2, int(math.ceil((n1 - n0) / step)) + 2
    ge, gn = np.meshgrid(e0 + step * np.arange(ne), n0 + step * np.arange(nn))
    xs, ys = (np.asarray(v, dtype=float) for v in transformer.transform(ge, gn))
    me, mn = ge[:-1, :-1] + 0.5 * step, gn[:-1, :-1] + 0.5 * step  # the cells' middles: where the error peaks
    exact_x, exact_y = (np.asarray(v, dtype=float) for v in transformer.transform(me, mn))
    read_x, read_y = _bilinear(e0, n0, step, xs, ys, me, mn)
    error = np.hypot(read_x - exact_x, read_y - exact_y) * metres_per_unit
    if not (np.all(np.isfinite(error)) and float(error.max()) <= TOLERANCE_M):
        return transformer.transform(east, north)
    return tuple(_bilinear(e0, n0, step, xs, ys, east, north))
