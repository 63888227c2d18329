"""Path structure as flight inspection measures it (geo.radio.structure, geo.radio.bend_filter).

Every expected value here is computed inside the test by an independent route: the filter's
response by scipy.signal.freqs on the continuous transfer function 1 / (L s + 1); the recorded DDM
by the closed-form solution of dy/dx = (u - y) / L (Oppenheim and Willsky, Signals and Systems,
2nd ed., sec. 6.5: steady state of a sinusoid, exponential approach after a step); the references
by numpy.polyfit (least-squares line) and numpy.mean; the 95 % amplitude by numpy.percentile on
a 1 m grid. The segments are those of Annex 10 Vol I 3.1.5.4 (from memory, as
geo.radio.structure_limits labels them), or made up for the test where stated.
"""

import math

import numpy as np
import pytest
from scipy.signal import freqs

from geo.radio.bend_filter import FILTER_LENGTH_M, GRID_STEP_M, MAX_GAP_M, kept_fraction, low_pass
from geo.radio.structure import BEND_FILTER, segment_structure, structure_arrays
from geo.radio.structure_limits import Segment, structure_segments

PERIODS_M = [100.0, 300.0, 500.0, 1000.0, 2000.0, 5000.0]
AMPLITUDE_DDM = 0.01
L_M = FILTER_LENGTH_M


def uneven_samples(start_m: float, end_m: float, mean_step_m: float, seed: int = 1) -> np.ndarray:
    """Distances from ``start_m`` to ``end_m`` with gaps between 0.5 and 1.5 times the mean (shuffled order)."""
    rng = np.random.default_rng(seed)
    gaps = rng.uniform(0.5, 1.5, int((end_m - start_m) / mean_step_m) + 10) * mean_step_m
    d = start_m + np.concatenate([[0.0], np.cumsum(gaps)])
    d = np.concatenate([d[d < end_m], [end_m]])
    return rng.permutation(d)


def response_scipy(period_m: float, length_m: float = L_M) -> float:
    """|H| of 1 / (L s + 1) at the bend's spatial angular frequency, by scipy.signal.freqs."""
    _, h = freqs([1.0], [length_m, 1.0], worN=[2.0 * math.pi / period_m])
    return float(abs(h[0]))


def recorded_sinusoid(d_m, period_m, phase, start_m, length_m=L_M):
    """Closed form of the filter flown from ``start_m`` toward the threshold, settled on the input's slope there."""
    w = 2.0 * math.pi / period_m
    x = start_m - np.asarray(d_m)  # distance flown
    theta0 = phase + w * start_m  # u = A sin(theta0 - w x)
    h = 1.0 / (1.0 - 1j * w * length_m)  # response at e^{-i w x}
    steady = AMPLITUDE_DDM * np.imag(h * np.exp(1j * (theta0 - w * x)))
    u0 = AMPLITUDE_DDM * math.sin(theta0)
    du0 = -AMPLITUDE_DDM * w * math.cos(theta0)  # du/dx at the start
    y0 = u0 - length_m * du0  # settled on the ramp (geo.radio.bend_filter.low_pass)
    steady0 = AMPLITUDE_DDM * np.imag(h * np.exp(1j * theta0))
    return steady + (y0 - steady0) * np.exp(-x / length_m)


def expected_95(seg: Segment, recorded, reference: str) -> float:
    """95th percentile of |recorded - reference| on a 1 m grid of the segment (numpy only)."""
    d = np.linspace(seg.to_m, seg.from_m, int(seg.from_m - seg.to_m) + 1)
    y = recorded(d)
    if reference == "line":
        y = y - np.polyval(np.polyfit(d, y, 1), d)
    else:
        y = y - y.mean()
    return float(np.percentile(np.abs(y), 95.0))


def test_published_response_is_the_first_order_frequency_response():
    # scipy.signal.freqs on 1 / (L s + 1), at periods 100 m to 5 km, scalar and array input.
    ref = np.array([response_scipy(p) for p in PERIODS_M])
    assert kept_fraction(np.array(PERIODS_M)) == pytest.approx(ref, rel=1e-12)
    assert kept_fraction(300.0) == pytest.approx(response_scipy(300.0), rel=1e-12)
    assert kept_fraction(300.0, 0.0) == 1.0
    # The default: corner V / 92.6 rad/s at V km/h (Annex 10 Vol I Att. C; from memory) is 92.6 / 3.6 m.
    assert L_M == pytest.approx(92.6 / 3.6)
    assert "from memory" in BEND_FILTER


def test_discrete_filter_matches_the_closed_form_on_a_ramp_and_a_sinusoid():
    # Closed form of dy/dx = (u - y) / L (Oppenheim and Willsky, sec. 6.5): a ramp comes out moved by L
    # of its slope; a sinusoid settles to |H| of its amplitude with the lag atan(w L).
    step = 5.0
    x = np.arange(0.0, 3000.0 + step / 2, step)
    ramp = 0.002 + 3e-6 * x
    assert low_pass(ramp, step, L_M) == pytest.approx(ramp - 3e-6 * L_M, abs=1e-15)
    w = 2 * math.pi / 400.0  # a 400 m bend
    y = low_pass(np.sin(w * x), step, L_M)
    settled = x > 10 * L_M
    closed = np.imag(np.exp(1j * w * x) / (1 + 1j * w * L_M))
    # The input is linear between grid points: its amplitude differs from the sinusoid's by
    # about (w h)^2 / 12 (trapezoid of a sinusoid; here 0.0013), well inside 0.3 %.
    assert np.abs(y[settled] - closed[settled]).max() < 3e-3


@pytest.mark.parametrize("category", ["I", "III"])
@pytest.mark.parametrize("period_m", PERIODS_M)
def test_sinusoidal_bends_match_the_closed_form_per_segment(category, period_m):
    # Non-uniform samples (mean 4 m, 2 m to 6 m apart) of A sin over the whole approach; per
    # segment, the closed-form recorded DDM about its numpy line or mean, 95th percentile.
    segments = structure_segments(category, 15.0, 3.0)
    d = uneven_samples(0.0, 10 * 1852.0, 4.0)
    phase = 0.7
    found = segment_structure(segments, d, AMPLITUDE_DDM * np.sin(2 * math.pi * d / period_m + phase))
    assert [s.segment for s in found.segments] == [s.name for s in segments]
    for seg, got in zip(segments, found.segments):
        reference = "line" if seg.to_m >= 1050.0 - 1e-6 else "mean"  # Att. C practice, from memory
        assert got.reference == reference and got.well_sampled
        want = expected_95(seg, lambda dd: recorded_sinusoid(dd, period_m, phase, d.max()), reference)
        # Linear interpolation keeps sinc^2(h / P) ~ 1 - (2 pi h / P)^2 / 12 of a sinusoid's amplitude
        # (its fundamental; Oppenheim and Willsky, sec. 7.2, first-order hold): once from the samples
        # (h up to 6 m) and once to the grid (GRID_STEP_M, 2 m), 1.3 % at 100 m; the percentiles taken
        # on the 2 m and 1 m grids of a short segment (B to C, 764 m) differ by about 0.2 %.
        rel = ((2 * math.pi * 6.0 / period_m) ** 2 + (2 * math.pi * GRID_STEP_M / period_m) ** 2) / 12 + 0.003
        assert got.bend_95_ddm == pytest.approx(want, rel=rel, abs=2e-6)


@pytest.mark.parametrize("period_m", PERIODS_M)
def test_bends_keep_the_published_fraction_of_a_sinusoid(period_m):
    # A segment made up for the test (60 km to 10 km before the threshold, line reference) holding
    # whole periods of a cosine even about its centre: the least-squares line of the input is zero,
    # so the 95 % amplitude is the filter's |H| (scipy) times the 95th percentile of |A cos| over a
    # period (numpy; analytically A sin(0.95 pi / 2)).
    seg = Segment("coverage limit to A", 60_000.0, 10_000.0, 0.035, 0.035)
    d = uneven_samples(9_000.0, 61_000.0, 4.0, seed=3)
    ddm = AMPLITUDE_DDM * np.cos(2 * math.pi * (d - 35_000.0) / period_m)
    got = segment_structure([seg], d, ddm).segments[0].bend_95_ddm
    t = np.linspace(0.0, 1.0, 200_001)
    sinusoid_95 = np.percentile(np.abs(AMPLITUDE_DDM * np.cos(2 * math.pi * t)), 95.0)
    assert sinusoid_95 == pytest.approx(AMPLITUDE_DDM * math.sin(0.95 * math.pi / 2), rel=1e-4)
    want = response_scipy(period_m) * sinusoid_95
    # Interpolation, as above, from the samples (h up to 6 m) and to the 2 m grid (1.3 % at 100 m); the
    # filter's lag tilts the recorded cosine against the line by a fraction of order 1 / (pi N) of its
    # amplitude at the ends for N periods (here N >= 10), which moves the percentile by well under 0.3 %.
    rel = ((2 * math.pi * 6.0 / period_m) ** 2 + (2 * math.pi * GRID_STEP_M / period_m) ** 2) / 12 + 0.003
    print(f"\n{period_m:g} m: kept {got / sinusoid_95:.4f}, published {kept_fraction(period_m):.4f}")
    assert got == pytest.approx(want, rel=rel)


@pytest.mark.parametrize("segment_index", [1, 2])
def test_a_step_is_measured_as_the_closed_form_step_response(segment_index):
    # A step of the DDM (0.02) a third of the way into A to B (line reference) or into B to C (mean
    # reference). Recorded: h (1 - exp(-(d_step - d) / L)) past the step (Oppenheim and Willsky,
    # sec. 6.5). About the mean of a segment S long split 1/3 : 2/3 by the step, the recorded step
    # lacks the area h L (the integral of h exp(-x / L)), so the mean is h (2/3 - L / S) and the
    # first third, at 0, departs from it by that much: the 95th percentile (textbook).
    segments = structure_segments("I", 15.0, 3.0)
    seg = segments[segment_index]
    h = 0.02
    d_step = seg.from_m - (seg.from_m - seg.to_m) / 3.0
    d = uneven_samples(0.0, 10 * 1852.0, 3.0, seed=5)
    d = np.concatenate([d[np.abs(d - d_step) > 0.5], [d_step - 0.01, d_step + 0.01]])  # the step well sampled
    ddm = np.where(d < d_step, h, 0.0)

    def recorded(dd):
        return np.where(dd < d_step, h * (1.0 - np.exp(-(d_step - dd) / L_M)), 0.0)

    got = segment_structure(segments, d, ddm).segments[segment_index]
    want = expected_95(seg, recorded, got.reference)
    assert got.bend_95_ddm == pytest.approx(want, rel=0.01)
    if got.reference == "mean":
        assert got.bend_95_ddm == pytest.approx(h * (2.0 / 3.0 - L_M / (seg.from_m - seg.to_m)), rel=2e-3)


@pytest.mark.parametrize("category", ["I", "II"])
def test_a_straight_line_ddm_has_no_bend_and_its_departure_is_the_line(category):
    # A steady shift plus a slope of the DDM: the recorded DDM is the same line (moved by L of the
    # slope), which the segment's line or mean takes away in full (the mean: a constant; a slope
    # in B to C is a line, whose departure from its mean is not zero, so B to C gets only a shift).
    segments = structure_segments(category, 15.0, 3.0)
    d = uneven_samples(0.0, 10 * 1852.0, 10.0, seed=7)
    for shift, slope in ((0.004, 0.0), (0.004, 2e-6), (-0.01, -1e-6)):
        far = shift + slope * d
        near = np.full(d.size, shift)
        for line, checked in ((far, [0, 1]), (near, [len(segments) - 1])):
            found = segment_structure(segments, d, line, np.zeros(d.size))
            for i in checked:
                s = found.segments[i]
                assert s.bend_95_ddm == pytest.approx(0.0, abs=1e-12) and s.passed
                inside = np.linspace(segments[i].to_m, segments[i].from_m, 100_001)
                # The raw departure: numpy's 95th percentile of |line| over the segment.
                raw = np.percentile(np.abs(np.interp(inside, np.sort(d), line[np.argsort(d)])), 95.0)
                assert s.departure_95_ddm == pytest.approx(raw, rel=1e-3, abs=1e-12)


def test_a_slope_over_b_to_c_counts_as_a_bend_about_the_mean():
    # Annex 10 Att. C practice (from memory): B to C is judged about its mean, so a slope there is a
    # bend. Closed form: a line of slope m over a segment of length S about its mean has |bend| up
    # to m S / 2, uniform, so the 95th percentile is 0.95 m S / 2 (textbook, uniform distribution).
    segments = structure_segments("I", 15.0, 3.0)
    seg = segments[-1]
    d = uneven_samples(0.0, 10 * 1852.0, 5.0, seed=9)
    m = 1e-5
    got = segment_structure(segments, d, m * d).segments[-1]
    assert got.bend_95_ddm == pytest.approx(0.95 * m * (seg.from_m - seg.to_m) / 2.0, rel=0.01)


def test_coarse_samples_are_flagged_and_uncovered_ends_count_as_gaps():
    # The stated maximum gap (MAX_GAP_M, 20 m): samples 25 m apart in the far segments and 10 m
    # from 2 km in, the approach sampled only from 2 km (so B to C's end at the threshold side).
    segments = structure_segments("I", 15.0, 3.0)
    d = np.concatenate([np.arange(2000.0, 18520.0, 25.0), [18520.0], np.arange(400.0, 2000.0, 10.0)])
    found = segment_structure(segments, d, np.zeros(d.size))
    by = {s.segment: s for s in found.segments}
    assert not by["coverage limit to A"].well_sampled and by["coverage limit to A"].largest_gap_m == pytest.approx(25.0)
    c_m = segments[-1].to_m
    # B to C starts at ILS point C, (30 - 15) / tan 3 deg = 286 m (Annex 10 Vol I 3.1.1, from memory):
    # the samples from 400 m leave 114 m uncovered.
    assert c_m == pytest.approx(15.0 / math.tan(math.radians(3.0)))
    assert by["B to C"].largest_gap_m == pytest.approx(400.0 - c_m) and not by["B to C"].well_sampled
    assert MAX_GAP_M == 20.0
    even = np.arange(0.0, 18525.0, 20.0)
    fine = segment_structure(segments, even, np.zeros(even.size))
    assert all(s.well_sampled for s in fine.segments)


def test_many_series_at_once_give_the_single_series_values():
    # The row-wise form used by the derived areas against the one-series entry point (same rule).
    segments = structure_segments("II", 15.0, 3.0)
    d = uneven_samples(0.0, 10 * 1852.0, 8.0, seed=11)
    rows = np.stack([0.01 * np.sin(2 * math.pi * d / p) for p in (300.0, 800.0, 3000.0)])
    arrays = structure_arrays(segments, d, rows, np.zeros(d.size))
    for k in range(rows.shape[0]):
        one = segment_structure(segments, d, rows[k], np.zeros(d.size))
        assert arrays.bend_95_ddm[k] == pytest.approx([s.bend_95_ddm for s in one.segments], rel=1e-12)
        assert arrays.departure_95_ddm[k] == pytest.approx([s.departure_95_ddm for s in one.segments], rel=1e-12)
        assert np.array_equal(np.isnan(one.bend_ddm), np.isnan(arrays.bend_ddm[k]))
    assert np.all(np.diff(arrays.grid_m) > 0) and np.diff(arrays.grid_m).max() <= GRID_STEP_M + 1e-9


def test_category_ii_limits_and_references_per_segment():
    # Annex 10 Vol I 3.1.5.4 (from memory, geo.radio.structure_limits): Category II, 0.035 DDM to
    # ILS point A, falling to 0.023 at B, then 0.023 to the datum; the far segments about a line,
    # B to the datum about the mean (Att. C practice, from memory). A zero DDM passes everywhere.
    segments = structure_segments("II", 15.0, 3.0)
    d = np.arange(0.0, 18530.0, 10.0)
    found = segment_structure(segments, d, np.zeros(d.size)).segments
    assert [s.limit_ddm for s in found] == [0.035, 0.023, 0.023]
    assert [s.reference for s in found] == ["line", "line", "mean"]
    assert all(s.passed and s.departure_95_ddm is None for s in found)


@pytest.mark.parametrize("length_m", [25.7, 400.0])
def test_low_pass_is_scipys_recursive_filter(length_m):
    # The same recursion by scipy.signal.lfilter (a reference library), started on the first ramp as
    # low_pass is: equal to rounding, for a short and a long filter, rows of random DDM.
    from scipy.signal import lfilter

    rng = np.random.default_rng(3)
    u, h = rng.normal(size=(5, 927)), 20.0
    a = math.exp(-h / length_m)
    c = -math.expm1(-h / length_m) * length_m / h
    b = np.array([1.0 - c, c - a])
    first = u[:, :1] - length_m * (u[:, 1:2] - u[:, :1]) / h
    reference, _ = lfilter(b, [1.0, -a], u, axis=-1, zi=first - b[0] * u[:, :1])
    assert np.max(np.abs(low_pass(u, h, length_m) - reference)) < 1e-12
