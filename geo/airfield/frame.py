"""The runway frame: a local transverse Mercator around the threshold.

Positions near a runway are computed in a plane: a transverse Mercator
projection of the WGS 84 ellipsoid whose origin is the threshold, with scale
factor 1 on its central meridian. Over the 10 km around a runway its scale
error stays below 1.3e-6, so plane distances match the ellipsoidal geodesic
to a few millimetres. Plane coordinates are turned so that ``along`` points
down the runway in the landing direction and ``cross`` to the right of a
pilot on approach.

This module knows nothing of site files: it takes coordinates in degrees and
returns coordinates in metres and degrees.

References
----------
.. [1] Karney, C. F. F. (2011), "Transverse Mercator with an accuracy of a few
       nanometers", J. Geodesy 85, 475-485 (PROJ's ``tmerc``).
.. [2] Karney, C. F. F. (2013), "Algorithms for geodesics", J. Geodesy 87,
       43-55 (GeographicLib, used by :class:`pyproj.Geod`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from geo.airfield.transformers import inverse_transformer, onward_pipeline

__all__ = ["RunwayFrame", "geodesic_inverse", "geodesic_forward", "frame_transformer"]


@lru_cache(maxsize=1)
def _geod():
    from pyproj import Geod

    return Geod(ellps="WGS84")


def geodesic_inverse(lat1_deg: float, lon1_deg: float, lat2_deg: float, lon2_deg: float) -> tuple[float, float]:
    """Forward azimuth and length of the WGS 84 geodesic between two points [2]_.

    Returns
    -------
    azimuth_deg : float
        True bearing at the first point, 0-360 clockwise from north. [deg]
    distance_m : float
        Geodesic length. [m]
    """
    azimuth, _back, distance = _geod().inv(lon1_deg, lat1_deg, lon2_deg, lat2_deg)
    return azimuth % 360.0, distance


def geodesic_forward(
    lat_deg: float, lon_deg: float, azimuth_deg: float, distance_m: float
) -> tuple[float, float, float]:
    """Point at a distance along a WGS 84 geodesic [2]_.

    Returns
    -------
    lat_deg, lon_deg : float
        End point. [deg]
    azimuth_deg : float
        Forward azimuth of the geodesic at the end point. [deg]
    """
    lon2, lat2, back = _geod().fwd(lon_deg, lat_deg, azimuth_deg, distance_m)
    return lat2, lon2, (back + 180.0) % 360.0


@lru_cache(maxsize=16)
def _transformers(lat0_deg: float, lon0_deg: float):
    from pyproj import Transformer
    from pyproj.crs import GeographicCRS, ProjectedCRS
    from pyproj.crs.coordinate_operation import TransverseMercatorConversion

    # WGS 84 (EPSG:6326, the same CRS as datum="WGS84" gives, without PROJ's search by name).
    geographic = GeographicCRS()
    local = ProjectedCRS(
        conversion=TransverseMercatorConversion(
            latitude_natural_origin=lat0_deg,
            longitude_natural_origin=lon0_deg,
            scale_factor_natural_origin=1.0,
        ),
        geodetic_crs=geographic,
    )
    # From WGS 84 the operation is the frame's own conversion: its pipeline, as PROJ writes it.
    forward = Transformer.from_pipeline(local.coordinate_operation.to_proj4())
    return local, forward, inverse_transformer(forward, local, geographic)


@dataclass(frozen=True)
class RunwayFrame:
    """Plane coordinates along and across a runway.

    Parameters
    ----------
    threshold_lat_deg, threshold_lon_deg : float
        Landing threshold on the centre line, WGS 84. [deg]
    end_lat_deg, end_lon_deg : float
        Far end of the runway in the landing direction, WGS 84. [deg]

    Notes
    -----
    ``along`` is measured from the threshold toward the end; ``cross`` is
    positive to the right of a pilot on approach. The unit vectors are those
    of the straight line from threshold to end in the transverse Mercator
    plane [1]_, which on a runway's scale is the geodesic to within a
    millimetre.
    """

    threshold_lat_deg: float
    threshold_lon_deg: float
    end_lat_deg: float
    end_lon_deg: float

    @property
    def _tm(self):
        return _transformers(self.threshold_lat_deg, self.threshold_lon_deg)

    @property
    def crs(self):
        """The local transverse Mercator as a :class:`pyproj.CRS`."""
        return self._tm[0]

    def _unit_vectors(self) -> tuple[float, float]:
        east, north = self._tm[1].transform(self.end_lon_deg, self.end_lat_deg)
        norm = math.hypot(east, north)
        return east / norm, north / norm

    def to_plane(self, lat_deg, lon_deg):
        """WGS 84 degrees to plane (along, cross) metres; scalars or arrays."""
        east, north = self._tm[1].transform(lon_deg, lat_deg)
        ue, un = self._unit_vectors()
        east, north = np.asarray(east, dtype=float), np.asarray(north, dtype=float)
        along = east * ue + north * un
        cross = east * un - north * ue
        return _scalar(along), _scalar(cross)

    def to_tm(self, along_m, cross_m):
        """Plane (along, cross) metres to the frame's transverse Mercator (east, north)."""
        ue, un = self._unit_vectors()
        along_m = np.asarray(along_m, dtype=float)
        cross_m = np.asarray(cross_m, dtype=float)
        return along_m * ue + cross_m * un, along_m * un - cross_m * ue

    def to_geographic(self, along_m, cross_m):
        """Plane (along, cross) metres to WGS 84 (lat, lon) degrees."""
        east, north = self.to_tm(along_m, cross_m)
        lon, lat = self._tm[2].transform(east, north)
        lon = (np.asarray(lon, dtype=float) + 180.0) % 360.0 - 180.0
        return _scalar(np.asarray(lat, dtype=float)), _scalar(lon)


@lru_cache(maxsize=16)
def _frame_transformers(lat0_deg: float, lon0_deg: float, crs_wkt: str):
    from pyproj import CRS, Transformer

    local = _transformers(lat0_deg, lon0_deg)[0]
    other = CRS.from_user_input(crs_wkt)
    onward = onward_pipeline(_transformers(lat0_deg, lon0_deg)[1].definition, local, other)
    if onward is None:
        forward = Transformer.from_crs(local, other, always_xy=True)
    else:
        forward = Transformer.from_pipeline(onward)
    return forward, inverse_transformer(forward, local, other)


def frame_transformer(frame: RunwayFrame, crs_wkt: str, inverse: bool = False):
    """Cached transformer between a frame's transverse Mercator and another CRS (x, y order).

    Parameters
    ----------
    frame : RunwayFrame
    crs_wkt : str
        The other CRS as WKT.
    inverse : bool
        From the other CRS to the frame instead.
    """
    return _frame_transformers(frame.threshold_lat_deg, frame.threshold_lon_deg, crs_wkt)[int(inverse)]


def _scalar(values):
    values = np.asarray(values, dtype=float)
    return float(values) if values.ndim == 0 else values
