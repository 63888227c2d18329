"""The antenna element pattern (each check names its source)."""

import dataclasses
import math

import numpy as np
import pytest
from scipy.optimize import brentq

from geo.radio.arrays import ARRAY_TYPES, antenna_heights_m, proximity_shifts_m
from geo.radio.element import GENERIC_ELEMENT, ISOTROPIC, ElementPattern, element_for
from geo.radio.prediction import ArrayModel, predict_path

LAM = 299_792_458.0 / 332.0e6


@pytest.mark.parametrize("n, fb", [(5.0, 25.0), (1.0, 300.0), (2.0, 20.0), (8.0, 30.0)])
def test_azimuth_beamwidth_against_its_formula(n, fb):
    # Half-power beamwidth (IEEE Std 145-2013): the angle between the directions where the power is
    # half the peak's, found here by scipy's root finder on the pattern itself; the closed form of
    # the module, 4 arccos(((2^-1/2 - b) / (1 - b))^(1/(2n))), must agree.
    element = ElementPattern("test", n, fb, 1.0, "test")

    def half_power(phi):
        return float(element.field(phi, 0.0)) ** 2 - 0.5

    edge = brentq(half_power, 1e-9, math.pi - 1e-9, xtol=1e-14)
    assert element.azimuth_beamwidth_deg() == pytest.approx(2.0 * math.degrees(edge), abs=1e-9)
    # the cardioid (1 + cos phi) / 2 without back level (Balanis, Antenna Theory, sec. 6.2): its
    # half-power edge at cos phi = 2^(1/2) - 1, a beamwidth of 131.06 deg
    if n == 1.0 and fb == 300.0:  # a back level of 1e-15: none
        assert element.azimuth_beamwidth_deg() == pytest.approx(2.0 * math.degrees(math.acos(math.sqrt(2) - 1)))


def test_elevation_beamwidth_and_generic_values():
    # cos e: half power at 45 deg (Balanis, sec. 2.5): a 90 deg beamwidth. Generic values (from
    # memory, the module notes): azimuth beamwidth within 40-70 deg, front-to-back within 20-30 dB.
    assert GENERIC_ELEMENT.elevation_beamwidth_deg() == pytest.approx(90.0)
    assert 40.0 <= GENERIC_ELEMENT.azimuth_beamwidth_deg() <= 70.0
    assert 20.0 <= GENERIC_ELEMENT.front_to_back_db <= 30.0


def test_front_to_back_ratio_is_the_field_ratio_ahead_and_behind():
    # Front-to-back ratio (IEEE Std 145-2013): 20 log10 of the field ahead over the field behind.
    for element in (GENERIC_ELEMENT, element_for("generic", 18.0)):
        ahead, behind = element.toward(np.array([[5.0, 0.0, 0.0], [-3.0, 0.0, 0.0]]))
        assert 20.0 * math.log10(ahead / behind) == pytest.approx(element.front_to_back_db)
    # the vector form agrees with the angle form off the axes
    phi, e = 0.7, -0.2
    d = np.array([math.cos(e) * math.cos(phi), math.cos(e) * math.sin(phi), math.sin(e)])
    assert GENERIC_ELEMENT.toward(d[None, :])[0] == pytest.approx(float(GENERIC_ELEMENT.field(phi, e)))
    assert np.all(ISOTROPIC.toward(np.random.default_rng(1).normal(size=(20, 3))) == 1.0)
    with pytest.raises(ValueError, match="must be one of generic, isotropic"):
        element_for("dipole")


def test_far_field_path_and_sector_do_not_move_over_a_horizontal_plane():
    # Image theory (Kraus, Antennas, sec. 11-9): toward a distant receiver at elevation e the direct
    # wave leaves at +e and the reflected one at -e; an element pattern even in elevation multiplies
    # both, and every antenna, by the same factor, so the far-field DDM, the path angle and the
    # sector cannot change (to rounding).
    for array in ARRAY_TYPES:
        t = ARRAY_TYPES[array]
        heights = antenna_heights_m(array, LAM, 3.0, 0.0)
        shifts = proximity_shifts_m(heights, 120.0)
        point = ArrayModel.build(heights, shifts, t.csb_feed, t.sbo_feed, LAM, phase_for_angle_deg=3.0)
        patterned = dataclasses.replace(point, element=GENERIC_ELEMENT)
        _same_far_path(point, patterned)


def _same_far_path(point, patterned):
    a = predict_path(point, 3.0, 300.0, 120.0)
    b = predict_path(patterned, 3.0, 300.0, 120.0)
    assert b.path_angle_deg == pytest.approx(a.path_angle_deg, abs=1e-9)
    assert b.half_sector_below_deg == pytest.approx(a.half_sector_below_deg, abs=1e-9)
    assert b.half_sector_above_deg == pytest.approx(a.half_sector_above_deg, abs=1e-9)
    # the field itself does carry the pattern: 30 deg off the boresight the carrier is weaker by F(30 deg, e)
    c0, _ = point.far_fields(math.radians(3.0), math.radians(30.0))
    c1, _ = patterned.far_fields(math.radians(3.0), math.radians(30.0))
    expected = float(GENERIC_ELEMENT.field(math.radians(30.0), math.radians(3.0)))
    assert abs(c1[0]) / abs(c0[0]) == pytest.approx(expected, rel=1e-9)
