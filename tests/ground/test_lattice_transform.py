"""Many points through a lattice of exactly transformed ones: against pyproj's transform of every point.

Source of the check values: pyproj (PROJ) itself, point by point; the tolerance is the module's 1 mm.
"""

import numpy as np
import pytest
from pyproj import Transformer

from geo.ground.lattice_transform import TOLERANCE_M, transform_many

# A transverse Mercator about a point in open country (as a runway frame's), and three targets.
TM = "+proj=tmerc +lat_0=-30.2 +lon_0=146.4 +k=1 +x_0=0 +y_0=0 +ellps=WGS84 +units=m"


def _points(count=60_000, half_m=3_000.0):
    rng = np.random.default_rng(2)
    return rng.uniform(-half_m, half_m, count), rng.uniform(-1_500.0, 4_000.0, count)


@pytest.mark.parametrize(
    ("target", "metres_per_unit"),
    [("EPSG:32755", 1.0), ("EPSG:4326", 111_000.0), ("EPSG:2229", 0.3048006096)],  # UTM 55S, degrees, US feet
)
def test_lattice_reads_the_exact_transform_within_a_millimetre(target, metres_per_unit):
    transformer = Transformer.from_crs(TM, target, always_xy=True)
    east, north = _points()
    x, y = transform_many(transformer, east, north, metres_per_unit)
    ex, ey = transformer.transform(east, north)
    # degrees: a degree of longitude is cos(lat) of a degree of latitude, so the ground error is smaller still
    error_m = np.hypot(np.asarray(x) - ex, np.asarray(y) - ey) * metres_per_unit
    assert float(error_m.max()) <= TOLERANCE_M


def test_across_the_antimeridian_every_point_is_transformed_exactly():
    # Longitudes jump from +180 to -180 inside the box: the lattice check fails, so each point is exact.
    tm = "+proj=tmerc +lat_0=-16.5 +lon_0=179.99 +k=1 +x_0=0 +y_0=0 +ellps=WGS84 +units=m"
    transformer = Transformer.from_crs(tm, "EPSG:4326", always_xy=True)
    east, north = _points()
    x, y = transform_many(transformer, east, north, 111_000.0)
    ex, ey = transformer.transform(east, north)
    assert np.array_equal(np.asarray(x), np.asarray(ex)) and np.array_equal(np.asarray(y), np.asarray(ey))
