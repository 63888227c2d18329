"""Capture-effect clearance: the two-carrier detector against a simulated receiver, the derived clearance
feeds against image theory, and the combined DDM below the path."""

import math

import numpy as np
import pytest

from geo.radio.arrays import ARRAY_TYPES, antenna_heights_m, proximity_shifts_m
from geo.radio.clearance import (
    CLEARANCE_DDM_AT_LOW_EDGE,
    assess_capture_effect,
    beat_average,
    capture_weight,
    clearance_model,
    detected_ddm,
)
from geo.radio.prediction import ArrayModel, ddm, far_field_ddm, predict_path
from geo.site.channels import wavelength_m

LAM = wavelength_m(332.0)
THETA = 3.0
CE = ARRAY_TYPES["capture-effect"]


def _course(slope_deg=0.0):
    heights = antenna_heights_m("capture-effect", LAM, THETA, slope_deg)
    return ArrayModel.build(
        heights,
        proximity_shifts_m(heights, 120.0),
        CE.csb_feed,
        CE.sbo_feed,
        LAM,
        math.tan(math.radians(slope_deg)),
        phase_for_angle_deg=THETA,
    )


def _receiver(c1, s1, c2=None, s2=None, offset_hz=8000.0):
    # Independent method: the received RF envelope sampled at 1 MHz for 1 s (whole periods of the tones
    # and of the 8 kHz beat), each carrier CSB (90 and 150 Hz at 40 %, Annex 10 3.1.5.5.1) plus SBO
    # (sidebands only, in antiphase), a linear envelope detector |.|, tone depths read by FFT.
    fs = n = 1_000_000
    t = np.arange(n) / fs
    a, b = np.sin(2 * np.pi * 90 * t), np.sin(2 * np.pi * 150 * t)
    signal = c1 * (1 + 0.4 * (a + b)) + s1 * (b - a)
    if c2 is not None:
        signal = signal + (c2 * (1 + 0.4 * (a + b)) + s2 * (b - a)) * np.exp(2j * np.pi * offset_hz * t)
    spectrum = np.abs(np.fft.rfft(np.abs(signal))) / n
    return 2 * (spectrum[150] - spectrum[90]) / spectrum[0]


@pytest.mark.parametrize(
    "x, r1, r2",
    [
        (0.05, 0.1, 0.3),
        (0.3, -0.2 * np.exp(0.2j), 0.4),
        (0.9, 0.05, 0.3 * np.exp(-0.25j)),
        (1.0, 0.2, -0.2),
        (1.3, -0.1, 0.35),
        (4.0, 0.15 * np.exp(0.3j), 0.5),
    ],
)
def test_two_carrier_ddm_against_a_simulated_envelope_detector(x, r1, r2):
    c1, c2 = np.exp(0.4j), x * np.exp(2.1j)  # carrier phases are arbitrary: the carriers beat
    measured = _receiver(c1, c1 * r1, c2, c2 * r2)
    got = detected_ddm(c1, c1 * r1, 1.0, c2, c2 * r2, 1.0)[0]
    assert got == pytest.approx(measured, abs=1e-5)  # measured worst 1.4e-6 over 24 random cases


def test_small_signal_capture_weight_against_the_simulated_receiver_and_not_power_weighting():
    # Weak modulation differences: the envelope weights (1 - g, g) fit the simulated receiver; power
    # weights x^2 / (1 + x^2) (a square-law detector) give twice the weak carrier's share.
    c1, r1, r2 = 1.0, 0.02, 0.06
    for x in (0.2, 0.5, 2.0):
        measured = _receiver(c1, r1, x, x * r2)
        g = float(capture_weight(x))
        envelope = (1 - g) * 2 * r1 + g * 2 * r2
        power = (2 * r1 + x * x * 2 * r2) / (1 + x * x)
        assert envelope == pytest.approx(measured, abs=2e-4)
        assert abs(power - measured) > 5 * abs(envelope - measured)


def test_beat_average_and_capture_weight_against_direct_numerical_averaging():
    # Independent method: the mean of |1 + x e^{j phi}| over phi by the trapezoid rule (periodic, so
    # spectrally accurate), and g = x M'(x) / M(x) by central differences of that mean.
    phi = np.linspace(0, 2 * np.pi, 20001)[:-1]

    def mean_envelope(x):
        return np.mean(np.abs(1 + x * np.exp(1j * phi)))

    for x in (0.01, 0.3, 0.99, 1.0, 1.7, 25.0):
        assert beat_average(x) == pytest.approx(mean_envelope(x), rel=1e-8)  # x = 1: a kink, 2e-9
    assert beat_average(1.0) == pytest.approx(4 / math.pi, rel=1e-12)  # mean of 2 |cos(phi / 2)|
    for x in (0.01, 0.3, 0.8, 1.25, 5.0):
        h = 1e-5 * x
        g = x * (mean_envelope(x + h) - mean_envelope(x - h)) / (2 * h) / mean_envelope(x)
        assert capture_weight(x) == pytest.approx(g, abs=1e-6)
    # Limits (module notes): g -> x^2 / 2 for a weak carrier, 1/2 at equal carriers, g(x) = 1 - g(1/x).
    assert capture_weight(0.01) == pytest.approx(0.01**2 / 2, rel=1e-3)
    assert capture_weight(1.0) == pytest.approx(0.5)
    assert capture_weight(3.0) == pytest.approx(1 - capture_weight(1 / 3.0), abs=1e-12)


def test_one_carrier_detector_is_the_linear_ddm_and_saturates_at_0_8():
    # Small S/C: DDM = 2 Re(S/C) (geo.radio.prediction, checked there by FFT); in-phase SBO beyond the 40 %
    # tone depth removes the 90 Hz tone entirely: DDM = 0.8 (Annex 10 3.1.5.5.1 depths), as the
    # simulated receiver reads it.
    for ratio in (0.01 * np.exp(0.3j), -0.05, 0.2):
        assert detected_ddm(1.0, ratio, 1.0)[0] == pytest.approx(ddm(1.0, ratio, 1.0), abs=2e-4)
    assert detected_ddm(1.0, 0.45, 1.0)[0] == pytest.approx(_receiver(1.0, 0.45), abs=1e-6)
    assert detected_ddm(1.0, 0.45, 1.0)[0] == pytest.approx(0.8, abs=1e-6)


def test_derived_clearance_feeds_by_image_theory_on_flat_ground():
    # Kraus sec. 11-9, x = pi sin e / (2 sin theta): clearance CSB sin 2x has a null on the path; the
    # clearance SBO/CSB ratio (sin x + sin 3x) / sin 2x = 2 cos x, so the clearance DDM is
    # 0.44 cos x / cos x(0.45 theta); the capture margins balance: margin = 10 log10(r_low / r_near)
    # with r the clearance/course carrier ratio at unit level, course CSB sin x - sin(2x) / 2.
    course = _course()
    clear, design = clearance_model(course, THETA, CE.clearance_csb_feed, CE.clearance_sbo_feed)
    s = math.sin(math.radians(THETA))

    def x_of(f):
        return math.pi * math.sin(math.radians(f * THETA)) / (2 * s)

    assert abs(clear.far_fields(math.radians(THETA))[0][0]) < 1e-3 * abs(clear.far_fields(math.radians(1.5))[0][0])
    e = np.radians(np.linspace(0.3, 0.95, 40) * THETA)
    x = math.pi * np.sin(e) / (2 * s)
    expected = CLEARANCE_DDM_AT_LOW_EDGE * np.cos(x) / math.cos(x_of(0.45))
    # The 8 kHz offset moves x by 2.4e-5 relative: at most 0.58 x sin(x) 2.4e-5 = 2.2e-5 DDM.
    np.testing.assert_allclose(far_field_ddm(clear, e, 1.0), expected, rtol=0, atol=5e-5)

    def ratio(f):
        xx = x_of(f)
        return math.sin(2 * xx) / (math.sin(xx) - math.sin(2 * xx) / 2)

    assert design.capture_margin_db == pytest.approx(10 * math.log10(ratio(0.45) / ratio(0.88)), abs=0.01)
    assert design.offset_hz == 8000.0
    assert design.wavelength_m == pytest.approx(299_792_458.0 / (332e6 + 8000.0), rel=1e-12)


@pytest.mark.parametrize("slope_deg", [0.0, 0.5])
@pytest.mark.parametrize("down_to", [0.45, 0.30])
def test_course_alone_is_weak_below_the_path_and_with_clearance_passes(slope_deg, down_to):
    course = _course(slope_deg)
    p = predict_path(course, THETA, 300.0, 120.0)
    got = assess_capture_effect(
        course, p.sbo_scale, THETA, p.path_angle_deg, CE.clearance_csb_feed, CE.clearance_sbo_feed, 0.12, down_to
    )
    # The course carrier is more than 10 dB below its path level below some angle: the weak-CSB region
    # the clearance exists for. Closed form (Kraus sec. 11-9) over the plane rising alpha: course CSB
    # sin x - sin(2x) / 2 with x = pi sin(e - alpha) / (2 sin(theta - alpha)), 1 on the path; solved by brentq.
    from scipy.optimize import brentq

    alpha, theta = math.radians(slope_deg), math.radians(THETA)
    x10 = brentq(lambda x: math.sin(x) - math.sin(2 * x) / 2 - 10 ** (-0.5), 0.1, math.pi / 2)
    weak_deg = math.degrees(alpha + math.asin(2 * x10 * math.sin(theta - alpha) / math.pi))
    step_deg = 0.7 * THETA / 700  # the check's sampling
    assert got.course_only.weak_carrier_below_deg == pytest.approx(weak_deg, abs=1.5 * step_deg)
    assert got.course_only.carrier_at_down_to_db < -15.0
    # Combined: Annex 10 Vol I 3.1.5.6.5 met (from memory), the clearance dominating at the band's edge,
    # the path where the course puts it (the clearance is null there) and the half-sector within 1 %.
    assert got.combined.passed and got.combined.smooth
    assert got.combined.lowest_ddm >= 0.22 - 1e-9
    assert got.combined_path_angle_deg == pytest.approx(p.path_angle_deg, abs=1e-4)
    assert got.combined_ddm_at_half_sector == pytest.approx(0.0875, rel=0.01)
    assert abs(got.combined.ddm_at_down_to - got.clearance_ddm_at_down_to) < abs(
        got.combined.ddm_at_down_to - got.course_ddm_at_down_to
    )
