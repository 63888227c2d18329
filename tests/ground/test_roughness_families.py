"""Roughness per receiver family: specular grazing angles against an independent construction, and
the demo's families measured."""

import math

import numpy as np
import pytest
from tests_support import DEMO_SITE, without_surface

from geo.ground.roughness import (
    far_field_grazing_deg,
    roughness_by_family,
    roughness_verdicts,
    specular_grazing_deg,
    strictest_family,
)


def _image_construction_deg(h, receiver_uwz, gu, gw):
    # Independent construction (Beckmann and Spizzichino 1963, ch. 3): mirror the antenna in the plane,
    # intersect the straight line from the image to the receiver with the plane (the specular point S),
    # and take the angle between the reflected ray S -> receiver and the plane.
    normal = np.array([-gu, -gw, 1.0]) / math.sqrt(1 + gu * gu + gw * gw)
    antenna = np.array([0.0, 0.0, h])
    image = antenna - 2 * (antenna @ normal) * normal
    u, w, z = receiver_uwz
    receiver = np.array([u, w, z + gu * u + gw * w])
    t = -(image @ normal) / ((receiver - image) @ normal)
    specular = image + t * (receiver - image)
    assert abs(specular @ normal) < 1e-9
    ray = receiver - specular
    return math.degrees(math.asin((ray @ normal) / np.linalg.norm(ray)))


def test_specular_grazing_angle_against_the_image_construction():
    rng = np.random.default_rng(11)
    for _ in range(200):
        gu, gw = rng.uniform(-0.03, 0.03, 2)
        h = rng.uniform(2.0, 15.0)
        receiver = (rng.uniform(50.0, 20_000.0), rng.uniform(-300.0, 300.0), rng.uniform(1.0, 800.0))
        got = specular_grazing_deg(h, receiver, gu, gw)
        assert got == pytest.approx(_image_construction_deg(h, receiver, gu, gw), abs=1e-9)


def test_flat_ground_closed_form_and_far_field_limit():
    # Flat ground: tan(psi) = (h_a + h_r) / d (two similar right triangles at the specular point).
    assert specular_grazing_deg(4.5, (300.0, 120.0, 16.0)) == pytest.approx(
        math.degrees(math.atan(20.5 / math.hypot(300.0, 120.0))), abs=1e-12
    )
    # A distant receiver at elevation e on the course: the image construction tends to the far-field angle.
    for gu, gw in ((0.0, 0.0), (0.01, -0.02), (-0.015, 0.005)):
        r = 1e8
        e = math.radians(2.4)
        far = (r * math.cos(e), 0.0, r * math.sin(e) - gu * r * math.cos(e))
        expected = _image_construction_deg(4.0, far, gu, gw)  # finite range: off by about h / r = 2.3e-6 deg
        assert far_field_grazing_deg(2.4, gu, gw) == pytest.approx(expected, abs=1e-5)
    # Over a plane rising alpha toward the approach, no lateral slope: theta - alpha.
    assert far_field_grazing_deg(3.0, math.tan(math.radians(0.4))) == pytest.approx(2.6, abs=1e-12)


def test_families_on_flat_ground_without_a_fitted_zone():
    lam = 0.9
    fam = roughness_by_family(0.1, lam, 3.0, 4.3, 300.0, 120.0, 0.0, 0.0)
    by = {f.name: f for f in fam}
    d = math.hypot(300.0, 120.0)
    # path_receivers puts the threshold receiver on the cone tan(theta) * horizontal range about the mast.
    assert by["path-at-threshold"].grazing_deg == pytest.approx(
        math.degrees(math.atan((4.3 + math.tan(math.radians(3.0)) * d) / d)), abs=1e-9
    )
    assert by["coverage-1.75-theta"].grazing_deg == pytest.approx(5.25, abs=1e-12)
    assert all(f.judged and f.zone_share == 1.0 for f in fam)
    assert strictest_family(fam).name == "coverage-1.75-theta"
    # Each family's limits are the existing criteria at its own angle.
    for f in fam:
        assert [v.limit_m for v in f.verdicts] == [v.limit_m for v in roughness_verdicts(0.1, lam, f.grazing_deg)]


@pytest.fixture(scope="module")
def demo_study():
    """The demo study, without the surface prediction (the roughness families do not depend on it)."""
    from geo.site.site_file import load_site
    from geo.study.site_study import run_study

    return run_study(without_surface(load_site(DEMO_SITE)))


def test_demo_families_measured(demo_study):
    result = demo_study
    t, m = result.terrain, result.mast
    fam = roughness_by_family(
        t.plane.rms_residual_m,
        result.wavelength_m,
        result.spec.angle_deg,
        t.heights_m[0],
        m.setback_m,
        m.offset_m,
        t.plane.forward_gradient,
        t.plane.lateral_gradient,
        t.zone.polygon,
    )
    by = {f.name: f for f in fam}
    # The far-field family is today's verdict angle, theta minus the forward slope (geo.ground.terrain).
    assert by["path-far-field"].grazing_deg == pytest.approx(t.grazing_deg, abs=2e-4)
    # The threshold receiver, by the image construction above (independent of geo.ground.roughness).
    from geo.radio.zones import path_receivers

    rx = path_receivers(m.setback_m, m.offset_m, 3.0, 2, t.plane.forward_gradient, t.plane.lateral_gradient, (1.0,))[0]
    independent = _image_construction_deg(t.heights_m[0], rx, t.plane.forward_gradient, t.plane.lateral_gradient)
    assert by["path-at-threshold"].grazing_deg == pytest.approx(independent, abs=1e-9)
    # Measured at the demo: 2.87 deg far field, 3.59 deg at the threshold over the plane (3.77 deg only
    # when the receiver's height is taken above the horizontal through the mast's foot, not above the
    # plane, which rises ~1 m under the threshold receiver).
    assert by["path-far-field"].grazing_deg == pytest.approx(2.87, abs=0.005)
    assert by["path-at-threshold"].grazing_deg == pytest.approx(3.59, abs=0.005)
    d = math.hypot(m.setback_m, m.offset_m)
    horizontal_heights = math.degrees(math.atan((t.heights_m[0] + math.tan(math.radians(3.0)) * d) / d))
    assert horizontal_heights == pytest.approx(3.77, abs=0.005)
    # The threshold family's own zone lies inside the fitted zone (it is one of the fitted receivers).
    assert by["path-at-threshold"].zone_share > 0.99 and by["path-at-threshold"].judged
    # Rayleigh limit at the threshold against the far field: sin ratio (Ulaby et al. 1982, lambda / 8 sin psi).
    ratio = by["path-at-threshold"].verdicts[0].limit_m / by["path-far-field"].verdicts[0].limit_m
    assert ratio == pytest.approx(
        math.sin(math.radians(by["path-far-field"].grazing_deg)) / math.sin(math.radians(independent)), rel=1e-12
    )
    assert 0.79 < ratio < 0.81  # 20 % stricter
    assert strictest_family(fam).grazing_deg == max(f.grazing_deg for f in fam if f.judged)


def test_demo_summary_and_finding_name_the_strictest_family(demo_study):
    from geo.outputs.summary import summary_dict

    result = demo_study
    rows = summary_dict(result)["terrain"]["roughness_by_family"]
    assert [r["family"] for r in rows] == [f.name for f in result.roughness_families]
    strictest = [r for r in rows if r["strictest"]]
    assert len(strictest) == 1
    assert strictest[0]["grazing_angle_deg"] == max(r["grazing_angle_deg"] for r in rows if r["judged_by_fitted_zone"])
    assert "limit_ft" in strictest[0]["criteria"]["rayleigh"]  # the _m -> _ft twin rule (geo/units.py)
    finding = next(f for f in result.findings if f.code == "roughness-families")
    assert f"{strictest[0]['grazing_angle_deg']:.2f} deg" in finding.message
