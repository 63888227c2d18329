"""matplotlib's real sample DEM ``jacksboro_fault_dem.npz`` as GeoTIFFs, and fictional runways on it.

The DEM ships in the matplotlib package on PyPI and Debian (``matplotlib.cbook.get_sample_data``):
3-arc-second elevations of the Jacksboro fault area, Tennessee, derived from USGS data, 344 x 403
cells, 236 to 1,076 m. Its ``ymin`` and ``ymax`` fields are swapped (ymin 36.733 > ymax 36.446), so
the sheet's top (north edge) is taken from the larger of the two; row 0 is the north row.

Shared by the real-terrain tests (plane solve, surface prediction, derived areas).
"""

from __future__ import annotations

import textwrap
from dataclasses import dataclass
from pathlib import Path

import numpy as np

NODATA = -9999.0


@dataclass(frozen=True)
class Sheet:
    """The sample DEM: heights (row 0 north) and its grid in WGS 84 degrees."""

    z: np.ndarray
    west: float
    top: float
    dx: float
    dy: float

    @property
    def box(self) -> tuple[float, float, float, float]:
        """(west, south, east, top) [deg]"""
        rows, cols = self.z.shape
        return self.west, self.top - rows * self.dy, self.west + cols * self.dx, self.top

    def scaled(self, scale: float) -> np.ndarray:
        """The relief scaled about the sheet's mean (airfield-like ground for small scales)."""
        mean = float(self.z.mean())
        return mean + scale * (self.z - mean)

    def transform(self, west: float | None = None):
        """The affine transform of the sheet (or of a sheet of the same cells starting at ``west``)."""
        from rasterio.transform import from_origin

        return from_origin(self.west if west is None else west, self.top, self.dx, self.dy)

    def height_at(self, lat: float, lon: float, z: np.ndarray) -> float:
        """The nearest cell's value of ``z`` (a grid of the sheet's shape) at a point. [m]"""
        row = int((self.top - lat) / self.dy)
        col = int((lon - self.west) / self.dx)
        return float(z[row, col])

    def runway(self, z: np.ndarray, lat: float, lon: float, heading_deg: float, length_m: float = 2500.0):
        """Threshold and end (lat, lon, elevation) of a runway from (lat, lon), graded at most 1.5 %.

        The elevations are the nearest cells' of ``z``; the end is brought within 1.5 % of the
        threshold (Annex 14 allows 1 to 2 % longitudinal slope; from memory).
        """
        from geo.airfield.frame import geodesic_forward

        end_lat, end_lon, _ = geodesic_forward(lat, lon, heading_deg, length_m)
        z_thr, z_end = self.height_at(lat, lon, z), self.height_at(end_lat, end_lon, z)
        z_end = z_thr + float(np.clip(z_end - z_thr, -0.015 * length_m, 0.015 * length_m))
        return (lat, lon, z_thr), (end_lat, end_lon, z_end)

    def meridian_pair(self, folder: Path, scale: float, col: int, half_cols: int) -> tuple[Path, Path, float]:
        """The scaled sheet cut to ``half_cols`` columns each side of column ``col``, and its mirror image.

        The mirror swaps east and west about the meridian through the centre of column ``col``
        (returned, [deg]): a runway along that meridian sees on its left in one exactly what it
        sees on its right in the other (the runway frame is a transverse Mercator on that
        meridian, symmetric about it [1]_).

        References
        ----------
        .. [1] Snyder, J. P., *Map Projections: A Working Manual*, USGS Professional Paper 1395,
               1987, ch. 8 (transverse Mercator: symmetric about the central meridian).
        """
        z = self.scaled(scale)[:, col - half_cols : col + half_cols + 1]
        west = self.west + (col - half_cols) * self.dx
        transform = self.transform(west)
        original = write_raster(folder / f"jacksboro_{scale:g}_{col}.tif", z, "EPSG:4326", transform)
        mirrored = write_raster(folder / f"jacksboro_{scale:g}_{col}_mirror.tif", z[:, ::-1], "EPSG:4326", transform)
        return original, mirrored, self.west + (col + 0.5) * self.dx


def jacksboro_sheet() -> Sheet:
    """The sample DEM as read from matplotlib's sample data."""
    from matplotlib import cbook

    with cbook.get_sample_data("jacksboro_fault_dem.npz") as data:
        z = data["elevation"].astype(np.float64)
        top = max(float(data["ymin"]), float(data["ymax"]))  # the fields are swapped in the file
        return Sheet(z, float(data["xmin"]), top, float(data["dx"]), float(data["dy"]))


def write_raster(path: Path, z: np.ndarray, crs: str, transform) -> Path:
    """``z`` as a float64 GeoTIFF with the nodata value :data:`NODATA`."""
    import rasterio

    rows, cols = z.shape
    profile = {"driver": "GTiff", "count": 1, "dtype": "float64", "nodata": NODATA}
    with rasterio.open(path, "w", width=cols, height=rows, crs=crs, transform=transform, **profile) as dst:
        dst.write(z, 1)
    return path


def site_text(
    dem: Path,
    name: str,
    threshold: tuple[float, float, float],
    end: tuple[float, float, float],
    array: str = "null-reference",
    side: str = "right",
    offset_m: float = 120.0,
    setback_m: float = 300.0,
    extra: str = "",
) -> str:
    """A site file of a fictional runway 45 m wide; threshold and end as (lat, lon, elevation)."""
    return (
        textwrap.dedent(f"""
        units = "m"
        [site]
        name = "{name}"
        [runway]
        threshold = {{ lat = {threshold[0]:.7f}, lon = {threshold[1]:.7f}, elevation = {threshold[2]:.2f} }}
        end = {{ lat = {end[0]:.7f}, lon = {end[1]:.7f}, elevation = {end[2]:.2f} }}
        width = 45
        [glide_path]
        angle_deg = 3.0
        localizer_mhz = 110.30
        array = "{array}"
        [mast]
        side = "{side}"
        offset = {offset_m}
        setback = {setback_m}
        [terrain]
        dem = "{dem}"
        """)
        + extra
    )
