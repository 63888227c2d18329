"""DEM tiles warped onto one grid of another CRS, for display (the map's hillshade).

Each tile's window over the box is reprojected bilinearly with rasterio's
warper [1]_; where tiles overlap, the first with a height wins. The heights
are for a picture only: the study samples the DEM in its own grid
(:mod:`geo.ground.mosaic`).

References
----------
.. [1] GDAL warp API (``GDALReprojectImage``) through ``rasterio.warp.reproject``,
       bilinear resampling.
"""

from __future__ import annotations

import numpy as np

__all__ = ["warp_tiles"]


def warp_tiles(
    tiles, west_deg: float, south_deg: float, east_deg: float, north_deg: float, dst_crs: str, max_size: int = 1200
) -> tuple[np.ndarray, tuple[float, float, float, float], float]:
    """Heights of DEM tiles over a WGS 84 box, warped (bilinear) to another CRS.

    Parameters
    ----------
    tiles : list of geo.ground.tile.DemTile
    west_deg, south_deg, east_deg, north_deg : float
        Box. [deg]
    dst_crs : str
        Target CRS, e.g. ``"EPSG:3857"``.
    max_size : int
        Largest side of the result in cells.

    Returns
    -------
    heights : numpy.ndarray
        Heights scaled to metres (no offset, no datum shift), NaN where no tile has one. [m]
    bounds : tuple
        (west, south, east, north) of the result in ``dst_crs``.
    cell : float
        Cell size in ``dst_crs`` units.
    """
    from rasterio.errors import WindowError
    from rasterio.transform import from_origin
    from rasterio.warp import Resampling, reproject, transform_bounds

    west, south, east, north = transform_bounds("EPSG:4326", dst_crs, west_deg, south_deg, east_deg, north_deg)
    cell = max(east - west, north - south) / max_size
    cols, rows = int(np.ceil((east - west) / cell)), int(np.ceil((north - south) / cell))
    result = np.full((rows, cols), np.nan)
    for tile in tiles:
        ds = tile.dataset
        try:
            src_window = ds.window(*transform_bounds(dst_crs, ds.crs, west, south, east, north))
            src_window = src_window.round_offsets().round_lengths()
        except WindowError:
            continue
        if src_window.width < 1 or src_window.height < 1:
            continue
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
        fill = ~np.isfinite(result) & np.isfinite(out)
        result[fill] = out[fill] * tile.vertical_scale
    bounds = (west, north - rows * cell, west + cols * cell, north)
    return result, bounds, cell
