"""Make the demo DEM: invented terrain around Harrowfield Regional (fictional).

Deterministic: the same script always writes the same heights. The raster is
in UTM zone 14N (EPSG:32614), 5 m cells, heights in metres, so the study has
to move points between its own runway frame and another projected CRS.

The invented ground: a gentle general slope (falling toward the runway's far
end and to the north), a drainage ditch crossing the north side in front of
some mast positions, a low rise on the south side, a hill under the approach
4 km out, and a few centimetres of seeded random roughness.

Run: python -m demo_airfield.make_dem [OUTPUT.tif]
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
THRESHOLD = (46.35, -101.2)  # lat, lon of the runway 27 threshold (site.toml)
END = (46.351049044, -101.236344979)
CELL_M = 5.0
EPSG = 32614


def ground_m(along: np.ndarray, cross: np.ndarray, rng: np.random.Generator) -> np.ndarray:
    """Invented ground elevation at runway-frame points (cross > 0 is north of runway 27). [m]"""
    z = 612.0 - 0.002 * along - 0.003 * cross
    # Drainage ditch: 1.6 m deep, 10 m wide, across the north side 60-180 m before the mast
    # positions at 300-400 m setback.
    ditch_axis = 180.0 + 0.25 * (cross - 100.0)
    z -= 1.6 * np.exp(-(((along - ditch_axis) / 5.0) ** 2)) * (cross > 30.0) * (cross < 420.0)
    # Low rise on the south side, 2.2 m high.
    z += 2.2 * np.exp(-(((along - 250.0) / 110.0) ** 2 + ((cross + 230.0) / 90.0) ** 2))
    # A hill under the approach, 4 km before the threshold.
    z += 18.0 * np.exp(-(((along + 4000.0) / 600.0) ** 2 + ((cross - 300.0) / 700.0) ** 2))
    z += rng.normal(0.0, 0.03, z.shape)
    return z


def make(path: Path) -> Path:
    """Write the demo DEM to ``path`` and return it."""
    import rasterio
    from pyproj import Transformer
    from rasterio.transform import from_origin

    from geo.airfield.frame import RunwayFrame

    frame = RunwayFrame(*THRESHOLD, *END)
    to_utm = Transformer.from_crs("EPSG:4326", f"EPSG:{EPSG}", always_xy=True)
    corners = [frame.to_geographic(a, c) for a in (-6500.0, 3100.0) for c in (-900.0, 900.0)]
    xs, ys = zip(*(to_utm.transform(lon, lat) for lat, lon in corners))
    west, east = np.floor(min(xs) / 100) * 100, np.ceil(max(xs) / 100) * 100
    south, north = np.floor(min(ys) / 100) * 100, np.ceil(max(ys) / 100) * 100
    cols, rows = int((east - west) / CELL_M), int((north - south) / CELL_M)
    x = west + (np.arange(cols) + 0.5) * CELL_M
    y = north - (np.arange(rows) + 0.5) * CELL_M
    gx, gy = np.meshgrid(x, y)
    lon, lat = to_utm.transform(gx, gy, direction="INVERSE")
    along, cross = frame.to_plane(lat, lon)
    z = ground_m(along, cross, np.random.default_rng(20261202))
    z = np.round(z, 2).astype(np.float32)
    profile = {
        "driver": "GTiff",
        "width": cols,
        "height": rows,
        "count": 1,
        "dtype": "float32",
        "crs": f"EPSG:{EPSG}",
        "transform": from_origin(west, north, CELL_M, CELL_M),
        "nodata": -9999.0,
        "compress": "deflate",
        "predictor": 3,
        "zlevel": 9,
        "tiled": True,
        "blockxsize": 256,
        "blockysize": 256,
    }
    with rasterio.open(path, "w", **profile) as dst:
        dst.write(z, 1)
        dst.set_band_unit(1, "metre")
        dst.update_tags(SOURCE="invented terrain for the mastplan demo (demo_airfield/make_dem.py)")
    return path


if __name__ == "__main__":
    out = Path(sys.argv[1]) if len(sys.argv) > 1 else HERE / "dem.tif"
    print(make(out))
