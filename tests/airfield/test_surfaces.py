"""Annex 14 surfaces against hand-worked values from the surface definitions."""

import re

import numpy as np
import pytest

from geo.airfield.surfaces import DEFAULT_SURFACES, SurfaceSpec, mast_clearance, surface_heights_m
from geo.errors import SiteFileError


def test_surface_heights_hand_worked():
    # ICAO Annex 14 Vol I, 8th edition (2018), values from memory (see geo.airfield.surfaces): code 3-4 precision
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
    from geo.site.site_file import load_site

    spec = load_site(write_site(site_text + "\n[surfaces]\nstrip_half_width = 150\ninner_transitional_slope = 0.4\n"))
    assert spec.surfaces.strip_half_width_m == 150.0 and spec.surfaces.inner_transitional_slope == 0.4
    assert spec.surfaces.transitional_slope == DEFAULT_SURFACES.transitional_slope


# --- Obstacle free zone ------------------------------------------------------------------------------
# Hand-worked from ICAO Annex 14 Vol I (8th ed., 2018), values from memory: Chapter 1 (the OFZ is the
# airspace above the inner approach, inner transitional and balked landing surfaces and the part of the
# strip they bound); Table 4-1, code 3-4 precision approach: inner approach 120 m wide (half-width 60 m),
# 60 m before the threshold, 900 m long, 2 %; inner transitional 33.3 %; balked landing from 1,800 m past
# the threshold or the runway end, whichever is nearer, 10 % divergence, 4 %; inner horizontal surface
# 45 m high (where the inner transitional surface ends). Code 1-2: half-width 45 m, inner transitional 40 %.


def test_obstacle_free_zone_floor_hand_worked():
    from geo.airfield.surfaces import obstacle_free_zone, surfaces_for_code

    along = np.array([300.0, 300.0, 300.0, 300.0, -500.0, -1000.0, 2500.0, 2500.0])
    lateral = np.array([40.0, 60.0, 100.0, 200.0, 30.0, 0.0, 100.0, 150.0])
    z = obstacle_free_zone(along, lateral, 3000.0)
    # 40 m and 60 m abeam: in the strip between the inner transitional surfaces, floor at the centre line.
    assert z.floor_height_m[0] == 0.0 and z.floor_height_m[1] == 0.0 and z.part[0] == "strip"
    # 100 m: (100 - 60) * 0.333 = 13.32 m on the inner transitional surface.
    assert z.floor_height_m[2] == pytest.approx(13.32) and z.part[2] == "inner transitional surface"
    # 200 m: (200 - 60) * 0.333 = 46.6 m, above the 45 m inner horizontal surface: the zone ends there.
    assert np.isnan(z.floor_height_m[3]) and z.part[3] == ""
    # 500 m before the threshold: inner approach (500 - 60) * 0.02 = 8.8 m; 1,000 m before: past its 960 m end.
    assert z.floor_height_m[4] == pytest.approx(8.8) and z.part[4] == "inner approach surface"
    assert np.isnan(z.floor_height_m[5])
    # 2,500 m past the threshold of a 3,000 m runway: balked landing (2,500 - 1,800) * 0.04 = 28 m, its side
    # 60 + 700 * 0.1 = 130 m out; at 150 m the inner transitional rises from that side: 28 + 20 * 0.333 = 34.66 m.
    assert z.floor_height_m[6] == pytest.approx(28.0) and z.part[6] == "balked landing surface"
    assert z.floor_height_m[7] == pytest.approx(34.66)
    # A 1,200 m runway: the balked landing surface starts at its end; 100 m past it, 4 m; with a 1 % uphill
    # runway the centre line beneath has risen 1 m more than at the surface's inner edge: 3 m above it.
    short = obstacle_free_zone(np.array([1300.0]), np.array([0.0]), 1200.0)
    assert short.floor_height_m[0] == pytest.approx(4.0)
    uphill = obstacle_free_zone(np.array([1300.0]), np.array([0.0]), 1200.0, runway_gradient=0.01)
    assert uphill.floor_height_m[0] == pytest.approx(3.0)
    # Code 1-2: at 60 m, (60 - 45) * 0.40 = 6 m.
    code2 = obstacle_free_zone(np.array([300.0]), np.array([60.0]), 3000.0, surfaces_for_code(2))
    assert code2.floor_height_m[0] == pytest.approx(6.0)


def test_mast_in_the_obstacle_free_zone():
    # A 10 m mast top: in the zone at 60 m (strip) and 80 m ((80 - 60) * 0.333 = 6.66 m < 10 m), clear at
    # 100 m (13.32 m floor, 3.32 m margin).
    c = mast_clearance(
        np.array([60.0, 80.0, 100.0]),
        np.full(3, 110.0),
        np.full(3, 100.0),
        DEFAULT_SURFACES,
        setback_m=np.full(3, 300.0),
        runway_length_m=3000.0,
    )
    assert list(c.in_obstacle_free_zone) == [True, True, False]
    assert c.ofz_margin_m[0] == pytest.approx(-10.0) and c.ofz_margin_m[1] == pytest.approx(6.66 - 10.0)
    assert c.ofz_margin_m[2] == pytest.approx(13.32 - 10.0)


def _demo_at(offset_m: float, **surfaces):
    import dataclasses

    from tests_support import DEMO_SITE, without_surface

    from geo.site.site_file import load_site
    from geo.study.site_study import run_study

    spec = without_surface(load_site(DEMO_SITE))  # the mast clearance does not depend on the surface prediction
    spec = dataclasses.replace(
        spec,
        mast=dataclasses.replace(spec.mast, offset_m=offset_m),
        surfaces=dataclasses.replace(spec.surfaces, **surfaces),
    )
    return next(f for f in run_study(spec).findings if f.code == "mast-clearance")


@pytest.mark.parametrize("offset_m", [40.0, 60.0])
def test_demo_mast_beside_the_runway_edge_fails(offset_m):
    # The case: the demo mast (about 9.7 m high with its 1 m allowance) 40 m (17.5 m from the 45 m
    # runway's edge) or 60 m from the centre line stands in the strip part of the OFZ.
    f = _demo_at(offset_m)
    assert f.severity == "fail"
    assert "obstacle free zone" in f.message and "strip between the inner transitional surfaces" in f.message
    assert re.search(r"\d m \(\S+ ft\) above its floor", f.message)
    allowed = _demo_at(offset_m, allow_in_obstacle_free_zone=True)
    assert allowed.severity == "warning" and "allow_in_obstacle_free_zone = true" in allowed.message


def test_demo_mast_at_its_own_offset_names_each_surface_and_margin():
    # 120 m: (120 - shift - 60) * 0.333 is about 20 m over a 9.5 m top; inside the 140 m strip (info).
    f = _demo_at(120.0)
    assert f.severity == "info"
    assert re.search(
        r"is \d+\.\d+ m \(\S+ ft\) below the obstacle free zone's floor, the inner transitional", f.message
    )
    assert "transitional surface does not reach it" in f.message and "below the surfaces' lower edges" not in f.message


def test_allow_key_in_the_site_file(write_site, site_text):
    from geo.site.site_file import load_site

    spec = load_site(
        write_site(site_text + "\n[surfaces]\nallow_in_obstacle_free_zone = true\nbalked_landing_start = 1500\n")
    )
    assert spec.surfaces.allow_in_obstacle_free_zone and spec.surfaces.balked_landing_start_m == 1500.0
    with pytest.raises(SiteFileError, match="surfaces.allow_in_obstacle_free_zone: must be true or false"):
        load_site(write_site(site_text + "\n[surfaces]\nallow_in_obstacle_free_zone = 1\n"))
    # A code 2 runway without [surfaces] takes the code 1-2 defaults (Annex 14 Table 4-1, memory).
    code2 = load_site(write_site(site_text.replace("width = 45", "width = 30\ncode = 2")))
    assert code2.surfaces.inner_transitional_start_m == 45.0 and code2.surfaces.inner_transitional_slope == 0.40
