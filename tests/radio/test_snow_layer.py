"""Reflection by the ground classes and by a layer of snow: against the Fresnel formula and an
independent boundary-value solution written here."""

from __future__ import annotations

import numpy as np
import pytest

from geo.radio.ground_constants import GROUND_CLASSES, dry_snow_permittivity
from geo.radio.reflection import complex_permittivity, layered_reflection_coefficient_h, reflection_coefficient_h

LAMBDA_M = 0.9  # about 333 MHz (invented test value)
PSI = np.radians([0.5, 1.0, 2.64, 3.0, 5.0, 20.0, 60.0])


def fresnel_h(psi, eps):
    """Fresnel, perpendicular (horizontal) polarisation, written from the grazing angle: Balanis,
    Advanced Engineering Electromagnetics (1989), eq. 5-24 with theta_i = 90 deg - psi and
    n2 cos(theta_t) = sqrt(eps - sin^2 theta_i)."""
    cos_i = np.sin(psi)
    root = np.sqrt(eps - (1.0 - cos_i**2) + 0j)
    return (cos_i - root) / (cos_i + root)


def slab_by_boundary_conditions(psi, eps1, d, eps2, lam):
    """The same reflection solved from the boundary conditions: TE fields A e^{-j kz z} + B e^{+j kz z}
    in each medium, E_y and dE_y/dz continuous at z = 0 (top) and z = -d (ground), nothing coming up
    from the ground (a 4x4 linear system; Born and Wolf, Principles of Optics, sec. 1.6)."""
    k = 2 * np.pi / lam
    out = []
    for p in np.atleast_1d(psi):
        c2 = np.cos(p) ** 2
        k0, k1, k2 = k * np.sin(p), k * np.sqrt(eps1 - c2 + 0j), k * np.sqrt(eps2 - c2 + 0j)
        # unknowns r (air, up), a, b (layer down/up), t (ground, down); incident e^{+j k0 z} going down.
        m = np.array(
            [
                [1, -1, -1, 0],
                [-1j * k0, -1j * k1, 1j * k1, 0],
                [0, np.exp(-1j * k1 * d), np.exp(1j * k1 * d), -np.exp(-1j * k2 * d)],
                [0, -1j * k1 * np.exp(-1j * k1 * d), 1j * k1 * np.exp(1j * k1 * d), 1j * k2 * np.exp(-1j * k2 * d)],
            ],
            dtype=complex,
        )
        # layout: air field = e^{j k0 z} + r e^{-j k0 z}, layer a e^{j k1 z} + b e^{-j k1 z}, ground t e^{j k2 z}
        rhs = np.array([-1, -1j * k0, 0, 0], dtype=complex)
        out.append(np.linalg.solve(m, rhs)[0])
    return np.array(out)


@pytest.mark.parametrize("name", ["dry", "medium", "wet"])
def test_ground_classes_reflect_as_fresnel(name):
    g = GROUND_CLASSES[name]
    eps = g.relative_permittivity - 1j * 60 * LAMBDA_M * g.conductivity_s_m  # ITU-R P.527 complex permittivity
    got = reflection_coefficient_h(PSI, g.relative_permittivity, g.conductivity_s_m, LAMBDA_M)
    assert np.allclose(got, fresnel_h(PSI, eps), rtol=0, atol=1e-12)
    assert np.all(np.abs(got) < 1.0)


def test_ground_class_values_as_stated():
    # ITU-R P.527-3 Fig. 1 near 330 MHz, from memory (curves B, D, E): the values the module states.
    assert (GROUND_CLASSES["wet"].relative_permittivity, GROUND_CLASSES["wet"].conductivity_s_m) == (30.0, 0.02)
    assert (GROUND_CLASSES["medium"].relative_permittivity, GROUND_CLASSES["medium"].conductivity_s_m) == (15.0, 0.005)
    assert (GROUND_CLASSES["dry"].relative_permittivity, GROUND_CLASSES["dry"].conductivity_s_m) == (3.0, 1e-4)


def test_layer_of_no_thickness_is_the_ground():
    ground = complex_permittivity(15.0, 0.005, LAMBDA_M)
    got = layered_reflection_coefficient_h(PSI, dry_snow_permittivity(), 0.0, ground, LAMBDA_M)
    assert np.allclose(got, fresnel_h(PSI, ground), atol=1e-12)


def test_layer_of_air_delays_the_ground():
    ground = complex_permittivity(30.0, 0.02, LAMBDA_M)
    d = 0.37
    got = layered_reflection_coefficient_h(PSI, 1.0 + 0j, d, ground, LAMBDA_M)
    # image theory: the ground d lower adds the path 2 d sin(psi) (Kraus, Antennas, sec. 11-9)
    want = fresnel_h(PSI, ground) * np.exp(-2j * 2 * np.pi / LAMBDA_M * d * np.sin(PSI))
    assert np.allclose(got, want, atol=1e-12)


@pytest.mark.parametrize("d", [0.1, 0.5, 1.3])
def test_layer_against_boundary_conditions(d):
    ground = complex_permittivity(15.0, 0.005, LAMBDA_M)
    snow = dry_snow_permittivity()
    got = layered_reflection_coefficient_h(PSI, snow, d, ground, LAMBDA_M)
    want = slab_by_boundary_conditions(PSI, snow, d, ground, LAMBDA_M)
    assert np.allclose(got, want, atol=1e-10)
    lossy = complex(2.5, -0.15)  # a lossy layer too (invented test value)
    assert np.allclose(
        layered_reflection_coefficient_h(PSI, lossy, d, ground, LAMBDA_M),
        slab_by_boundary_conditions(PSI, lossy, d, ground, LAMBDA_M),
        atol=1e-10,
    )


def test_dry_snow_permittivity_formula():
    # Tiuri et al. (1984), from memory: eps' = 1 + 1.7 rho + 0.7 rho^2, rho in g/cm3
    for rho in (0.1, 0.3, 0.5):
        assert dry_snow_permittivity(rho) == pytest.approx(1 + 1.7 * rho + 0.7 * rho**2)
