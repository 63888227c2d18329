"""Digital elevation models: windowed reading and bilinear sampling.

Only windows around the requested points are read, never the whole raster,
so a 10,000 x 10,000 cell DEM costs what the site needs. Points are moved
into the DEM's own CRS with pyproj; the raster is never warped. Heights are
interpolated bilinearly between cell centres; a point outside the raster or
next to a nodata cell gets NaN.

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
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from geo.errors import TerrainError
from geo.units import M_PER_FT

__all__ = ["Dem", "VERTICAL_UNITS_M", "bilinear"]

#: Metres per vertical unit, by the names rasters and site files use [3]_.
VERTICAL_UNITS_M = {
    "m": 1.0, "metre": 1.0, "metres": 1.0, "meter": 1.0, "meters": 1.0,
    "ft": M_PER_FT, "foot": M_PER_FT, "feet": M_PER_FT, "international foot": M_PER_FT,
    "us survey foot": 1200.0 / 3937.0, "ftus": 1200.0 / 3937.0, "us-ft": 1200.0 / 3937.0,
}  # fmt: skip

_BLOCK = 1024  # cells per side of one read window


@dataclass
class Dem:
    """An open DEM.

    Use :meth:`open`; close with :meth:`close` or a ``with`` block.

    Attributes
    ----------
    path : Path
    vertical_scale : float
        Metres per raster height unit.
    vertical_offset_m : float
        Added to every height after scaling. [m]
    vertical_unit_source : str
        Where the vertical unit came from: ``"site file"``, ``"raster"`` or
        ``"default (metres)"``.
    """

    path: Path
    dataset: object
    vertical_scale: float
    vertical_offset_m: float
    vertical_unit_source: str

    @classmethod
    def open(cls, path: str | Path, vertical_offset_m: float = 0.0, vertical_unit: str | None = None) -> Dem:
        """Open a raster GDAL can read.

        Parameters
        ----------
        path : str or Path
        vertical_offset_m : float
            Added to the DEM heights to reach the surveyed datum. [m]
        vertical_unit : str, optional
            Unit of the raster's heights; default from the raster's metadata,
            else metres.

        Raises
        ------
        TerrainError
            When the file cannot be read, has no CRS or no single height band.
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
        if vertical_unit is not None:
            scale, source = VERTICAL_UNITS_M[vertical_unit], "site file"
        else:
            unit = (ds.units[0] or "").strip().lower() if ds.units else ""
            if unit in VERTICAL_UNITS_M:
                scale, source = VERTICAL_UNITS_M[unit], f"raster ({unit})"
            else:
                scale, source = 1.0, "default (metres)"
        return cls(path, ds, scale, vertical_offset_m, source)

    def close(self) -> None:
        """Close the raster."""
        self.dataset.close()

    def __enter__(self) -> Dem:
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    @property
    def crs(self):
        """The raster's CRS as a :class:`pyproj.CRS`."""
        from pyproj import CRS

        return CRS.from_user_input(self.dataset.crs.to_wkt())

    def vertical_datum(self) -> str | None:
        """Name of the vertical datum when the raster states one, else ``None``."""
        crs = self.crs
        for sub in crs.sub_crs_list or []:
            if sub.is_vertical:
                return sub.name
        return None

    def cell_size_m(self, frame) -> float:
        """Ground size of one cell near the runway threshold (the smaller side). [m]"""
        x, y = self._transformer(frame).transform(0.0, 0.0)
        col, row = _apply(~self.dataset.transform, x, y)
        fwd = self.dataset.transform
        corners = [_apply(fwd, col, row), _apply(fwd, col + 1, row), _apply(fwd, col, row + 1)]
        back = self._transformer(frame, inverse=True)
        pts = [back.transform(cx, cy) for cx, cy in corners]
        return min(math.dist(pts[0], pts[1]), math.dist(pts[0], pts[2]))

    def _transformer(self, frame, inverse: bool = False):
        from geo.frame import frame_transformer

        return frame_transformer(frame, self.dataset.crs.to_wkt(), inverse)

    def sample_frame(self, frame, along_m, cross_m) -> np.ndarray:
        """Bilinear heights at runway-frame points; NaN off the raster or on nodata.

        Parameters
        ----------
        frame : geo.frame.RunwayFrame
        along_m, cross_m : array_like
            Points in the runway frame. [m]

        Returns
        -------
        numpy.ndarray
            Heights in the site's vertical datum (scaled, offset). [m]
        """
        east, north = frame.to_tm(along_m, cross_m)
        x, y = self._transformer(frame).transform(east, north)
        return self.sample_native(np.asarray(x, dtype=float), np.asarray(y, dtype=float))

    def warped(
        self, west_deg: float, south_deg: float, east_deg: float, north_deg: float, dst_crs: str, max_size: int = 1200
    ) -> tuple[np.ndarray, tuple[float, float, float, float], float]:
        """The DEM over a WGS 84 box, warped (bilinear) to another CRS, for display.

        Parameters
        ----------
        west_deg, south_deg, east_deg, north_deg : float
            Box. [deg]
        dst_crs : str
            Target CRS, e.g. ``"EPSG:3857"``.
        max_size : int
            Largest side of the result in cells.

        Returns
        -------
        heights : numpy.ndarray
            Heights in the site's datum, NaN where the DEM has none. [m]
        bounds : tuple
            (west, south, east, north) of the result in ``dst_crs``.
        cell : float
            Cell size in ``dst_crs`` units.
        """
        from rasterio.transform import from_origin
        from rasterio.warp import Resampling, reproject, transform_bounds

        west, south, east, north = transform_bounds("EPSG:4326", dst_crs, west_deg, south_deg, east_deg, north_deg)
        cell = max(east - west, north - south) / max_size
        cols, rows = int(np.ceil((east - west) / cell)), int(np.ceil((north - south) / cell))
        ds = self.dataset
        src_window = ds.window(*transform_bounds(dst_crs, ds.crs, west, south, east, north))
        src_window = src_window.round_offsets().round_lengths()
        nodata = ds.nodata if ds.nodata is not None else np.nan
        source = ds.read(1, window=src_window, masked=True, boundless=True, fill_value=nodata)
        out = np.full((rows, cols), np.nan)
        reproject(
            source=source.astype(np.float64).filled(np.nan),
            destination=out,
            src_transform=ds.window_transform(src_window),
            src_crs=ds.crs,
            src_nodata=np.nan,
            dst_transform=from_origin(west, north, cell, cell),
            dst_crs=dst_crs,
            dst_nodata=np.nan,
            resampling=Resampling.bilinear,
        )
        bounds = (west, north - rows * cell, west + cols * cell, north)
        return out * self.vertical_scale + self.vertical_offset_m, bounds, cell

    def sample_native(self, x, y) -> np.ndarray:
        """Bilinear heights at points in the raster's own CRS [2]_.

        Points are grouped by block so that each part of the raster is read
        once, in a window of at most ``_BLOCK`` cells a side.
        """
        from rasterio.windows import Window

        x = np.atleast_1d(np.asarray(x, dtype=float))
        y = np.atleast_1d(np.asarray(y, dtype=float))
        ds = self.dataset
        col, row = _apply(~ds.transform, x, y)
        # Cell-centre grid coordinates [1]_: cell (i, j) has its centre at (i + 0.5, j + 0.5).
        gi, gj = row - 0.5, col - 0.5
        out = np.full(x.shape, np.nan)
        ok = (gi >= 0) & (gj >= 0) & (gi <= ds.height - 1) & (gj <= ds.width - 1) & np.isfinite(gi + gj)
        if not ok.any():
            return out
        idx = np.flatnonzero(ok)
        bi = np.minimum(gi[idx] // _BLOCK, (ds.height - 1) // _BLOCK).astype(np.int64)
        bj = np.minimum(gj[idx] // _BLOCK, (ds.width - 1) // _BLOCK).astype(np.int64)
        key = bi * (ds.width // _BLOCK + 2) + bj
        order = np.argsort(key, kind="stable")
        keys_sorted = key[order]
        starts = np.flatnonzero(np.r_[True, keys_sorted[1:] != keys_sorted[:-1]])
        stops = np.r_[starts[1:], keys_sorted.size]
        for start, stop in zip(starts, stops):
            members = idx[order[start:stop]]
            r0 = int(max(0, min(math.floor(gi[members].min()), ds.height - 2)))
            c0 = int(max(0, min(math.floor(gj[members].min()), ds.width - 2)))
            r1 = int(min(ds.height, max(math.floor(gi[members].max()) + 2, r0 + 2)))
            c1 = int(min(ds.width, max(math.floor(gj[members].max()) + 2, c0 + 2)))
            window = Window(c0, r0, c1 - c0, r1 - r0)
            block = ds.read(1, window=window, masked=True).astype(np.float64).filled(np.nan)
            out[members] = bilinear(block, gi[members] - r0, gj[members] - c0)
        return out * self.vertical_scale + self.vertical_offset_m


def _apply(affine, x, y):
    """An affine transform applied to coordinates (scalars or arrays)."""
    return affine.a * x + affine.b * y + affine.c, affine.d * x + affine.e * y + affine.f


def bilinear(grid: np.ndarray, gi: np.ndarray, gj: np.ndarray) -> np.ndarray:
    """Bilinear interpolation in a 2-D array at fractional (row, column) indices [2]_.

    Indices must lie within ``[0, n - 1]``; a NaN among the four neighbours gives NaN.
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
