"""Annex 14 surfaces against hand-worked values from the surface definitions."""

import numpy as np
import pytest

from geo.surfaces import DEFAULT_SURFACES, SurfaceSpec, mast_clearance, surface_heights_m


def test_surface_heights_hand_worked():
    # ICAO Annex 14 Vol I, 8th edition (2018), values from memory (see geo.surfaces): code 3-4 precision
    # approach runway, strip half-width 140 m, transitional 14.3 % from the strip edge, inner transitional
    # 33.3 % from 60 m. Hand-worked: at 120 m, inner transitional (120 - 60) * 0.333 = 19.98 m, the
    # transitional does not reach (inside the strip); at 200 m, (200 - 60) * 0.333 = 46.62 m and
    # (200 - 140) * 0.143 = 8.58 m.
    inner, trans = surface_heights_m(np.array([50.0, 120.0, 200.0]), DEFAULT_SURFACES)
    assert np.isnan(inner[0]) and np.isnan(trans[0]) and np.isnan(trans[1])
    assert inner[1] == pytest.approx(19.98) and inner[2] == pytest.approx(46.62)
    assert trans[2] == pytest.approx(8.58)


def test_mast_clearance_and_penetration():
    # Hand-worked with the 150 m strip of the editions before 2018 (memory): mast top 10 m above the centre
    # line at 75 m: inner transitional (75 - 60) * 0.333 = 4.995 m, penetrated by 5.005 m; in the strip.
    old = SurfaceSpec(strip_half_width_m=150.0)
    c = mast_clearance(np.array([75.0, 160.0]), np.array([110.0, 110.0]), np.array([100.0, 100.0]), old)
    assert c.inner_transitional_margin_m[0] == pytest.approx(4.995 - 10.0)
    assert c.transitional_margin_m[1] == pytest.approx(10 * 0.143 - 10.0)
    assert list(c.penetrates) == [True, True] and list(c.in_strip) == [True, False]
    tall_ok = mast_clearance(np.array([120.0]), np.array([105.0]), np.array([100.0]), old)
    assert not tall_ok.penetrates[0]


def test_surfaces_from_the_site_file(write_site, site_text):
    from geo.site import load_site

    spec = load_site(write_site(site_text + "\n[surfaces]\nstrip_half_width = 150\ninner_transitional_slope = 0.4\n"))
    assert spec.surfaces.strip_half_width_m == 150.0 and spec.surfaces.inner_transitional_slope == 0.4
    assert spec.surfaces.transitional_slope == DEFAULT_SURFACES.transitional_slope
