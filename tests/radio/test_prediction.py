"""The predicted path: DDM against closed forms, a simulated receiver and the design geometry."""

import math

import numpy as np
import pytest

from geo.errors import SiteFileError
from geo.radio.arrays import ARRAY_TYPES, antenna_heights_m, proximity_shifts_m
from geo.radio.prediction import DDM_AT_HALF_SECTOR, ArrayModel, far_field_ddm, predict_path
from geo.radio.reflection import reflection_coefficient_h
from geo.site.channels import wavelength_m
from geo.site.site_file import load_site
from geo.study.site_study import run_study

LAM = wavelength_m(332.0)


def _model(array, offset=120.0, slope_deg=0.0, shifted=True, gw=0.0):
    t = ARRAY_TYPES[array]
    heights = antenna_heights_m(array, LAM, 3.0, slope_deg)
    shifts = proximity_shifts_m(heights, offset) if shifted else [0.0] * len(heights)
    return ArrayModel.build(
        heights, shifts, t.csb_feed, t.sbo_feed, LAM, math.tan(math.radians(slope_deg)), gw, phase_for_angle_deg=3.0
    )


@pytest.mark.parametrize("array", list(ARRAY_TYPES))
def test_far_field_path_angle_and_sector_over_flat_ground(array):
    # Requirement: far-field path angle equal to the design angle within 0.001 deg; the SBO is scaled so
    # that DDM = 0.0875 at 0.12 theta below the path (Annex 10 Vol I 3.1.5.6).
    p = predict_path(_model(array), 3.0, 300.0, 120.0)
    assert p.path_angle_deg == pytest.approx(3.0, abs=0.001)
    assert p.half_sector_below_deg == pytest.approx(0.12 * 3.0, abs=1e-6)
    ddm_below = far_field_ddm(_model(array), math.radians(0.88 * 3.0), p.sbo_scale)[0]
    assert ddm_below == pytest.approx(DDM_AT_HALF_SECTOR, rel=1e-9)
    assert 0.3 < p.half_sector_above_deg < 0.42


def test_null_reference_matches_the_analytic_far_field_ddm():
    # Two-antenna null-reference over a perfect conductor: SBO/CSB = sin(2x)/sin(x) = 2 cos x with
    # x = pi sin(e) / (2 sin(theta)), so DDM is proportional to cos(pi sin e / (2 sin theta))
    # (Kraus, Antennas, sec. 11-9: each antenna and its image give 2j sin(k h sin e)).
    model = _model("null-reference")
    p = predict_path(model, 3.0, 300.0, 120.0)
    e = np.radians(np.linspace(0.5, 5.5, 200))
    analytic = np.cos(math.pi * np.sin(e) / (2 * math.sin(math.radians(3.0))))
    got = far_field_ddm(model, e, p.sbo_scale)
    np.testing.assert_allclose(got, 4 * p.sbo_scale * analytic, rtol=1e-9, atol=1e-12)


@pytest.mark.parametrize("array", list(ARRAY_TYPES))
@pytest.mark.parametrize("slope_deg", [-0.8, 0.6])
def test_tilted_plane_with_slope_corrected_heights_keeps_the_design_angle(array, slope_deg):
    # Heights from sin(theta - alpha) over a plane rising alpha toward the approach: the path is at
    # theta - alpha over the plane, so at theta to the horizontal. The antennas hang on a vertical mast,
    # so their image pairs sit at different points along the plane; the feeds are phased for that.
    p = predict_path(_model(array, slope_deg=slope_deg), 3.0, 300.0, 120.0)
    assert p.path_angle_deg == pytest.approx(3.0, abs=0.001)
    if array == "null-reference":  # SBO on one antenna only: its null needs no phasing at all
        t = ARRAY_TYPES[array]
        heights = antenna_heights_m(array, LAM, 3.0, slope_deg)
        raw = ArrayModel.build(heights, [0.0, 0.0], t.csb_feed, t.sbo_feed, LAM, math.tan(math.radians(slope_deg)))
        assert predict_path(raw, 3.0, 300.0, 120.0).path_angle_deg == pytest.approx(3.0, abs=0.001)


def test_slope_phases_vanish_on_flat_ground_and_grow_with_the_slope():
    flat = _model("sideband-reference")
    assert np.allclose(flat.slope_phases_deg(3.0), 0.0, atol=1e-9)
    tilted = ArrayModel.build([2.0, 6.0], [0.0, 0.0], [1, 0], [1, -1], LAM, math.tan(math.radians(0.6)))
    # Independent: mirroring (0, 0, h) in a plane of slope a puts the pair's centre at
    # h (sin a cos a, 0, sin^2 a); toward (cos e, 0, sin e) two antennas 4 m apart in height differ by
    # k * 4 sin a (cos a cos e + sin a sin e).
    a, e = math.radians(0.6), math.radians(3.0)
    expected = 360.0 / LAM * 4.0 * math.sin(a) * (math.cos(a) * math.cos(e) + math.sin(a) * math.sin(e))
    assert tilted.slope_phases_deg(3.0)[1] == pytest.approx(expected, rel=1e-9)


@pytest.mark.parametrize(
    "array, factor", [("null-reference", 3.0), ("sideband-reference", 50.0), ("capture-effect", 100.0)]
)
def test_proximity_shifts_bring_the_path_near_the_threshold_onto_the_geometric_cone(array, factor):
    # Geometric actual path: the cone tan(theta) * sqrt((s - x)^2 + D^2) about the mast (the site core).
    # Quantified: within 1,500 m of the threshold the RMS distance to it is at least `factor` times
    # smaller with the shifts than without (flat ground, 332 MHz, s = 300 m, D = 120 m).
    with_shift = predict_path(_model(array), 3.0, 300.0, 120.0)
    without = predict_path(_model(array, shifted=False), 3.0, 300.0, 120.0, sbo_scale=with_shift.sbo_scale)
    cone = math.tan(math.radians(3.0)) * np.hypot(300.0 - with_shift.along_m, 120.0)
    near = with_shift.along_m >= -1500.0

    def rms(p):
        return math.sqrt(np.mean((p.path_z_m[near] - cone[near]) ** 2))

    assert rms(with_shift) < 0.005
    assert rms(without) > factor * rms(with_shift)


def test_ddm_formula_against_a_simulated_envelope_detector():
    # Independent method: build the received AM envelope of CSB (tones 40 %, Annex 10 3.1.5.5.1) plus
    # SBO (sidebands only, 150 Hz and 90 Hz in antiphase), detect it, and read the tone depths by FFT.
    from geo.radio.prediction import ddm

    fs, n = 12_000, 12_000  # 1 s: whole periods of both tones
    t = np.arange(n) / fs
    a, b = np.sin(2 * np.pi * 90 * t), np.sin(2 * np.pi * 150 * t)
    for ratio in (0.01 * np.exp(0.3j), 0.02 * np.exp(-1.1j), 0.005):
        c, s = 1.0 + 0j, complex(ratio)
        envelope = np.abs(c * (1 + 0.4 * (a + b)) + s * (b - a))
        spectrum = np.abs(np.fft.rfft(envelope)) / n
        m90, m150 = 2 * spectrum[90] / spectrum[0], 2 * spectrum[150] / spectrum[0]
        assert ddm(c, s, 1.0) == pytest.approx(m150 - m90, abs=2e-4)


def test_fresnel_coefficient_limits():
    # Balanis (1989) sec. 5.3: horizontal polarisation; normal incidence on a lossless dielectric
    # gives (1 - n) / (1 + n): eps_r = 4 -> -1/3; grazing incidence gives -1; a perfect conductor -1.
    assert reflection_coefficient_h(math.pi / 2, 4.0, 0.0, 1.0) == pytest.approx(-1 / 3)
    assert reflection_coefficient_h(1e-9, 15.0, 0.005, 0.9) == pytest.approx(-1.0, abs=1e-6)
    assert reflection_coefficient_h(0.05, None, None, 0.9) == -1.0
    wet = reflection_coefficient_h(math.radians(3), 30.0, 0.02, 0.9)
    assert abs(wet) < 1.0


def test_real_ground_moves_the_path_little_and_is_reported(write_site, site_text):
    text = site_text + "\n[prediction]\nrelative_permittivity = 15\nconductivity = 0.005\n"
    result = run_study(load_site(write_site(text)))
    assert result.prediction.path_angle_deg == pytest.approx(3.0, abs=0.05)


@pytest.mark.parametrize(
    "block, words",
    [
        ("relative_permittivity = 15\n", "both"),
        ("csb_feed = [[1, 0]]\n", "list of 2"),
        ("sbo_feed = [[0, 0], [0, 0]]\n", "zero"),
        ("half_sector = 0.2\n", "at most 0.14"),
    ],
)
def test_bad_prediction_settings(write_site, site_text, block, words):
    with pytest.raises(SiteFileError, match=words):
        load_site(write_site(site_text + "\n[prediction]\n" + block))


def test_feeds_from_the_site_file_that_give_no_path_are_refused(write_site, site_text):
    text = site_text + "\n[prediction]\ncsb_feed = [[0, 0], [1, 0]]\nsbo_feed = [[0, 0], [1, 0]]\n"
    with pytest.raises(SiteFileError, match="no path"):
        run_study(load_site(write_site(text)))
