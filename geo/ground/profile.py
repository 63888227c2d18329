"""The approach profile: terrain under the extended centre line against the path.

Sampled along the centre line from as far out as the DEM reaches (at most
10 NM before the threshold) to the runway end, at a spacing no coarser than
the DEM cell. The straight path rises at the path angle from the
reflection-plane intercept (RPI) abeam the mast; the actual path is the cone
around the mast, ``tan(theta) * sqrt((s - x)**2 + D**2)`` above the RPI.

References
----------
.. [1] ICAO Annex 10, Volume I, 3.1.1 (ILS glide path, reference datum) and
       3.1.5.3.1 (coverage to 10 NM).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from geo.errors import TerrainError

__all__ = ["ApproachProfile", "approach_profile", "BAND_HALF_WIDTH_M", "PROFILE_RANGE_M"]

#: Farthest point of the profile before the threshold: 10 NM. [m]
PROFILE_RANGE_M = 10 * 1852.0
#: The band of terrain across the centre line: the ground within this distance either side, the
#: half width of the inner approach surface at its start for code 3-4 precision approach runways
#: (120 m wide: ICAO Annex 14 Vol I Table 4-1, from memory; confirm against the edition in force). [m]
BAND_HALF_WIDTH_M = 60.0
#: Lines across the band the terrain is sampled on (every 15 m for the 120 m band).
BAND_LINES = 9


@dataclass(frozen=True)
class ApproachProfile:
    """Terrain and path along the extended centre line.

    Attributes
    ----------
    along_m : numpy.ndarray
        Distance from the threshold, negative on the approach. [m]
    lat_deg, lon_deg : numpy.ndarray
        [deg]
    terrain_m : numpy.ndarray
        Ground elevation (NaN where the DEM has none). [m]
    path_straight_m, path_actual_m : numpy.ndarray
        Path elevations. [m]
    min_clearance_m : float
        Smallest height of the straight path above the terrain on the approach. [m]
    min_clearance_along_m : float
        Where that is. [m]
    spacing_m : float
    approach_covered_m : float
        How far before the threshold the DEM reaches without a gap: the approach the clearance
        check covered, at most :data:`PROFILE_RANGE_M`. [m]
    terrain_low_m, terrain_high_m : numpy.ndarray or None
        Lowest and highest ground across the band, :data:`BAND_LINES` lines from
        ``-BAND_HALF_WIDTH_M`` to ``+BAND_HALF_WIDTH_M`` across the centre line at each sample
        (NaN where the DEM has none of them). [m]
    """

    along_m: np.ndarray
    lat_deg: np.ndarray
    lon_deg: np.ndarray
    terrain_m: np.ndarray
    path_straight_m: np.ndarray
    path_actual_m: np.ndarray
    min_clearance_m: float
    min_clearance_along_m: float
    spacing_m: float
    approach_covered_m: float = 0.0
    terrain_low_m: np.ndarray | None = None
    terrain_high_m: np.ndarray | None = None

    @property
    def clearance_m(self) -> np.ndarray:
        """Straight path above the terrain. [m]"""
        return self.path_straight_m - self.terrain_m


def approach_profile(
    dem,
    frame,
    runway_length_m: float,
    rpi_elevation_m: float,
    setback_m: float,
    offset_m: float,
    angle_deg: float,
    spacing_m: float,
) -> ApproachProfile:
    """Sample terrain and path along the extended centre line.

    Parameters
    ----------
    dem : geo.ground.dem.Dem
    frame : geo.airfield.frame.RunwayFrame
    runway_length_m : float
    rpi_elevation_m : float
        Elevation where the straight path meets the reflecting plane. [m]
    setback_m, offset_m : float
        Mast position. [m]
    angle_deg : float
    spacing_m : float
        Sample spacing; at most the DEM cell. [m]

    Returns
    -------
    ApproachProfile

    Raises
    ------
    TerrainError
        When the DEM does not cover the threshold.
    """
    approach = np.linspace(-PROFILE_RANGE_M, 0.0, int(math.ceil(PROFILE_RANGE_M / spacing_m)) + 1)
    on_runway = np.linspace(0.0, runway_length_m, int(math.ceil(runway_length_m / spacing_m)) + 1)
    along = np.r_[approach[:-1], on_runway]  # the threshold itself is a sample
    terrain = dem.sample_frame(frame, along, np.zeros(along.size))
    before = np.flatnonzero((along < 0.0) & ~np.isfinite(terrain))
    start = int(before[-1]) + 1 if before.size else 0
    along, terrain = along[start:], terrain[start:]
    if along.size == 0 or along[0] > 0.0 or not np.isfinite(terrain[along <= 0.0]).any():
        raise TerrainError("terrain.dem: the DEM does not cover the threshold; give a DEM that covers the runway")
    tan = math.tan(math.radians(angle_deg))
    straight = rpi_elevation_m + (setback_m - along) * tan
    actual = rpi_elevation_m + np.hypot(setback_m - along, offset_m) * tan
    approach = along <= 0.0
    clearance = (straight - terrain)[approach]
    i = int(np.nanargmin(clearance))
    lat, lon = frame.to_geographic(along, np.zeros(along.size))
    low, high = _band(dem, frame, along)
    return ApproachProfile(
        along,
        np.atleast_1d(lat),
        np.atleast_1d(lon),
        terrain,
        straight,
        actual,
        float(clearance[i]),
        float(along[approach][i]),
        float(spacing_m),
        approach_covered_m=float(max(0.0, -along[0])),
        terrain_low_m=low,
        terrain_high_m=high,
    )


def _band(dem, frame, along_m: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Lowest and highest ground on :data:`BAND_LINES` lines across the band at each sample. [m]"""
    across = np.linspace(-BAND_HALF_WIDTH_M, BAND_HALF_WIDTH_M, BAND_LINES)
    aa, cc = np.meshgrid(along_m, across)
    ground = dem.sample_frame(frame, aa.ravel(), cc.ravel()).reshape(aa.shape)
    seen = np.isfinite(ground).any(axis=0)
    low = np.full(along_m.size, np.nan)
    high = np.full(along_m.size, np.nan)
    low[seen] = np.nanmin(ground[:, seen], axis=0)
    high[seen] = np.nanmax(ground[:, seen], axis=0)
    return low, high
