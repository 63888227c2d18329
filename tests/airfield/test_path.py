"""RDH, path over the threshold, GPIP and the setback solver against independent constructions."""

import math

import numpy as np
import pytest
from scipy.optimize import brentq

from geo.airfield.path import (
    gpip_along_m,
    path_height_over_threshold_m,
    rdh_m,
    runway_gradient,
    setback_for_rdh_m,
)

# (intercept elevation, setback, offset, angle, threshold elevation, end elevation, length)
CASES = [
    (511.2, 290.0, 130.0, 3.0, 512.0, 515.0, 2941.97),  # uphill runway, mast ground low
    (611.4, 307.2, 120.0, 3.0, 612.0, 606.4, 2800.0),  # downhill runway
    (100.0, 300.0, 150.0, 2.5, 100.0, 100.0, 3000.0),  # flat
    (45.0, 380.0, 200.0, 3.5, 43.2, 50.0, 2200.0),  # mast ground above the threshold
]


@pytest.mark.parametrize("zi, s, d, theta, zt, ze, length", CASES)
def test_rdh_and_gpip_against_line_intersection(zi, s, d, theta, zt, ze, length):
    # Independent method: the straight path is the line through (s, zi) with slope -tan(theta)
    # toward the approach; the runway the line through (0, zt), (length, ze). Intersect them
    # numerically (scipy brentq) and read the path height at x = 0.
    t = math.tan(math.radians(theta))

    def path(x):
        return zi + (s - x) * t

    def runway(x):
        return zt + (ze - zt) * x / length

    assert rdh_m(zi, s, theta, zt) == pytest.approx(path(0.0) - zt, abs=1e-9)
    x_gpip = brentq(lambda x: path(x) - runway(x), -5000.0, 5000.0, xtol=1e-10)
    g = runway_gradient(zt, ze, length)
    assert gpip_along_m(rdh_m(zi, s, theta, zt), theta, g) == pytest.approx(x_gpip, abs=1e-6)


@pytest.mark.parametrize("zi, s, d, theta, zt, ze, length", CASES)
def test_path_over_threshold_is_at_the_path_angle_seen_from_the_mast(zi, s, d, theta, zt, ze, length):
    # Independent method: the actual path is where the elevation angle seen from the mast's
    # ground point (s, d, zi) equals theta; solve for the height over the threshold with brentq.
    h = path_height_over_threshold_m(zi, s, d, theta, zt)
    z = brentq(lambda z: math.degrees(math.atan2(z - zi, math.hypot(s, d))) - theta, zi, zi + 500.0, xtol=1e-10)
    assert h == pytest.approx(z - zt, abs=1e-6)
    assert h > rdh_m(zi, s, theta, zt)  # the cone lies above the straight extension


@pytest.mark.parametrize("target", [12.0, 15.0, 16.5, 18.0])
@pytest.mark.parametrize("zi, s, d, theta, zt, ze, length", CASES)
def test_setback_solver_round_trips(target, zi, s, d, theta, zt, ze, length):
    solved = setback_for_rdh_m(target, zi, theta, zt)
    assert rdh_m(zi, solved, theta, zt) == pytest.approx(target, abs=1e-9)


def test_flat_runway_gpip_is_abeam_the_mast_when_the_ground_is_level():
    # Geometry: on level ground the straight path meets the runway abeam the reflection point.
    for s in np.linspace(200.0, 450.0, 6):
        assert gpip_along_m(rdh_m(300.0, s, 3.0, 300.0), 3.0, 0.0) == pytest.approx(s, abs=1e-9)


def test_runway_falling_faster_than_the_path_is_refused():
    with pytest.raises(ValueError):
        gpip_along_m(15.0, 3.0, -math.tan(math.radians(3.1)))
