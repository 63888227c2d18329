"""The runway frame and geodesics against published and independent values."""

import math

import numpy as np
import pytest
from pyproj import Geod

from geo.airfield.frame import RunwayFrame, geodesic_forward, geodesic_inverse


def _dms(d, m, s):
    sign = -1.0 if d < 0 else 1.0
    return sign * (abs(d) + m / 60 + s / 3600)


def test_vincenty_published_example():
    # Geoscience Australia's published Vincenty example on GRS80 (seen): Flinders Peak to
    # Buninyong, 54,972.271 m, forward azimuth 306 52 05.37, reverse 127 10 25.07. The module
    # works on WGS 84, whose flattening differs from GRS80's by 1.6e-11: below 1 mm here.
    az, dist = geodesic_inverse(
        _dms(-37, 57, 3.72030), _dms(144, 25, 29.52440), _dms(-37, 39, 10.15610), _dms(143, 55, 35.38390)
    )
    assert dist == pytest.approx(54_972.271, abs=0.001)
    assert az == pytest.approx(_dms(306, 52, 5.37), abs=0.01 / 3600)
    lat, lon, fwd_az_at_end = geodesic_forward(_dms(-37, 57, 3.72030), _dms(144, 25, 29.52440), az, dist)
    assert lat == pytest.approx(_dms(-37, 39, 10.15610), abs=1e-8)
    assert lon == pytest.approx(_dms(143, 55, 35.38390), abs=1e-8)
    assert (fwd_az_at_end + 180) % 360 == pytest.approx(_dms(127, 10, 25.07), abs=0.01 / 3600)


GEOD = Geod(ellps="WGS84")
# Edges of the world: the antimeridian crossed (179.99 E heading east, 179.99 W heading west), 85 deg N
# and S, a UTM zone boundary crossed (6 deg E), the southern hemisphere, the equator.
CASES = [
    (-35.41, 148.92, 73.0), (0.0, 10.0, 0.0), (46.35, -101.2, 272.4), (60.2, 25.0, 135.0),
    (-54.8, -68.3, 200.0), (78.2, 15.6, 318.0), (12.0, 179.95, 90.0), (-16.5, 179.99, 95.0),
    (65.0, -179.99, 268.0), (85.0, 30.0, 10.0), (-85.0, -120.0, 190.0), (50.0, 5.995, 90.0),
]  # fmt: skip


@pytest.mark.parametrize("lat, lon, bearing", CASES)
def test_ten_km_runway_length_and_bearing_match_the_geodesic(lat, lon, bearing):
    # Reference: pyproj.Geod (GeographicLib, Karney 2013). Requirement: 1 cm over 10 km, 1e-4 deg.
    lon2, lat2, _ = GEOD.fwd(lon, lat, bearing, 10_000.0)
    frame = RunwayFrame(lat, lon, lat2, lon2)
    along, cross = frame.to_plane(lat2, lon2)
    assert along == pytest.approx(10_000.0, abs=0.01)
    assert cross == pytest.approx(0.0, abs=1e-6)
    # Direction of the frame's along axis at the threshold against the geodesic azimuth there.
    lat_a, lon_a = frame.to_geographic(1.0, 0.0)
    az, _, _ = GEOD.inv(lon, lat, lon_a, lat_a)
    assert (az - bearing + 180) % 360 - 180 == pytest.approx(0.0, abs=1e-4)


@pytest.mark.parametrize("lat, lon, bearing", CASES)
@pytest.mark.parametrize("setback, offset, side", [(300.0, 120.0, 1), (1200.0, 200.0, -1), (3500.0, 60.0, 1)])
def test_plane_positions_match_a_geodesic_construction(lat, lon, bearing, setback, offset, side):
    # Independent method: walk `setback` along the centre-line geodesic with pyproj.Geod, turn a
    # right angle to the geodesic's own azimuth there, walk `offset`. Requirement: within 5 cm.
    lon2, lat2, _ = GEOD.fwd(lon, lat, bearing, 3000.0)
    frame = RunwayFrame(lat, lon, lat2, lon2)
    lon_p, lat_p, back = GEOD.fwd(lon, lat, bearing, setback)
    lon_m, lat_m, _ = GEOD.fwd(lon_p, lat_p, back + 180.0 + side * 90.0, offset)
    got_lat, got_lon = frame.to_geographic(setback, side * offset)
    _, _, miss = GEOD.inv(lon_m, lat_m, got_lon, got_lat)
    assert miss < 0.05
    along, cross = frame.to_plane(lat_m, lon_m)
    assert along == pytest.approx(setback, abs=0.05)
    assert cross == pytest.approx(side * offset, abs=0.05)


def test_arrays_and_scalars_round_trip():
    frame = RunwayFrame(-35.41, 148.92, -35.42, 148.95)
    along = np.array([-18520.0, 0.0, 250.5, 4000.0])
    cross = np.array([0.0, 130.0, -75.0, 1.0])
    lat, lon = frame.to_geographic(along, cross)
    a2, c2 = frame.to_plane(lat, lon)
    np.testing.assert_allclose(a2, along, atol=1e-6)
    np.testing.assert_allclose(c2, cross, atol=1e-6)
    a, c = frame.to_plane(-35.41, 148.92)
    assert isinstance(a, float) and math.isclose(a, 0.0, abs_tol=1e-9)


def test_frame_across_the_antimeridian_wraps_longitudes():
    lon2, lat2, _ = GEOD.fwd(179.99, -16.0, 90.0, 3000.0)
    frame = RunwayFrame(-16.0, 179.99, lat2, lon2)
    assert lon2 < 0  # the end lies east of 180
    _, lon = frame.to_geographic(np.array([0.0, 3000.0]), np.zeros(2))
    assert lon[0] == pytest.approx(179.99) and lon[1] == pytest.approx(lon2, abs=1e-8)
    along, _ = frame.to_plane(lat2, lon2)
    assert along == pytest.approx(3000.0, abs=0.01)
