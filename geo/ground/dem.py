"""Digital elevation models: one raster or tiles, heights in the survey's datum.

:class:`Dem` is what the study, the sweep and the map use. It is built in
named steps, each in its own module:

1. opening and checking each raster, its vertical unit (:mod:`geo.ground.tile`);
2. choosing the vertical datum conversion (:mod:`geo.ground.vertical_datum`);
3. reading windows and sampling bilinearly, across tile seams
   (:mod:`geo.ground.tile`, :mod:`geo.ground.mosaic`);
4. warping for display (:mod:`geo.ground.display`).

Points are moved into the DEM's own CRS with pyproj; the rasters are never
warped for the study. Heights come out in metres in the site file's vertical
datum: scaled by the vertical unit, plus ``terrain.vertical_offset``, plus the
datum conversion at each point. A point off every tile or next to a nodata
cell gets NaN.

References
----------
.. [1] GDAL raster data model: the geotransform maps pixel corners, so the
       centre of cell (row, col) is at pixel coordinate (col + 0.5, row + 0.5).
.. [2] Press, W. H. et al., *Numerical Recipes*, 3rd ed., 2007, sec. 3.6
       (bilinear interpolation on a grid).
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from geo.ground.mosaic import Mosaic
from geo.ground.tile import VERTICAL_UNITS_M, DemTile, apply_affine, bilinear
from geo.ground.vertical_datum import DatumConversion, datum_conversion

__all__ = ["Dem", "VERTICAL_UNITS_M", "bilinear"]


@dataclass
class Dem:
    """An open DEM: one raster or several tiles.

    Use :meth:`open`; close with :meth:`close` or a ``with`` block.

    Attributes
    ----------
    paths : tuple of Path
        The rasters, in priority order.
    mosaic : Mosaic
        The open tiles.
    vertical_offset_m : float
        Added to every height after scaling. [m]
    conversion : DatumConversion
        From the DEM's vertical datum to the survey's.
    """

    paths: tuple[Path, ...]
    mosaic: Mosaic
    vertical_offset_m: float
    conversion: DatumConversion

    @classmethod
    def open(
        cls,
        source,
        vertical_offset_m: float = 0.0,
        vertical_unit: str | None = None,
        *,
        vertical_datum: str | None = None,
        survey_datum: str | None = None,
        geoid_undulation_m: float | None = None,
    ) -> Dem:
        """Open a DEM: a raster, a list of tiles, or what a site file's ``[terrain]`` says.

        Parameters
        ----------
        source : str, Path, list of them, or geo.site.site_file.TerrainSpec
            With a ``TerrainSpec``, every other argument comes from it.
        vertical_offset_m : float
            Added to the DEM heights to reach the surveyed datum. [m]
        vertical_unit : str, optional
            Unit of the rasters' heights; default from each raster's metadata, else metres.
        vertical_datum, survey_datum : str, optional
            Vertical datums of the DEM and of the site file's elevations
            (``"EGM96"``, ``"EGM2008"``, ``"WGS84"``); both given and different: converted.
        geoid_undulation_m : float, optional
            Geoid undulation published at the threshold; converts without a grid. [m]

        Raises
        ------
        TerrainError
            When a file cannot be read, has no CRS, or the datum conversion needs a missing grid.
        """
        if hasattr(source, "dem_paths"):  # a TerrainSpec
            t = source
            source = t.dem_paths or (t.dem_path,)
            vertical_offset_m, vertical_unit = t.vertical_offset_m, t.vertical_unit
            vertical_datum, survey_datum = t.vertical_datum, t.survey_vertical_datum
            geoid_undulation_m = t.geoid_undulation_m
        paths = tuple(Path(p) for p in source) if isinstance(source, (list, tuple)) else (Path(source),)
        conversion = datum_conversion(vertical_datum, survey_datum, geoid_undulation_m)
        tiles = []
        try:
            for path in paths:
                tiles.append(DemTile.open(path, vertical_unit))
        except BaseException:
            for tile in tiles:
                tile.close()
            raise
        return cls(paths, Mosaic(tiles), vertical_offset_m, conversion)

    # Callers written for one raster read these.
    @property
    def path(self) -> Path:
        """The first raster."""
        return self.paths[0]

    @property
    def dataset(self):
        """The first raster's rasterio dataset."""
        return self.mosaic.tiles[0].dataset

    @property
    def vertical_scale(self) -> float:
        """Metres per height unit of the first raster."""
        return self.mosaic.tiles[0].vertical_scale

    @property
    def vertical_unit_source(self) -> str:
        """Where the height unit came from (each distinct source once)."""
        sources = []
        for tile in self.mosaic.tiles:
            if tile.vertical_unit_source not in sources:
                sources.append(tile.vertical_unit_source)
        return ", ".join(sources)

    @property
    def names(self) -> str:
        """The rasters' file names, comma-separated."""
        return ", ".join(p.name for p in self.paths)

    def close(self) -> None:
        """Close the rasters."""
        self.mosaic.close()

    def __enter__(self) -> Dem:
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    @property
    def crs(self):
        """The first raster's CRS as a :class:`pyproj.CRS` (the CRS of :meth:`sample_native`)."""
        from pyproj import CRS

        return CRS.from_wkt(self.mosaic.crs_wkt)

    @property
    def crs_text(self) -> str:
        """The rasters' CRS, each once in tile order: ``EPSG:code (name)``, or the name alone."""
        from pyproj import CRS

        names = []
        for tile in self.mosaic.tiles:
            crs = CRS.from_wkt(tile.crs_wkt)
            names.append(f"EPSG:{crs.to_epsg()} ({crs.name})" if crs.to_epsg() else crs.name)
        return ", ".join(dict.fromkeys(names))

    def vertical_datum(self) -> str | None:
        """Name of the vertical datum: the one the site file gives, else the one a raster states."""
        if self.conversion.dem_datum is not None:
            return self.conversion.dem_datum
        from pyproj import CRS

        for tile in self.mosaic.tiles:
            for sub in CRS.from_wkt(tile.crs_wkt).sub_crs_list or []:
                if sub.is_vertical:
                    return sub.name
        return None

    def extent_text(self) -> str:
        """Each raster's extent and CRS, for error messages."""
        from pyproj import CRS

        parts = []
        for tile in self.mosaic.tiles:
            w, s, e, n = tile.extent()
            crs = CRS.from_wkt(tile.crs_wkt)
            name = f"EPSG:{crs.to_epsg()}" if crs.to_epsg() else crs.name
            digits = 6 if crs.is_geographic else 1
            x_range = f"x {w:.{digits}f} to {e:.{digits}f}"
            parts.append(f"{tile.path.name} {x_range}, y {s:.{digits}f} to {n:.{digits}f} ({name})")
        return "; ".join(parts)

    def cell_size_m(self, frame) -> float:
        """Ground size of one cell near the runway threshold (the smaller side), of the tile there. [m]"""
        x0, y0 = self._transformer(frame).transform(0.0, 0.0)
        tile = self.mosaic.tile_at(x0, y0)
        k = self.mosaic.tiles.index(tile)
        tx, ty = self.mosaic.to_tile(k, [x0], [y0])
        fwd = tile.dataset.transform
        col, row = apply_affine(~fwd, float(tx[0]), float(ty[0]))
        corners = [apply_affine(fwd, col, row), apply_affine(fwd, col + 1, row), apply_affine(fwd, col, row + 1)]
        cx, cy = self.mosaic.to_tile(0, [c[0] for c in corners], [c[1] for c in corners], from_tile=k)
        back = self._transformer(frame, inverse=True)
        pts = [back.transform(float(a), float(b)) for a, b in zip(cx, cy)]
        return min(math.dist(pts[0], pts[1]), math.dist(pts[0], pts[2]))

    def _metres_per_unit(self) -> float:
        """Ground length of a unit of the first raster's CRS (a degree counted as 111 km of latitude). [m]"""
        return _metres_per_unit(self.mosaic.crs_wkt)

    def _transformer(self, frame, inverse: bool = False):
        from geo.airfield.frame import frame_transformer

        return frame_transformer(frame, self.mosaic.crs_wkt, inverse)

    def sample_frame(self, frame, along_m, cross_m) -> np.ndarray:
        """Bilinear heights at runway-frame points; NaN off the DEM or on nodata.

        Parameters
        ----------
        frame : geo.airfield.frame.RunwayFrame
        along_m, cross_m : array_like
            Points in the runway frame. [m]

        Returns
        -------
        numpy.ndarray
            Heights in the site's vertical datum (scaled, offset, converted). [m]
        """
        from geo.ground.lattice_transform import transform_many

        east, north = frame.to_tm(along_m, cross_m)
        x, y = transform_many(self._transformer(frame), east, north, self._metres_per_unit())
        return self.sample_native(np.asarray(x, dtype=float), np.asarray(y, dtype=float))

    def sample_native(self, x, y) -> np.ndarray:
        """Bilinear heights [m] at points in the first raster's CRS [2]_, in the site's datum."""
        x = np.atleast_1d(np.asarray(x, dtype=float))
        y = np.atleast_1d(np.asarray(y, dtype=float))
        z = self.mosaic.sample(x, y) + self.vertical_offset_m
        if self.conversion.applied:
            z = z + self.datum_shift_native(x, y)
        return z

    def datum_shift_native(self, x, y) -> np.ndarray:
        """The vertical datum conversion [m] at points in the first raster's CRS (0 without one)."""
        x = np.atleast_1d(np.asarray(x, dtype=float))
        if not self.conversion.applied:
            return np.zeros(x.shape)
        lon, lat = _to_wgs84(self.mosaic.crs_wkt).transform(x, np.atleast_1d(np.asarray(y, dtype=float)))
        return self.conversion.shift_m(lon, lat)

    def datum_shift_at(self, lat_deg: float, lon_deg: float) -> float:
        """The vertical datum conversion at a WGS 84 position. [m]"""
        return float(self.conversion.shift_m([lon_deg], [lat_deg])[0])

    def warped(
        self, west_deg: float, south_deg: float, east_deg: float, north_deg: float, dst_crs: str, max_size: int = 1200
    ) -> tuple[np.ndarray, tuple[float, float, float, float], float]:
        """The DEM over a WGS 84 box, warped (bilinear) to another CRS, for display.

        See :func:`geo.ground.display.warp_tiles`; heights are in the site's datum. [m]
        """
        from geo.ground.display import warp_tiles

        z, bounds, cell = warp_tiles(self.mosaic.tiles, west_deg, south_deg, east_deg, north_deg, dst_crs, max_size)
        z = z + self.vertical_offset_m
        if self.conversion.applied:
            from pyproj import Transformer

            w, s, e, n = bounds
            rows, cols = z.shape
            gx, gy = np.meshgrid(w + (np.arange(cols) + 0.5) * cell, n - (np.arange(rows) + 0.5) * cell)
            lon, lat = Transformer.from_crs(dst_crs, "EPSG:4326", always_xy=True).transform(gx, gy)
            z = z + self.conversion.shift_m(np.ravel(lon), np.ravel(lat)).reshape(z.shape)
        return z, bounds, cell

    def cells_in_zone(self, frame, side: str, setback_m: float, offset_m: float, polygon) -> int:
        """Number of valid DEM cells whose centres lie in a zone around the mast (each tile's own grid).

        Parameters
        ----------
        frame : geo.airfield.frame.RunwayFrame
        side : {"left", "right"}
        setback_m, offset_m : float
            The mast in the runway frame. [m]
        polygon : shapely.Polygon
            The zone in the mast's local (u, w) coordinates: ``u`` toward the approach, ``w``
            toward the runway (:mod:`geo.ground.terrain`). [m]
        """
        import shapely

        sign = 1.0 if side == "right" else -1.0
        u0, w0, u1, w1 = polygon.bounds
        uu, ww = np.meshgrid(np.linspace(u0, u1, 9), np.linspace(w0, w1, 9))
        along, cross = setback_m - uu.ravel(), sign * (offset_m - ww.ravel())
        east, north = frame.to_tm(along, cross)
        bx, by = self._transformer(frame).transform(east, north)
        x, y = self.mosaic.cell_centres(float(np.min(bx)), float(np.min(by)), float(np.max(bx)), float(np.max(by)))
        if x.size == 0:
            return 0
        te, tn = self._transformer(frame, inverse=True).transform(x, y)
        # Inverse of frame.to_tm, a rotation: (ue, un) is the along-runway unit vector.
        ue, un = (float(v) for v in frame.to_tm(1.0, 0.0))
        te, tn = np.asarray(te, dtype=float), np.asarray(tn, dtype=float)
        along_c, cross_c = te * ue + tn * un, te * un - tn * ue
        return int(np.count_nonzero(shapely.contains_xy(polygon, setback_m - along_c, offset_m - sign * cross_c)))


def _to_wgs84(crs_wkt: str):
    """Cached transformer from a CRS to WGS 84 (lon, lat)."""
    from pyproj import CRS

    from geo.ground.mosaic import transformer_between

    return transformer_between(crs_wkt, CRS.from_epsg(4326).to_wkt())


@functools.lru_cache(maxsize=8)
def _metres_per_unit(crs_wkt: str) -> float:
    """Ground length of a unit of a CRS: 1 for metres, 0.3048 for feet, 111 km for a degree. [m]"""
    from pyproj import CRS

    crs = CRS.from_wkt(crs_wkt)
    if crs.is_geographic:
        return 111_000.0
    return float(crs.axis_info[0].unit_conversion_factor) if crs.axis_info else 1.0
