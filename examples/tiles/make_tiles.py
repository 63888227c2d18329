"""Make the two DEM tiles of the tiles example: invented ground around Harrowfield Regional (fictional).

The demo's invented ground (``demo_airfield/make_dem.py``) on 10 m cells over a smaller box, cut in
two tiles at a seam through the mast's reflection zone: ``west.tif`` and ``east.tif``, UTM zone 14N,
heights in EGM96 (orthometric) metres. The example's site file gives its elevations above the WGS 84
ellipsoid, so mastplan converts the tiles with the published undulation. Deterministic: the same
script always writes the same tiles.

Run: python examples/tiles/make_tiles.py
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parents[1]))

from demo_airfield.make_dem import END, EPSG, THRESHOLD, ground_m  # noqa: E402

CELL_M = 10.0
#: Along the runway from the threshold (negative: the approach) and across it, the box the tiles cover. [m]
ALONG_M, CROSS_M = (-2500.0, 800.0), (-700.0, 700.0)
#: Easting of the seam between the tiles. [m]
SEAM_CELLS_FROM_WEST = 120


def _grid():
    """The UTM box around the runway frame's box, and the heights on its cell centres (EGM96). [m]"""
    from pyproj import Transformer

    from geo.airfield.frame import RunwayFrame

    frame = RunwayFrame(*THRESHOLD, *END)
    to_utm = Transformer.from_crs("EPSG:4326", f"EPSG:{EPSG}", always_xy=True)
    corners = [frame.to_geographic(a, c) for a in ALONG_M for c in CROSS_M]
    xs, ys = zip(*(to_utm.transform(lon, lat) for lat, lon in corners))
    west, north = np.floor(min(xs) / 100) * 100, np.ceil(max(ys) / 100) * 100
    cols = int((np.ceil(max(xs) / 100) * 100 - west) / CELL_M)
    rows = int((north - np.floor(min(ys) / 100) * 100) / CELL_M)
    gx, gy = np.meshgrid(west + (np.arange(cols) + 0.5) * CELL_M, north - (np.arange(rows) + 0.5) * CELL_M)
    lon, lat = to_utm.transform(gx, gy, direction="INVERSE")
    along, cross = frame.to_plane(lat, lon)
    z = ground_m(along, cross, np.random.default_rng(20261203))
    return west, north, np.round(z, 1).astype(np.float32)


def make(folder: Path = HERE) -> list[Path]:
    """Write ``west.tif`` and ``east.tif`` into ``folder`` and return their paths."""
    import rasterio
    from rasterio.transform import from_origin

    west, north, z = _grid()
    paths = []
    for name, cells, x0 in (
        ("west.tif", z[:, :SEAM_CELLS_FROM_WEST], west),
        ("east.tif", z[:, SEAM_CELLS_FROM_WEST:], west + SEAM_CELLS_FROM_WEST * CELL_M),
    ):
        profile = {
            "driver": "GTiff", "width": cells.shape[1], "height": cells.shape[0], "count": 1, "dtype": "float32",
            "crs": f"EPSG:{EPSG}", "transform": from_origin(x0, north, CELL_M, CELL_M), "nodata": -9999.0,
            "compress": "deflate", "predictor": 3, "zlevel": 9,
        }  # fmt: skip
        path = folder / name
        with rasterio.open(path, "w", **profile) as dst:
            dst.write(np.ascontiguousarray(cells), 1)
            dst.set_band_unit(1, "metre")
            dst.update_tags(SOURCE="invented terrain for a mastplan example (examples/tiles/make_tiles.py), EGM96")
        paths.append(path)
    return paths


if __name__ == "__main__":
    for written in make():
        print(written)
