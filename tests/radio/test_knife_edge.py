"""Single knife-edge diffraction against ITU-R P.526, the Fresnel integrals and independent integrals."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import quad
from scipy.special import fresnel

from geo.radio.knife_edge import (
    TABLE_LIMIT,
    exact_loss_db,
    fresnel_parameter,
    knife_edge_field,
    knife_edge_field_fast,
    knife_edge_loss_db,
    ridge_on_ground_field,
)


def p526_j(v):
    """ITU-R P.526 sec. 4.1, the single knife-edge loss, written here (0 dB for v <= -0.78). [dB]"""
    v = np.asarray(v, dtype=float)
    return np.where(v > -0.78, 6.9 + 20.0 * np.log10(np.sqrt((v - 0.1) ** 2 + 1.0) + v - 0.1), 0.0)


@pytest.mark.parametrize("v", [-1.0, np.linspace(-1.0, 3.0, 41), np.array([0.5])], ids=["scalar", "array", "one"])
def test_the_loss_is_p526s_formula(v):
    # ITU-R P.526 sec. 4.1 (the formula above), on a scalar, an array and a one-element array.
    assert np.allclose(knife_edge_loss_db(v), p526_j(v), atol=1e-12)
    assert np.shape(knife_edge_loss_db(v)) == np.shape(v)


def test_the_exact_loss_agrees_with_p526_within_half_a_db():
    # ITU-R P.526's J(v) = 6.9 + 20 log10(sqrt((v - 0.1)^2 + 1) + v - 0.1) approximates
    # -20 log10 |F(v)| (Born and Wolf 1999, sec. 8.7). The range v in -1..3: the formula
    # as written (P.526 states it for v > -0.78 and takes 0 dB below) against the exact loss,
    # within 0.5 dB over the whole range (measured: 0.35 dB at most, at v = -1).
    v = np.linspace(-1.0, 3.0, 401)
    formula = 6.9 + 20.0 * np.log10(np.sqrt((v - 0.1) ** 2 + 1.0) + v - 0.1)
    assert np.max(np.abs(exact_loss_db(v) - formula)) < 0.5
    # With P.526's 0 dB below -0.78 the agreement holds from -0.7 (the lit region's ripple there is
    # within 0.5 dB of 0); below -0.78 the exact loss is the ripple, above -1.4 dB (|F| <= 1.17).
    v = np.linspace(-0.7, 3.0, 371)
    assert np.max(np.abs(exact_loss_db(v) - p526_j(v))) < 0.5
    lit = np.linspace(-1.0, -0.78, 23)
    assert np.all(exact_loss_db(lit) < 0.0) and np.all(exact_loss_db(lit) > -1.4)


def test_textbook_values_of_the_field_factor():
    # Born and Wolf (1999) sec. 8.7: on the shadow boundary the amplitude is half (6.02 dB, 20 log10 2);
    # far in the lit region F -> 1; deep in the shadow |F| -> 1 / (pi v sqrt 2).
    assert abs(knife_edge_field(0.0)) == pytest.approx(0.5, abs=1e-12)
    assert float(exact_loss_db(0.0)) == pytest.approx(20.0 * math.log10(2.0), abs=1e-9)
    assert abs(knife_edge_field(-1000.0) - 1.0) < 1e-3
    for v in (10.0, 30.0):
        assert abs(knife_edge_field(v)) == pytest.approx(1.0 / (math.pi * v * math.sqrt(2.0)), rel=0.01)


def test_the_field_factor_is_the_fresnel_integral_taken_numerically():
    # Independent: (1 + j) / 2 times the integral of exp(-j pi s^2 / 2) from v to infinity, as 1/2 (1 - j)
    # (the half-line integral, Born and Wolf sec. 8.7) minus the integral from 0 to v by quadrature.
    for v in (-2.0, -0.5, 0.0, 0.7, 2.5):
        re = quad(lambda s: math.cos(math.pi * s * s / 2), 0.0, v)[0]
        im = quad(lambda s: -math.sin(math.pi * s * s / 2), 0.0, v)[0]
        expected = (1 + 1j) / 2 * (0.5 - 0.5j - (re + 1j * im))
        assert abs(knife_edge_field(v) - expected) < 1e-9


def test_the_table_interpolates_the_fresnel_integrals_within_5e_5():
    # Measured error of the fast form against scipy.special.fresnel, inside the table and beyond it
    # (the asymptotic term), on random v.
    rng = np.random.default_rng(5)
    v = np.r_[rng.uniform(-TABLE_LIMIT, TABLE_LIMIT, 200_000), rng.uniform(-200.0, 200.0, 20_000), 0.0, TABLE_LIMIT]
    s, c = fresnel(v)
    reference = (1 + 1j) / 2 * ((0.5 - c) - 1j * (0.5 - s))
    error = np.abs(knife_edge_field_fast(v) - reference)
    print(f"\nlargest interpolation error {error.max():.2e}")
    assert error.max() < 5e-5
    assert knife_edge_field_fast(np.zeros((2, 3))).shape == (2, 3)


def test_the_parameter_follows_from_the_path_difference():
    # Born and Wolf sec. 8.7 / ITU-R P.526: v^2 = 4 delta / lambda, delta the excess length of the path
    # over the edge, sqrt(d1^2 + h^2) + sqrt(d2^2 + h^2) - d1 - d2 (exact geometry here), for h << d.
    lam = 0.895
    for h, d1, d2 in ((1.0, 400.0, 160.0), (-0.3, 50.0, 900.0), (2.0, 1000.0, 1000.0)):
        delta = math.hypot(d1, h) + math.hypot(d2, h) - d1 - d2
        v = float(fresnel_parameter(h, d1, d2, lam))
        assert v == pytest.approx(math.copysign(math.sqrt(4.0 * delta / lam), h), rel=1e-4)


def test_an_obstacle_with_its_image_is_a_strip_of_the_aperture():
    # Independent: the aperture without the strip from v_bottom to v_top, by quadrature of the strip
    # (1 minus (1 + j) / 2 times the integral over the strip; Born and Wolf sec. 8.7, Babinet).
    for top, bottom in ((0.3, -0.5), (-1.0, -1.2), (2.0, -3.0)):
        re = quad(lambda s: math.cos(math.pi * s * s / 2), bottom, top)[0]
        im = quad(lambda s: -math.sin(math.pi * s * s / 2), bottom, top)[0]
        expected = 1.0 - (1 + 1j) / 2 * (re + 1j * im)
        assert abs(ridge_on_ground_field(top, bottom, fast=False) - expected) < 1e-9
        assert abs(ridge_on_ground_field(top, bottom) - expected) < 1e-4
    # No obstacle (its top on the ground line): nothing blocked, exactly 1.
    assert ridge_on_ground_field(np.array([0.4, -2.0]), np.array([0.4, -2.0])) == pytest.approx(1.0, abs=0.0)
    # A tall obstacle: its image's edge far below, the single knife edge (within 1 %).
    assert abs(ridge_on_ground_field(0.5, -60.0) - knife_edge_field(0.5)) < 0.01
