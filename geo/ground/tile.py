"""One DEM raster: opening and checking it, reading windows, bilinear sampling.

Only windows around the requested points are read, never the whole raster,
so a 10,000 x 10,000 cell DEM costs what the site needs. Heights are
interpolated bilinearly between cell centres; a point next to a nodata cell
gets NaN. A point in the outer half cell of the raster (beyond the last cell
centre) needs a cell of the neighbouring tile: the caller may pass a
``border`` function that gives heights at cell centres outside the raster,
so that interpolation across a seam between tiles equals interpolation in
one file (see :mod:`geo.ground.mosaic`).

References
----------
.. [1] GDAL raster data model: the geotransform maps pixel corners, so the
       centre of cell (row, col) is at pixel coordinate (col + 0.5, row + 0.5).
.. [2] Press, W. H. et al., *Numerical Recipes*, 3rd ed., 2007, sec. 3.6
       (bilinear interpolation on a grid).
.. [3] NIST Handbook 44, Appendix C: US survey foot = 1200/3937 m.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from geo.errors import TerrainError
from geo.units import M_PER_FT

__all__ = ["DemTile", "VERTICAL_UNITS_M", "bilinear", "apply_affine"]

#: Metres per vertical unit, by the names rasters and site files use [3]_.
VERTICAL_UNITS_M = {
    "m": 1.0, "metre": 1.0, "metres": 1.0, "meter": 1.0, "meters": 1.0,
    "ft": M_PER_FT, "foot": M_PER_FT, "feet": M_PER_FT, "international foot": M_PER_FT,
    "us survey foot": 1200.0 / 3937.0, "ftus": 1200.0 / 3937.0, "us-ft": 1200.0 / 3937.0,
}  # fmt: skip

_BLOCK = 1024  # cells per side of one read window

#: Heights at raster-CRS points outside a tile, in metres (NaN where unknown).
BorderHeights = Callable[[np.ndarray, np.ndarray], np.ndarray]


@dataclass
class DemTile:
    """One open raster of a DEM, heights in metres.

    Attributes
    ----------
    path : Path
    dataset : rasterio.io.DatasetReader
    vertical_scale : float
        Metres per raster height unit.
    vertical_unit_source : str
        Where the vertical unit came from: ``"site file"``, ``"raster (...)"`` or
        ``"default (metres)"``.
    """

    path: Path
    dataset: object
    vertical_scale: float
    vertical_unit_source: str
    crs_wkt: str = field(default="", repr=False)

    @classmethod
    def open(cls, path: str | Path, vertical_unit: str | None = None) -> DemTile:
        """Open a raster GDAL can read and check that it can serve as a DEM.

        Parameters
        ----------
        path : str or Path
        vertical_unit : str, optional
            Unit of the raster's heights; default from the raster's metadata, else metres.

        Raises
        ------
        TerrainError
            When the file cannot be read, has no CRS or is smaller than 2 x 2 cells.
        """
        import rasterio

        path = Path(path)
        try:
            ds = rasterio.open(path)
        except (rasterio.errors.RasterioIOError, OSError) as exc:
            raise TerrainError(f"terrain.dem: cannot read {path} ({exc}); give a raster GDAL reads") from None
        if ds.crs is None:
            ds.close()
            raise TerrainError(f"terrain.dem: {path} has no coordinate reference system; georeference it")
        if ds.width < 2 or ds.height < 2:
            ds.close()
            raise TerrainError(f"terrain.dem: {path} has {ds.width} x {ds.height} cells; a DEM needs at least 2 x 2")
        scale, source = _vertical_scale(ds, vertical_unit)
        return cls(path, ds, scale, source, ds.crs.to_wkt())

    def close(self) -> None:
        """Close the raster."""
        self.dataset.close()

    def grid_index(self, x, y) -> tuple[np.ndarray, np.ndarray]:
        """Cell-centre grid coordinates (row, col) of raster-CRS points [1]_.

        Cell (i, j) has its centre at (i, j); the raster covers [-0.5, n - 0.5].
        """
        col, row = apply_affine(~self.dataset.transform, x, y)
        return row - 0.5, col - 0.5

    def covers(self, x, y) -> np.ndarray:
        """True where raster-CRS points lie on the raster (pixel corners included)."""
        gi, gj = self.grid_index(x, y)
        ds = self.dataset
        return (gi >= -0.5) & (gj >= -0.5) & (gi <= ds.height - 0.5) & (gj <= ds.width - 0.5)

    def extent(self) -> tuple[float, float, float, float]:
        """(west, south, east, north) of the raster in its own CRS."""
        b = self.dataset.bounds
        return (b.left, b.bottom, b.right, b.top)

    def sample(self, x, y, border: BorderHeights | None = None, reach_cells: float = 0.0) -> np.ndarray:
        """Bilinear heights in metres at points in the raster's own CRS [2]_.

        Parameters
        ----------
        x, y : array_like
            Points in the raster's CRS.
        border : callable, optional
            Heights at cell centres just outside the raster (the neighbouring tiles). With it,
            points in the raster's outer half cell get heights; without it they get NaN.
        reach_cells : float
            Without ``border``: extend the edge cells' bilinear surface linearly by up to this
            many cells beyond the last cell centre (at most 1; used to fill borders between tiles).

        Returns
        -------
        numpy.ndarray
            Heights (scaled by the vertical unit, no offset); NaN off the raster or on nodata. [m]

        Notes
        -----
        Points are grouped by block so that each part of the raster is read once, in a
        window of at most ``_BLOCK`` cells a side (plus a one-cell border).
        """
        x = np.atleast_1d(np.asarray(x, dtype=float))
        y = np.atleast_1d(np.asarray(y, dtype=float))
        ds = self.dataset
        gi, gj = self.grid_index(x, y)
        out = np.full(x.shape, np.nan)
        reach = 0.5 if border is not None else min(max(reach_cells, 0.0), 1.0)
        ok = (gi >= -reach) & (gj >= -reach) & (gi <= ds.height - 1 + reach) & (gj <= ds.width - 1 + reach)
        ok &= np.isfinite(gi + gj)
        if not ok.any():
            return out
        idx = np.flatnonzero(ok)
        for members in _block_groups(gi[idx], gj[idx], ds.height, ds.width):
            members = idx[members]
            block, r0, c0 = self._window(gi[members], gj[members], border is not None)
            if border is not None:
                _fill_border(block, r0, c0, ds.height, ds.width, ds.transform, border)
            out[members] = bilinear(block, gi[members] - r0, gj[members] - c0)
        return out

    def _window(self, gi: np.ndarray, gj: np.ndarray, bordered: bool) -> tuple[np.ndarray, int, int]:
        """Heights [m] of the cells around grid points, the window's first row and column.

        With ``bordered``, the window may reach one cell beyond the raster on each side;
        those cells are NaN here and filled by the caller.
        """
        from rasterio.windows import Window

        ds = self.dataset
        lo, hi_r, hi_c = (-1, ds.height, ds.width) if bordered else (0, ds.height - 1, ds.width - 1)
        r0 = int(max(lo, min(math.floor(gi.min()), hi_r - 1)))
        c0 = int(max(lo, min(math.floor(gj.min()), hi_c - 1)))
        r1 = int(min(hi_r + 1, max(math.floor(gi.max()) + 2, r0 + 2)))
        c1 = int(min(hi_c + 1, max(math.floor(gj.max()) + 2, c0 + 2)))
        rr0, rr1 = max(r0, 0), min(r1, ds.height)
        cc0, cc1 = max(c0, 0), min(c1, ds.width)
        window = Window(cc0, rr0, cc1 - cc0, rr1 - rr0)
        inner = ds.read(1, window=window).astype(np.float64)
        inner[~valid_cells(ds, window)] = np.nan
        inner *= self.vertical_scale
        if (r0, r1, c0, c1) == (rr0, rr1, cc0, cc1):
            return inner, r0, c0
        block = np.full((r1 - r0, c1 - c0), np.nan)
        block[rr0 - r0 : rr1 - r0, cc0 - c0 : cc1 - c0] = inner
        return block, r0, c0


def valid_cells(ds, window) -> np.ndarray:
    """True where the cells of a window of band 1 hold data, by GDAL's mask of the band [1]_.

    The mask a masked read applies (nodata value, alpha band or internal mask), without numpy's
    masked arrays: read only when the band has cells without data.
    """
    from rasterio.enums import MaskFlags

    if MaskFlags.all_valid in ds.mask_flag_enums[0]:
        return np.ones((int(window.height), int(window.width)), dtype=bool)
    return ds.read_masks(1, window=window) != 0


def _vertical_scale(ds, vertical_unit: str | None) -> tuple[float, str]:
    """Metres per height unit, and where that unit came from."""
    if vertical_unit is not None:
        return VERTICAL_UNITS_M[vertical_unit], "site file"
    unit = (ds.units[0] or "").strip().lower() if ds.units else ""
    if unit in VERTICAL_UNITS_M:
        return VERTICAL_UNITS_M[unit], f"raster ({unit})"
    return 1.0, "default (metres)"


def _block_groups(gi: np.ndarray, gj: np.ndarray, height: int, width: int):
    """Indices of the points in each ``_BLOCK`` x ``_BLOCK`` block of the raster."""
    bi = np.clip(gi // _BLOCK, 0, (height - 1) // _BLOCK).astype(np.int64)
    bj = np.clip(gj // _BLOCK, 0, (width - 1) // _BLOCK).astype(np.int64)
    key = bi * (width // _BLOCK + 2) + bj
    order = np.argsort(key, kind="stable")
    keys_sorted = key[order]
    starts = np.flatnonzero(np.r_[True, keys_sorted[1:] != keys_sorted[:-1]])
    stops = np.r_[starts[1:], keys_sorted.size]
    for start, stop in zip(starts, stops):
        yield order[start:stop]


def _fill_border(block: np.ndarray, r0: int, c0: int, height: int, width: int, transform, border) -> None:
    """Fill the window's cells outside the raster with the neighbours' heights at their centres [1]_."""
    rows = np.arange(r0, r0 + block.shape[0])
    cols = np.arange(c0, c0 + block.shape[1])
    outside = ((rows < 0) | (rows >= height))[:, None] | ((cols < 0) | (cols >= width))[None, :]
    if not outside.any():
        return
    ii, jj = np.nonzero(outside)
    x, y = apply_affine(transform, cols[jj] + 0.5, rows[ii] + 0.5)
    block[ii, jj] = border(np.asarray(x, dtype=float), np.asarray(y, dtype=float))


def apply_affine(affine, x, y):
    """An affine transform applied to coordinates (scalars or arrays)."""
    return affine.a * x + affine.b * y + affine.c, affine.d * x + affine.e * y + affine.f


def bilinear(grid: np.ndarray, gi: np.ndarray, gj: np.ndarray) -> np.ndarray:
    """Bilinear interpolation in a 2-D array at fractional (row, column) indices [2]_.

    Indices should lie within ``[0, n - 1]``; beyond, the edge cells' surface is extended
    linearly. A NaN among the four neighbours gives NaN.
    """
    rows, cols = grid.shape
    i0 = np.clip(np.floor(gi).astype(np.int64), 0, max(rows - 2, 0))
    j0 = np.clip(np.floor(gj).astype(np.int64), 0, max(cols - 2, 0))
    i1 = np.minimum(i0 + 1, rows - 1)
    j1 = np.minimum(j0 + 1, cols - 1)
    di, dj = gi - i0, gj - j0
    top = grid[i0, j0] * (1.0 - dj) + grid[i0, j1] * dj
    bottom = grid[i1, j0] * (1.0 - dj) + grid[i1, j1] * dj
    return top * (1.0 - di) + bottom * di
