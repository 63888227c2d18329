"""Exact Fresnel zones and their unions, against closed forms, brute force and common practice."""

import math

import numpy as np
import pytest
import shapely

from geo.radio.arrays import antenna_heights_m
from geo.radio.fresnel import ellipse_axes, exact_ellipses, far_field_ellipse
from geo.radio.zones import (
    antenna_zone,
    coverage_grid,
    coverage_receivers,
    coverage_zone,
    path_receivers,
    reflection_zones,
    swept_zone,
    united_zone,
)
from geo.site.channels import wavelength_m
from geo.units import M_PER_FT


@pytest.mark.parametrize("h, psi_deg", [(4.3, 3.0), (8.6, 3.0), (2.1, 2.5), (12.9, 3.5)])
def test_far_field_limit_equals_the_closed_form(h, psi_deg):
    # Closed form of the far-field zone (../shared/REFERENCE.md, derived; Hristov 2000 ch. 2):
    # centre a cos(psi)/sin^2(psi), semi-axes q/sin^2(psi) and q/sin(psi). A receiver 1e8 m away.
    lam, psi = 0.9, math.radians(psi_deg)
    far = far_field_ellipse(h, lam, psi)
    rx = 1e8 * np.array([[math.cos(psi), 0.0, math.sin(psi)]])
    centre, q = exact_ellipses([0.0, 0.0, h], rx, lam)
    major, minor, angle = ellipse_axes(q)
    assert centre[0, 0] == pytest.approx(far.centre_m, rel=1e-4)
    assert centre[0, 1] == pytest.approx(0.0, abs=1e-6)
    assert major[0] == pytest.approx(far.semi_along_m, rel=1e-4)
    assert minor[0] == pytest.approx(far.semi_across_m, rel=1e-4)
    assert abs(math.sin(angle[0])) < 1e-9


def _boundary(centre, q, n=360):
    values, vectors = np.linalg.eigh(q)
    t = np.linspace(0, 2 * np.pi, n, endpoint=False)
    local = np.column_stack([np.cos(t) / math.sqrt(values[0]), np.sin(t) / math.sqrt(values[1])])
    return centre + local @ vectors.T


@pytest.mark.parametrize("seed", range(6))
def test_exact_ellipse_boundary_has_half_a_wavelength_of_excess_path(seed):
    # Independent brute force: on the ellipse's boundary the ground path A-P-R exceeds the
    # specular path |A'R| by exactly lambda/2; inside by less, outside by more.
    rng = np.random.default_rng(seed)
    lam = wavelength_m(rng.uniform(329.15, 335.0))
    antenna = np.array([0.0, rng.uniform(0, 1), rng.uniform(2, 15)])
    rx = np.array([rng.uniform(200, 20000), rng.uniform(-2000, 2000), rng.uniform(10, 1000)])
    centre, q = exact_ellipses(antenna, rx[None, :], lam)
    pts = _boundary(centre[0], q[0])
    ground = np.column_stack([pts, np.zeros(len(pts))])
    image = antenna * [1, 1, -1]

    def excess(g):
        return np.linalg.norm(g - antenna, axis=1) + np.linalg.norm(g - rx, axis=1) - np.linalg.norm(rx - image)

    np.testing.assert_allclose(excess(ground), lam / 2, atol=1e-6)
    inner = np.column_stack([centre[0] + 0.9 * (pts - centre[0]), np.zeros(len(pts))])
    outer = np.column_stack([centre[0] + 1.1 * (pts - centre[0]), np.zeros(len(pts))])
    assert np.all(excess(inner) < lam / 2) and np.all(excess(outer) > lam / 2)


def test_union_area_against_a_brute_force_grid():
    # Independent method: count grid points inside any ellipse (direct quadratic test).
    lam = wavelength_m(332.0)
    rx = path_receivers(300.0, 120.0, 3.0, 25)
    centre, q = exact_ellipses([0.0, 0.0, 4.3], rx, lam)
    zone = united_zone(centre, q)
    u0, w0, u1, w1 = zone.polygon.bounds
    step = 0.5
    uu, ww = np.meshgrid(np.arange(u0 - 5, u1 + 5, step), np.arange(w0 - 5, w1 + 5, step))
    pts = np.column_stack([uu.ravel(), ww.ravel()])
    inside = np.zeros(len(pts), dtype=bool)
    for c, m in zip(centre, q):
        d = pts - c
        inside |= np.einsum("ni,ij,nj->n", d, m, d) <= 1.0
    assert zone.area_m2 == pytest.approx(inside.sum() * step * step, rel=0.005)


@pytest.mark.parametrize("kind", ["path", "coverage"])
def test_doubling_the_sampling_changes_the_area_by_less_than_half_a_percent(kind):
    lam = wavelength_m(332.0)
    if kind == "path":
        base = antenna_zone(4.3, 0.0, path_receivers(300.0, 120.0, 3.0, 667), lam, blocks=3)
        more_receivers = antenna_zone(4.3, 0.0, path_receivers(300.0, 120.0, 3.0, 1334), lam, blocks=3)
        more_rows = antenna_zone(4.3, 0.0, path_receivers(300.0, 120.0, 3.0, 667), lam, rows=320, blocks=3)
    else:
        base = coverage_zone(4.3, 0.0, coverage_receivers(300.0, 120.0, 3.0, 2000), lam)
        more_receivers = coverage_zone(4.3, 0.0, coverage_receivers(300.0, 120.0, 3.0, 4000), lam)
        ahead = antenna_zone(
            4.3, 0.0, coverage_receivers(300.0, 120.0, 3.0, 2000), lam, rows=320, blocks=coverage_grid(2000)[0]
        )
        more_rows = swept_zone(ahead.polygon, (0.0, 0.0), math.radians(8.0), 2000, bins=2000, spacing_m=0.125)
    assert more_receivers.area_m2 == pytest.approx(base.area_m2, rel=0.005)
    assert more_rows.area_m2 == pytest.approx(base.area_m2, rel=0.005)
    assert base.receivers >= 2000


def test_coverage_sweep_in_azimuth_against_receivers_spread_in_azimuth():
    # Independent method: place the receivers explicitly at 129 azimuths across +/-8 deg (Annex 10 Vol I
    # 3.1.5.3.1) and unite all their exact zones; the closed-form sweep of the azimuth-0 zones must agree
    # (the explicit set scallops between azimuths, a little below the sweep).
    lam = wavelength_m(332.0)
    rx = coverage_receivers(300.0, 120.0, 3.0, 120)
    swept = coverage_zone(4.3, 0.0, rx, lam)
    spread = []
    for a in np.radians(np.linspace(-8.0, 8.0, 129)):
        turned = rx.copy()
        turned[:, 0], turned[:, 1] = rx[:, 0] * math.cos(a), rx[:, 0] * math.sin(a)
        spread.append(turned)
    centres, q = exact_ellipses([0.0, 0.0, 4.3], np.concatenate(spread), lam)
    explicit = united_zone(centres, q, rows=800, blocks=129 * coverage_grid(120)[0])
    assert explicit.area_m2 == pytest.approx(swept.area_m2, rel=0.005)
    assert explicit.area_m2 <= swept.area_m2 * 1.0005


def test_null_reference_path_zone_reaches_the_rule_of_thumb():
    # Common practice, no source: 1,500 to 2,000 ft of graded ground in front of a null-reference
    # mast. Flat ground, 332 MHz, 3 deg, mast 300 m past the threshold and 120 m off the centre line.
    lam = wavelength_m(332.0)
    low = antenna_heights_m("null-reference", lam, 3.0)[0]
    zone = antenna_zone(low, 0.0, path_receivers(300.0, 120.0, 3.0, 667), lam)
    assert 1500 <= zone.far_m / M_PER_FT <= 2000


def test_zones_per_antenna_and_all():
    lam = wavelength_m(332.0)
    hs = antenna_heights_m("capture-effect", lam, 3.0)
    zones = reflection_zones(("lower", "middle", "upper"), hs, [0.0, 0.2, 0.6], 300.0, 120.0, 3.0, lam)
    names = [(z.antenna, z.kind) for z in zones]
    assert names == [(a, k) for k in ("path", "coverage") for a in ("lower", "middle", "upper", "all")]
    by = {(z.antenna, z.kind): z.shape for z in zones}
    for kind in ("path", "coverage"):
        union = shapely.union_all([by[(a, kind)].polygon for a in ("lower", "middle", "upper")])
        assert by[("all", kind)].area_m2 == pytest.approx(union.area, rel=1e-9)
        assert by[("all", kind)].far_m >= by[("upper", kind)].far_m
    # A higher antenna's zone starts farther from the mast (specular point h cot(psi)).
    assert by[("lower", "path")].near_m < by[("middle", "path")].near_m < by[("upper", "path")].near_m
