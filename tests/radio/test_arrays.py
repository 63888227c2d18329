"""Antenna heights and proximity shifts."""

import math

import numpy as np
import pytest
from scipy.optimize import brentq

from geo.radio.arrays import ARRAY_TYPES, antenna_heights_m, array_type, proximity_shifts_m
from geo.site.channels import wavelength_m
from geo.units import M_PER_FT


def test_null_reference_worked_example_in_feet():
    # Common practice, no source: 334.4 MHz, 3 deg -> lower 14.05 ft, upper 28.1 ft; mast 500 ft
    # from the centre line -> upper antenna 0.59 ft toward the runway.
    lam = wavelength_m(334.4)
    low, up = antenna_heights_m("null-reference", lam, 3.0)
    assert low / M_PER_FT == pytest.approx(14.05, abs=0.005)
    assert up / M_PER_FT == pytest.approx(28.1, abs=0.005)
    shifts = proximity_shifts_m([low, up], 500 * M_PER_FT)
    assert shifts[0] == 0.0
    assert shifts[1] / M_PER_FT == pytest.approx(0.59, abs=0.005)


def _gain(h, lam, elev_rad):
    # Horizontal antenna over a perfect conductor: sin(2 pi h sin e / lambda)
    # (Kraus, Antennas, 2nd ed., sec. 11-9).
    return np.sin(2 * np.pi * h * np.sin(elev_rad) / lam)


@pytest.mark.parametrize("freq, angle", [(329.15, 2.5), (332.0, 3.0), (335.0, 3.5)])
def test_heights_from_the_pattern_conditions_by_root_finding(freq, angle):
    # Independent method: find by scipy's brentq the heights where each array's pattern
    # condition holds at the path angle, instead of using the closed form.
    lam, e = wavelength_m(freq), math.radians(angle)
    # Null-reference: the upper (SBO) antenna has its first null on the path; lower = upper / 2.
    upper = brentq(lambda h: _gain(h, lam, e), 0.6 * lam / (2 * math.sin(e)), 1.4 * lam / (2 * math.sin(e)))
    assert antenna_heights_m("null-reference", lam, angle) == pytest.approx([upper / 2, upper], rel=1e-9)
    # Sideband-reference: the patterns of h and 3h cross on the path: sin x = sin 3x, first x > 0.
    low = brentq(lambda h: _gain(h, lam, e) - _gain(3 * h, lam, e), 0.05 * lam / math.sin(e), 0.2 * lam / math.sin(e))
    assert antenna_heights_m("sideband-reference", lam, angle) == pytest.approx([low, 3 * low], rel=1e-9)
    # Capture-effect: h, 2h, 3h with the 2h antenna's first null on the path.
    assert antenna_heights_m("capture-effect", lam, angle) == pytest.approx([upper / 2, upper, 1.5 * upper], rel=1e-9)


def test_slope_correction_uses_theta_minus_slope():
    lam = wavelength_m(332.0)
    tilted = antenna_heights_m("null-reference", lam, 3.0, forward_slope_deg=0.5)
    assert tilted == pytest.approx(antenna_heights_m("null-reference", lam, 2.5), rel=1e-12)
    with pytest.raises(ValueError):
        antenna_heights_m("null-reference", lam, 3.0, forward_slope_deg=3.0)


@pytest.mark.parametrize("array", list(ARRAY_TYPES))
def test_shift_equalises_slant_distance_from_the_centre_line(array):
    # Independent check of the purpose of the shift: from the centre line abeam the mast, every
    # antenna is at the same slant distance to first order. Exactly, (D - s)^2 + h^2 - D^2 - h1^2
    # = s^2, so the residual is s^2 / (2 r): a few mm against tens of cm without the shift.
    lam, offset = wavelength_m(331.4), 120.0
    heights = antenna_heights_m(array, lam, 3.0)
    shifts = proximity_shifts_m(heights, offset)
    slant = [math.hypot(offset - s, h) for h, s in zip(heights, shifts)]
    for r, s in zip(slant, shifts):
        assert r - slant[0] == pytest.approx(s * s / (2 * slant[0]), rel=1e-2, abs=1e-9)
    assert max(slant) - min(slant) < 2e-3
    unshifted = [math.hypot(offset, h) for h in heights]
    assert max(unshifted) - min(unshifted) > 0.1


def test_unknown_array_lists_the_choices():
    with pytest.raises(ValueError, match="null-reference.*sideband-reference.*capture-effect"):
        array_type("yagi")
