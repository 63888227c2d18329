"""Writing small test DEMs (GeoTIFF) from functions of raster coordinates."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import rasterio
from pyproj import Transformer
from rasterio.transform import from_origin


def write_dem(
    path: Path,
    crs: str,
    west: float,
    north: float,
    cell: float,
    cols: int,
    rows: int,
    heights,
    nodata: float | None = -9999.0,
    unit: str | None = None,
) -> Path:
    """Write ``heights(x, y)`` (raster CRS coordinates of cell centres) as a float32 GeoTIFF."""
    x = west + (np.arange(cols) + 0.5) * cell
    y = north - (np.arange(rows) + 0.5) * cell
    gx, gy = np.meshgrid(x, y)
    z = np.asarray(heights(gx, gy), dtype=np.float64)
    profile = {
        "driver": "GTiff",
        "width": cols,
        "height": rows,
        "count": 1,
        "dtype": "float64",
        "crs": crs,
        "transform": from_origin(west, north, cell, cell),
        "nodata": nodata,
    }
    with rasterio.open(path, "w", **profile) as dst:
        dst.write(z, 1)
        if unit:
            dst.set_band_unit(1, unit)
    return path


def box_around(crs: str, lat: float, lon: float, half_m: float, cell: float):
    """(west, north, cols, rows) of a square of about ``2 * half_m`` around a point, in ``crs`` units."""
    to = Transformer.from_crs("EPSG:4326", crs, always_xy=True)
    x, y = to.transform(lon, lat)
    west = np.floor((x - half_m) / cell) * cell
    north = np.ceil((y + half_m) / cell) * cell
    n = int(np.ceil(2 * half_m / cell))
    return west, north, n, n
