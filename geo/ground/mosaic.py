"""DEM tiles read as one surface: each point from the tile that covers it, exact across seams.

Open DEMs come as tiles (1 x 1 degree sheets, survey sheets), each possibly in
its own CRS. :class:`Mosaic` samples them without merging files: a point takes
its height from the first tile, in the order given, that covers it with valid
data. Bilinear interpolation needs the 2 x 2 cell centres around a point; near
a seam some of them lie in the neighbouring tile. Each tile's window is
therefore read with a one-cell border whose heights come from the neighbours
at the border cells' centres. When the tiles share one grid (cut from one
DEM), those centres are the neighbours' own cell centres, so a point near a
seam gets exactly the height one file would give. Between tiles of different
grids the border cells are interpolated in the neighbour (extended linearly
by up to one cell where no neighbour cell centre reaches), which is exact on
planes and differs from one file by the interpolation error only.

A point that no tile covers with valid data gets NaN, which the callers report
as ground off the DEM or on nodata.

References
----------
.. [1] GDAL raster data model: pixel corners and cell centres (cell (row, col)
       centred at pixel coordinate (col + 0.5, row + 0.5)).
.. [2] Press, W. H. et al., *Numerical Recipes*, 3rd ed., 2007, sec. 3.6
       (bilinear interpolation on a grid).
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from geo.ground.tile import DemTile, apply_affine, valid_cells

__all__ = ["Mosaic", "transformer_between"]

#: A cell centre computed through another tile's geotransform lands within this many cells of
#: itself (floating-point rounding of the transforms; 1e-6 cells is 0.1 mm on a 90 m cell).
_ROUNDING_CELLS = 1e-6


class Mosaic:
    """DEM tiles sampled as one surface; points in the CRS of the first tile.

    Parameters
    ----------
    tiles : list of DemTile
        In priority order: where tiles overlap, the first with valid data wins.
    """

    def __init__(self, tiles: list[DemTile]):
        if not tiles:
            raise ValueError("a mosaic needs at least one tile")
        self.tiles = list(tiles)
        #: (west, south, east, north) of every point :meth:`sample` was asked for, in the mosaic's CRS
        #: (None before the first): the part of the DEM a study read, for :mod:`geo.ground.tile_agreement`.
        self.asked_box: tuple[float, float, float, float] | None = None

    @property
    def crs_wkt(self) -> str:
        """The CRS of the mosaic's coordinates: the first tile's."""
        return self.tiles[0].crs_wkt

    def to_tile(self, k: int, x, y, from_tile: int = 0) -> tuple[np.ndarray, np.ndarray]:
        """Points from one tile's CRS (default the mosaic's) to tile ``k``'s CRS."""
        x = np.asarray(x, dtype=float)
        y = np.asarray(y, dtype=float)
        src, dst = self.tiles[from_tile].crs_wkt, self.tiles[k].crs_wkt
        if src == dst:
            return x, y
        tx, ty = transformer_between(src, dst).transform(x, y)
        return np.asarray(tx, dtype=float), np.asarray(ty, dtype=float)

    def sample(self, x, y) -> np.ndarray:
        """Bilinear heights [m] at points in the mosaic's CRS; NaN where no tile serves [2]_."""
        x = np.atleast_1d(np.asarray(x, dtype=float))
        y = np.atleast_1d(np.asarray(y, dtype=float))
        if len(self.tiles) == 1:
            return self.tiles[0].sample(x, y)
        self._note_asked(x, y)
        out = np.full(x.shape, np.nan)
        for k, tile in enumerate(self.tiles):
            todo = np.flatnonzero(~np.isfinite(out))
            if todo.size == 0:
                break
            tx, ty = self.to_tile(k, x[todo], y[todo])
            on = tile.covers(tx, ty)
            if not on.any():
                continue
            out[todo[on]] = tile.sample(tx[on], ty[on], border=lambda bx, by, k=k: self._border(k, bx, by))
        return out

    def _note_asked(self, x: np.ndarray, y: np.ndarray) -> None:
        """Grow :attr:`asked_box` by the finite points of one request."""
        ok = np.isfinite(x) & np.isfinite(y)
        if not ok.any():
            return
        box = (float(x[ok].min()), float(y[ok].min()), float(x[ok].max()), float(y[ok].max()))
        if self.asked_box is not None:
            a = self.asked_box
            box = (min(a[0], box[0]), min(a[1], box[1]), max(a[2], box[2]), max(a[3], box[3]))
        self.asked_box = box

    def _border(self, k: int, x: np.ndarray, y: np.ndarray) -> np.ndarray:
        """Heights [m] at cell centres just outside tile ``k`` (its CRS), from the other tiles.

        In turn: a tile whose cell centres surround the point (within rounding: on a shared grid
        the point is one of them); a tile that covers the point in its outer half cell (extended
        linearly); any tile within one cell of the point (extended linearly).
        """
        out = np.full(x.shape, np.nan)
        for reach, covering in ((_ROUNDING_CELLS, False), (0.5, True), (1.0, False)):
            for j, other in enumerate(self.tiles):
                todo = np.flatnonzero(~np.isfinite(out))
                if j == k or todo.size == 0:
                    continue
                ox, oy = self.to_tile(j, x[todo], y[todo], from_tile=k)
                z = other.sample(ox, oy, reach_cells=reach)
                if covering:
                    z[~other.covers(ox, oy)] = np.nan
                out[todo] = z
        return out

    def tile_at(self, x: float, y: float) -> DemTile:
        """The first tile that covers a point of the mosaic's CRS (the first tile when none does)."""
        for k, tile in enumerate(self.tiles):
            tx, ty = self.to_tile(k, [x], [y])
            if tile.covers(tx, ty)[0]:
                return tile
        return self.tiles[0]

    def cell_centres(self, west: float, south: float, east: float, north: float, to_mosaic: bool = True):
        """Centres of the valid cells of every tile within a box of the mosaic's CRS.

        A cell centre that an earlier tile also covers is left out, so that overlapping tiles
        count each spot once.

        Returns
        -------
        x, y : numpy.ndarray
            Cell centres in the mosaic's CRS.
        """
        from rasterio.windows import Window, from_bounds

        xs, ys = [], []
        for k, tile in enumerate(self.tiles):
            ds = tile.dataset
            corners_x = np.array([west, east, east, west, (west + east) / 2])
            corners_y = np.array([south, south, north, north, (south + north) / 2])
            tx, ty = self.to_tile(k, corners_x, corners_y)
            win = from_bounds(tx.min(), ty.min(), tx.max(), ty.max(), transform=ds.transform)
            win = win.round_offsets(op="floor").round_lengths(op="ceil")
            c0, r0 = max(int(win.col_off) - 1, 0), max(int(win.row_off) - 1, 0)
            c1 = min(int(win.col_off + win.width) + 1, ds.width)
            r1 = min(int(win.row_off + win.height) + 1, ds.height)
            if c1 <= c0 or r1 <= r0:
                continue
            valid = valid_cells(ds, Window(c0, r0, c1 - c0, r1 - r0))
            ii, jj = np.nonzero(valid)
            cx, cy = apply_affine(ds.transform, jj + c0 + 0.5, ii + r0 + 0.5)
            mx, my = self.to_tile(0, cx, cy, from_tile=k)
            keep = np.ones(mx.shape, dtype=bool)
            for e in range(k):
                ex, ey = self.to_tile(e, mx, my)
                keep &= ~self.tiles[e].covers(ex, ey)
            xs.append(mx[keep])
            ys.append(my[keep])
        if not xs:
            return np.zeros(0), np.zeros(0)
        return np.concatenate(xs), np.concatenate(ys)

    def close(self) -> None:
        """Close every tile."""
        for tile in self.tiles:
            tile.close()


@lru_cache(maxsize=32)
def transformer_between(src_wkt: str, dst_wkt: str):
    """Cached pyproj transformer between two CRSs given as WKT (x, y order)."""
    from pyproj import CRS, Transformer

    return Transformer.from_crs(CRS.from_wkt(src_wkt), CRS.from_wkt(dst_wkt), always_xy=True)
