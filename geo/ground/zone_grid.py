"""The fit zone on a runway-frame grid: DEM samples and the zone row by row.

The reflecting plane is fitted to DEM heights sampled on a grid aligned with the runway frame:
points at whole multiples of the spacing along and across the runway (``along = i sp``,
``cross = j sp``). A single study and every candidate of a sweep use the same points, so that
both fit the same samples and find the same plane.

The fit zone is the union of the exact first Fresnel zones, for receivers on the path at theta from
the threshold to 10 NM, of the antennas whose feeds set the path
(:func:`geo.radio.arrays.path_setting_antennas`; as :func:`geo.ground.terrain.fit_zone` draws it). It is
taken row by row: on every grid row of constant ``cross`` (constant ``w``) each ellipse spans one interval along the
runway, found in closed form from its quadratic, and the zone on the row is the interval from the
lowest start to the highest end (the union of one sweep of receivers along the course is one
interval per row; the antennas' sweeps overlap, the higher one's reaching further out). A sample
is in the zone when its row's interval holds it.

Coordinates as in :mod:`geo.ground.terrain`: ``u = setback - along`` toward the approach from the foot
of the mast, ``w = offset - sign * cross`` toward the runway (sign +1 on the right, -1 on the left).

References
----------
.. [1] ICAO Annex 10, Volume I, 3.1.5.3.1 (coverage to 10 NM: the receivers' range).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from geo.radio.fresnel import exact_ellipses
from geo.radio.zones import RANGE_M

__all__ = ["FIT_RECEIVERS", "MAX_CELLS", "FrameGrid", "ZoneRows", "fit_receivers", "zone_rows"]

#: Receivers on the path (at theta) whose zones make the fit zone, from the threshold to 10 NM.
FIT_RECEIVERS = 64
#: Candidates per block of the (candidates x rows x receivers) arrays.
_CHUNK = 48


def fit_receivers(setback_m, offset_m, angle_deg: float, forward_gradient, lateral_gradient) -> np.ndarray:
    """Receivers on the path at theta for every candidate, as :func:`geo.radio.zones.path_receivers`.

    Parameters
    ----------
    setback_m, offset_m : numpy.ndarray, shape (C,)
        Mast positions. [m]
    angle_deg : float
        Path angle. [deg]
    forward_gradient, lateral_gradient : numpy.ndarray, shape (C,)
        Gradients of the plane the receivers' heights are measured from. [m/m]

    Returns
    -------
    numpy.ndarray, shape (C, FIT_RECEIVERS, 3)
        (u, w, height above the plane). [m]
    """
    setback_m, offset_m = np.atleast_1d(setback_m), np.atleast_1d(offset_m)
    gu, gw = np.atleast_1d(forward_gradient), np.atleast_1d(lateral_gradient)
    before = np.geomspace(1.0, RANGE_M + 1.0, FIT_RECEIVERS) - 1.0  # distance before the threshold
    u = setback_m[:, None] + before[None, :]
    w = np.broadcast_to(offset_m[:, None], u.shape)
    z = math.tan(math.radians(angle_deg)) * np.hypot(u, w) - gu[:, None] * u - gw[:, None] * w
    return np.stack([u, w, z], axis=-1)


@dataclass(frozen=True)
class ZoneRows:
    """The fit zone of each candidate on the grid rows it crosses.

    Attributes
    ----------
    rows : numpy.ndarray of int, shape (C, R)
        Grid row ``j`` (``cross = j sp``).
    i_lo, i_hi : numpy.ndarray of int, shape (C, R)
        First and last grid column ``i`` (``along = i sp``) inside the zone; ``i_lo > i_hi`` on a row
        the zone misses.
    w_m : numpy.ndarray, shape (C, R)
        ``w`` of each row for its candidate. [m]
    """

    rows: np.ndarray
    i_lo: np.ndarray
    i_hi: np.ndarray
    w_m: np.ndarray

    @property
    def lengths(self) -> np.ndarray:
        """Samples of each row inside the zone, shape (C, R)."""
        return np.maximum(self.i_hi - self.i_lo + 1, 0)

    def bounds(self) -> tuple[int, int, int, int]:
        """(i_min, i_max, j_min, j_max) of the cells inside any candidate's zone."""
        inside = self.lengths > 0
        if not inside.any():
            return 0, 0, 0, 0
        return (
            int(self.i_lo[inside].min()),
            int(self.i_hi[inside].max()),
            int(self.rows[inside].min()),
            int(self.rows[inside].max()),
        )


def _zone_rows_in_blocks(height, setback, offset, sign, angle_deg, wavelength_m, gu, gw, spacing_m, count) -> ZoneRows:
    """:func:`zone_rows` block by block of ``_CHUNK`` candidates, rows padded to the widest block.

    Keeps the (candidates x rows x receivers) arrays small enough for the cache.
    """
    parts = [
        zone_rows(
            height[k : k + _CHUNK],
            setback[k : k + _CHUNK],
            offset[k : k + _CHUNK],
            sign[k : k + _CHUNK],
            angle_deg,
            wavelength_m,
            gu[k : k + _CHUNK],
            gw[k : k + _CHUNK],
            spacing_m,
            count,
        )
        for k in range(0, setback.size, _CHUNK)
    ]
    width = max(p.rows.shape[1] for p in parts)

    def joined(name, fill):
        return np.concatenate(
            [np.pad(getattr(p, name), ((0, 0), (0, width - p.rows.shape[1])), constant_values=fill) for p in parts]
        )

    return ZoneRows(joined("rows", 0), joined("i_lo", 1), joined("i_hi", 0), joined("w_m", 0.0))


def _zone_ellipses(height, setback, offset, angle_deg: float, wavelength_m: float, gu, gw):
    """The exact first Fresnel ellipses of every antenna with every fit receiver, per candidate.

    Returns
    -------
    centres : numpy.ndarray, shape (C, N, 2)
        Centres (u, w); 0 where no zone. [m]
    q : numpy.ndarray, shape (C, N, 2, 2)
        Matrices of ``(p - c)^T Q (p - c) <= 1``; the identity where no zone. [1/m2]
    det : numpy.ndarray, shape (C, N)
        ``det(Q)``; 1 where no zone. [1/m4]
    real : numpy.ndarray of bool, shape (C, N)
        Whether the pair has a zone.
    """
    c = setback.size
    # Every antenna with every receiver: (C, A * N) pairs, antenna by antenna.
    receivers = np.tile(fit_receivers(setback, offset, angle_deg, gu, gw), (1, height.shape[1], 1))
    n = receivers.shape[1]
    ant = np.zeros((c, n, 3))
    ant[:, :, 2] = np.repeat(height, FIT_RECEIVERS, axis=1)
    centres, q = exact_ellipses(ant.reshape(-1, 3), receivers.reshape(-1, 3), wavelength_m)
    centres, q = centres.reshape(c, n, 2), q.reshape(c, n, 2, 2)
    det = q[..., 0, 0] * q[..., 1, 1] - q[..., 0, 1] ** 2
    # A receiver at or below the plane (a trial plane steeper than the path near the mast) has no zone.
    real = (receivers[..., 2] > 0.0) & (det > 0.0) & (q[..., 0, 0] > 0.0) & np.isfinite(centres).all(axis=-1)
    centres = np.where(real[..., None], centres, 0.0)
    q = np.where(real[..., None, None], q, np.eye(2))
    det = np.where(real, det, 1.0)
    return centres, q, det, real


def _rows_crossed(centres, q, det, real, offset, sign, sp: float, count: int | None):
    """The grid rows ``j`` (C, R) that the ellipses may cross (at least ``count``), and each row's ``w`` [m]."""
    # Rows whose w = offset - sign * cross lies within each candidate's ellipses.
    reach = np.sqrt(q[..., 0, 0] / det)
    w_lo = np.where(real, centres[..., 1] - reach, np.inf).min(axis=1)
    w_hi = np.where(real, centres[..., 1] + reach, -np.inf).max(axis=1)
    some = np.isfinite(w_lo)
    w_lo, w_hi = np.where(some, w_lo, offset), np.where(some, w_hi, offset)
    cross_a, cross_b = sign * (offset - w_lo), sign * (offset - w_hi)
    j0 = np.floor(np.minimum(cross_a, cross_b) / sp).astype(np.int64)
    needed = int(math.ceil(np.max(w_hi - w_lo) / sp)) + 2
    count = needed if count is None else max(count, needed)
    rows = j0[:, None] + np.arange(count)[None, :]
    w_rows = offset[:, None] - sign[:, None] * (sp * rows)
    return rows, w_rows


def _row_spans(centres, q, det, real, w_rows):
    """On each row, the ``u`` interval (lo, hi) (C, R) the union of the ellipses spans; ``(inf, -inf)`` if none. [m]"""
    # On the row w, ellipse (p - c)^T Q (p - c) <= 1 spans u = c_u - (q_uw/q_uu) dw +/- sqrt(g - b dw^2)
    # with g = 1/q_uu and b = det(Q)/q_uu^2 (dw = w - c_w); empty where g < b dw^2.
    # float32 here: near a zone's tips the half-length loses a few centimetres, far below a cell.
    f4 = np.float32
    alpha = (q[..., 0, 1] / q[..., 0, 0]).astype(f4)[:, None, :]
    beta = (det / q[..., 0, 0] ** 2).astype(f4)[:, None, :]
    gamma = np.where(real, 1.0 / q[..., 0, 0], -1.0).astype(f4)[:, None, :]  # -1: the row always misses
    dw = w_rows.astype(f4)[:, :, None] - centres[:, None, :, 1].astype(f4)  # (C, R, N)
    mid = centres[:, None, :, 0].astype(f4) - alpha * dw
    dw *= dw
    dw *= beta
    np.subtract(gamma, dw, out=dw)  # now the squared half-length, negative where the row misses
    missing = dw < 0.0
    np.sqrt(np.maximum(dw, f4(0.0), out=dw), out=dw)
    lo = np.where(missing, np.inf, mid - dw).min(axis=2).astype(np.float64)
    mid += dw
    mid[missing] = -np.inf
    hi = mid.max(axis=2).astype(np.float64)
    return lo, hi


def _grid_columns(lo, hi, setback, sp: float):
    """First and last grid column ``i`` (C, R) with its cell centre in ``u`` in [lo, hi]; ``i_lo > i_hi`` if none."""
    # along = setback - u; column i = along / sp, cells whose centres are inside.
    empty = ~np.isfinite(lo)
    lo, hi = np.where(empty, 0.0, lo), np.where(empty, 0.0, hi)
    i_lo = np.ceil((setback[:, None] - hi) / sp - 1e-9)
    i_hi = np.floor((setback[:, None] - lo) / sp + 1e-9)
    i_lo = np.where(empty, 1, i_lo).astype(np.int64)
    i_hi = np.where(empty, 0, i_hi).astype(np.int64)
    i_hi = np.where(i_hi < i_lo, i_lo - 1, i_hi)
    return i_lo, i_hi


def zone_rows(
    height_m,
    setback_m,
    offset_m,
    sign,
    angle_deg: float,
    wavelength_m: float,
    forward_gradient,
    lateral_gradient,
    spacing_m: float,
    count: int | None = None,
) -> ZoneRows:
    """Per candidate and grid row near it: the interval of grid columns inside its fit zone.

    Parameters
    ----------
    height_m : array_like, shape (C,) or (C, A)
        Heights above the plane of the antennas whose zones make the fit zone. [m]
    setback_m, offset_m : array_like, shape (C,)
        Mast positions. [m]
    sign : float or array_like
        +1 for a mast on the right, -1 on the left.
    angle_deg : float
        Path angle. [deg]
    wavelength_m : float
        [m]
    forward_gradient, lateral_gradient : array_like, shape (C,)
        Gradients of the plane the receivers stand above. [m/m]
    spacing_m : float
        Grid spacing. [m]
    count : int, optional
        At least this many rows per candidate.

    Returns
    -------
    ZoneRows
    """
    setback, offset, gu, gw = (
        np.atleast_1d(np.asarray(v, dtype=float)) for v in (setback_m, offset_m, forward_gradient, lateral_gradient)
    )
    height = np.asarray(height_m, dtype=float).reshape(setback.size, -1)
    sign = np.broadcast_to(np.asarray(sign, dtype=float), setback.shape)
    if setback.size > _CHUNK:  # keep the (candidates x rows x receivers) arrays small enough for the cache
        return _zone_rows_in_blocks(height, setback, offset, sign, angle_deg, wavelength_m, gu, gw, spacing_m, count)
    centres, q, det, real = _zone_ellipses(height, setback, offset, angle_deg, wavelength_m, gu, gw)
    rows, w_rows = _rows_crossed(centres, q, det, real, offset, sign, spacing_m, count)
    lo, hi = _row_spans(centres, q, det, real, w_rows)
    i_lo, i_hi = _grid_columns(lo, hi, setback, spacing_m)
    return ZoneRows(rows, i_lo, i_hi, w_rows)


#: Most grid points one grid holds (about 270 MB with a sweep's prefix sums); a zone reaching past
#: them (a trial plane near the path angle on a fine DEM) counts the cells beyond as missing.
MAX_CELLS = 4_000_000


class FrameGrid:
    """DEM heights at the runway-frame grid points ``(along, cross) = (i sp, j sp)``, read on demand.

    :meth:`cover` reads a box of grid points (with a margin) and grows it when a zone reaches past
    it, up to :data:`MAX_CELLS`; :attr:`z` holds the heights (NaN off the DEM or on nodata) of rows
    ``j0 ..`` and columns ``i0 ..``. Cells past the grid read as NaN (:meth:`heights`).
    """

    def __init__(self, dem, frame, spacing_m: float, z_ref_m: float = 0.0, max_cells: int = MAX_CELLS):
        self.dem, self.frame, self.sp, self.z_ref = dem, frame, spacing_m, z_ref_m
        self.max_cells = max_cells
        self.i0 = self.j0 = 0
        self.z = np.empty((0, 0))
        self.reads = 0

    @property
    def along_m(self) -> np.ndarray:
        """Along-runway coordinate of each column. [m]"""
        return self.sp * np.arange(self.i0, self.i0 + self.z.shape[1])

    @property
    def cross_m(self) -> np.ndarray:
        """Cross-runway coordinate of each row. [m]"""
        return self.sp * np.arange(self.j0, self.j0 + self.z.shape[0])

    def holds(self, i_min: int, i_max: int, j_min: int, j_max: int) -> bool:
        """Whether the grid holds columns ``i_min..i_max`` and rows ``j_min..j_max``."""
        ni, nj = self.z.shape[1], self.z.shape[0]
        return self.i0 <= i_min and i_max < self.i0 + ni and self.j0 <= j_min and j_max < self.j0 + nj

    def cover(self, i_min: int, i_max: int, j_min: int, j_max: int) -> bool:
        """Hold at least the given box of grid points; returns True when the DEM was read again."""
        if self.holds(i_min, i_max, j_min, j_max):
            return False
        if self.z.size:
            i_min, i_max = min(i_min, self.i0), max(i_max, self.i0 + self.z.shape[1] - 1)
            j_min, j_max = min(j_min, self.j0), max(j_max, self.j0 + self.z.shape[0] - 1)
        pad_i = max(8, (i_max - i_min) // 4)
        pad_j = max(8, (j_max - j_min) // 4)
        if (i_max - i_min + 1 + 2 * pad_i) * (j_max - j_min + 1 + 2 * pad_j) > self.max_cells:
            pad_i = pad_j = 0
            if (i_max - i_min + 1) * (j_max - j_min + 1) > self.max_cells and self.z.size:
                return False  # keep the grid: the cells beyond it count as missing
        self.i0, self.j0 = i_min - pad_i, j_min - pad_j
        ni, nj = i_max - i_min + 1 + 2 * pad_i, j_max - j_min + 1 + 2 * pad_j
        along = self.sp * np.arange(self.i0, self.i0 + ni)
        cross = self.sp * np.arange(self.j0, self.j0 + nj)
        ga, gc = np.meshgrid(along, cross)
        self.z = self.dem.sample_frame(self.frame, ga.ravel(), gc.ravel()).reshape(nj, ni) - self.z_ref
        self.reads += 1
        return True

    def heights(self, rows: np.ndarray, cols: np.ndarray) -> np.ndarray:
        """Heights at grid (row, column) points; NaN past the grid. [m]"""
        r, c = rows - self.j0, cols - self.i0
        held = (r >= 0) & (r < self.z.shape[0]) & (c >= 0) & (c < self.z.shape[1])
        out = np.full(rows.shape, np.nan)
        out[held] = self.z[r[held], c[held]]
        return out

    def cells(self, zone: ZoneRows, k: int = 0) -> tuple[np.ndarray, np.ndarray]:
        """Grid (row, column) of every cell inside candidate ``k``'s zone (the grid must hold them)."""
        lengths = zone.lengths[k]
        total = int(lengths.sum())
        rows = np.repeat(zone.rows[k], lengths)
        cols = np.repeat(zone.i_lo[k] - np.cumsum(lengths) + lengths, lengths) + np.arange(total)
        return rows, cols
