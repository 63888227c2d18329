"""The surface path's angle, half-sectors, asymmetry and RDH against the Annex 10 limits.

Every Annex 10 value below is written here from memory of ICAO Annex 10 Vol I (confirm against the
edition in force); the margins are worked out in the tests from those values, not read from the code.
"""

import math
import types

import numpy as np
import pytest

from geo.optics.surface_prediction import SurfacePrediction
from geo.radio.structure import SegmentBends
from geo.study.surface_sector import asymmetry, judge_surface_sector, sector_findings

THETA = 3.0
#: Annex 10 Vol I 3.1.5.1.2.2 (from memory): the path angle within 0.075 theta (Cat I, II), 0.04 theta (Cat III).
TOLERANCE = {"I": 0.075, "II": 0.075, "III": 0.04}
#: Annex 10 Vol I 3.1.5.7.1 a) (from memory): monitor alarm beyond -0.075 theta / +0.10 theta.
MONITOR = (-0.075, 0.10)
#: Annex 10 Vol I 3.1.5.6.2 (from memory): half-sectors between 0.07 theta and 0.14 theta.
BAND = (0.07, 0.14)
#: Annex 10 Vol I 3.1.5.6.3/4 (from memory): Cat II/III lower half-sector 0.12 theta +- 0.02 theta.
CAT23_LOWER = (0.10, 0.14)
#: Annex 10 Vol I 3.1.5.7.1 e) (from memory): monitor on a 25 % change of the displacement sensitivity.
SENSITIVITY_CHANGE = 0.25
#: The warning share, our choice (no source): less than 20 % of an allowance left.
WARN_LEFT = 0.20
PLANE_M, THRESHOLD_M = 610.0, 612.0


def _surface(angle_deg=THETA, below=0.12, above=0.12, rdh_m=15.5, bends=(0.002, 0.002)):
    """A synthetic surface prediction: a straight path at ``angle_deg`` (its fit's slope), the chosen
    half-sectors (shares of theta) and far-field angle, the RDH over the threshold and the bends."""
    along = -np.linspace(18520.0, 0.0, 50)
    slope = math.tan(math.radians(angle_deg))
    intercept = rdh_m + THRESHOLD_M - PLANE_M  # Z is measured from the plane at the mast's foot
    z = intercept - slope * along
    structure = [
        SegmentBends(
            "coverage limit to A", 18520.0, 7408.0, 0.035, bends[0], bends[0] <= 0.035, bends[0], "line", 20.0, True
        ),
        SegmentBends("A to C", 7408.0, 300.0, 0.035, bends[1], bends[1] <= 0.035, bends[1], "mean", 20.0, True),
    ]
    zeros = np.zeros(along.size)
    return SurfacePrediction(
        angle_deg, below * THETA, above * THETA, along, zeros, zeros, z, (intercept, slope), structure, zeros, zeros
    )


def _judge(surface, category="I", code=4):
    return judge_surface_sector(surface, THETA, category, code, 0.12, PLANE_M, THRESHOLD_M, 15.4)


def _codes(sector, unit="m"):
    return {f.code: f for f in sector_findings(sector, unit)}


def test_the_mound_case_with_a_wide_lower_half_sector_fails():
    # The case of issue 19: the lower half-sector at 0.162 theta and 36 % asymmetry passed before.
    # Asymmetry (above - below) / (above + below) = -0.36 gives above = below (1 - 0.36) / (1 + 0.36).
    below = 0.162
    above = below * (1 - 0.36) / (1 + 0.36)
    sector = _judge(_surface(below=below, above=above))
    found = _codes(sector)
    assert found["surface-half-sector-below"].severity == "fail"  # beyond 0.14 theta (3.1.5.6.2)
    assert found["surface-sector-asymmetry"].severity == "warning"  # beyond our +-0.20 (no source)
    assert sector.asymmetry == pytest.approx(-0.36, abs=1e-12)
    fig = sector.figure("half_sector_below")
    band, monitor = fig.bounds
    # Margin to 0.14 theta: (0.14 - 0.162) theta = -0.066 deg; allowance above the nominal 0.12 theta: 0.06 deg.
    assert fig.margin(band) == pytest.approx((BAND[1] - below) * THETA, abs=1e-12)
    assert fig.share_left(band) == pytest.approx((BAND[1] - below) / (BAND[1] - 0.12), abs=1e-12)
    # The sensitivity (DDM per degree, 0.0875 / half-sector) has fallen by 1 - 0.12 / 0.162 = 26 %: beyond 25 %.
    assert 1 - 0.12 / below > SENSITIVITY_CHANGE and fig.margin(monitor) < 0
    assert sector.severity == "fail"


@pytest.mark.parametrize(
    "category, error_theta, expected",
    [
        ("I", 0.0, "pass"),
        ("I", 0.05, "pass"),  # 1/3 of the 0.075 theta allowance left
        ("I", 0.065, "warning"),  # 13 % of the tolerance left: within the last 20 %
        ("I", 0.08, "fail"),  # beyond 0.075 theta
        ("I", -0.065, "warning"),
        ("I", -0.076, "fail"),  # beyond the tolerance and the -0.075 theta monitor limit
        ("II", 0.07, "warning"),
        ("III", 0.03, "pass"),  # 25 % of 0.04 theta left
        ("III", 0.035, "warning"),  # 12.5 % of 0.04 theta left
        ("III", 0.045, "fail"),  # beyond 0.04 theta
    ],
)
def test_the_path_angle_against_the_tolerance_and_the_monitor(category, error_theta, expected):
    sector = _judge(_surface(angle_deg=THETA * (1 + error_theta)), category)
    fig = sector.figure("path_angle")
    tol = TOLERANCE[category]
    tolerance, monitor = fig.bounds
    # Margins worked out here: to the end of each interval on the error's side, and its share of the allowance there.
    assert fig.margin(tolerance) == pytest.approx((tol - abs(error_theta)) * THETA, abs=1e-9)
    side = MONITOR[1] if error_theta >= 0 else -MONITOR[0]
    assert fig.margin(monitor) == pytest.approx((side - abs(error_theta)) * THETA, abs=1e-9)
    shares = [(tol - abs(error_theta)) / tol, (side - abs(error_theta)) / side]
    assert fig.share_left(tolerance) == pytest.approx(shares[0], abs=1e-9)
    assert fig.share_left(monitor) == pytest.approx(shares[1], abs=1e-9)
    if min(shares) < 0:
        independent = "fail"
    elif min(shares) < WARN_LEFT:
        independent = "warning"
    else:
        independent = "pass"
    assert fig.severity == independent == expected
    assert _codes(sector)["surface-path-angle"].severity == expected
    assert sector.fitted_angle_deg - THETA == pytest.approx(error_theta * THETA, abs=1e-9)


@pytest.mark.parametrize(
    "category, below, expected",
    [
        ("I", 0.12, "pass"),
        ("I", 0.09, "fail"),  # in the 0.07-0.14 band, but the sensitivity rose by 0.12 / 0.09 - 1 = 33 %
        ("I", 0.137, "warning"),  # 15 % of the 0.12-0.14 allowance left
        ("II", 0.125, "pass"),
        ("II", 0.103, "warning"),  # 15 % of the 0.10-0.12 allowance left
        ("II", 0.098, "fail"),  # below 0.10 theta
        ("III", 0.145, "fail"),
    ],
)
def test_the_lower_half_sector_against_the_band_and_the_sensitivity_monitor(category, below, expected):
    sector = _judge(_surface(below=below, above=below), category)
    fig = sector.figure("half_sector_below")
    band, monitor = fig.bounds
    low, high = CAT23_LOWER if category != "I" else BAND
    assert (band.low / THETA, band.high / THETA) == pytest.approx((low, high), abs=1e-12)
    # The monitor interval from the definition of displacement sensitivity, DDM 0.0875 over the half-sector:
    # a change of +-25 % of 0.0875 / (0.12 theta) is reached at these half-sectors.
    nominal = 0.12 * THETA
    sensitivity = 0.0875 / nominal
    assert monitor.low == pytest.approx(0.0875 / (sensitivity * (1 + SENSITIVITY_CHANGE)), rel=1e-12)
    assert monitor.high == pytest.approx(0.0875 / (sensitivity * (1 - SENSITIVITY_CHANGE)), rel=1e-12)
    assert fig.severity == expected
    assert _codes(sector)["surface-half-sector-below"].severity == expected


def test_the_upper_half_sector_and_the_asymmetry():
    # Upper half-sector 0.145 theta: beyond 0.14 theta (3.1.5.6.2, from memory); asymmetry
    # (0.145 - 0.12) / 0.265 = +0.094 within our 0.20 (no source).
    sector = _judge(_surface(below=0.12, above=0.145))
    found = _codes(sector)
    assert found["surface-half-sector-above"].severity == "fail"
    assert sector.asymmetry == pytest.approx((0.145 - 0.12) / (0.145 + 0.12), abs=1e-12)
    assert found["surface-sector-asymmetry"].severity == "pass"
    assert asymmetry(0.1, 0.15) == pytest.approx(0.2) and math.isnan(asymmetry(math.nan, 0.1))
    # 0.20 exactly is the limit; 0.25 (0.09 and 0.15 theta) warns.
    assert _judge(_surface(below=0.09, above=0.15)).figure("asymmetry").severity == "warning"


@pytest.mark.parametrize(
    "category, code, rdh, expected",
    [
        ("I", 4, 15.5, "pass"),
        ("I", 4, 14.8, "warning"),  # Cat I 15 m +3 m is recommended (3.1.5.1.5, from memory)
        ("II", 4, 14.8, "fail"),  # Cat II/III 15 m +3 m is a standard (3.1.5.1.4)
        ("II", 4, 18.5, "fail"),
        ("I", 2, 12.5, "pass"),  # code 1-2 runways: 12 m +6 m (3.1.5.1.6, from memory)
    ],
)
def test_the_rdh_over_the_surface(category, code, rdh, expected):
    sector = _judge(_surface(rdh_m=rdh), category, code)
    fig = sector.figure("rdh")
    # The RDH is the fitted straight path over the threshold: its Z plus the plane at the foot, less the threshold.
    assert fig.value == pytest.approx(rdh, abs=1e-9)
    low, high = (12.0, 18.0) if code == 2 and category == "I" else (15.0, 18.0)
    # The nominal is the band's middle, so the end on the value's side is the nearer one.
    assert fig.margin(fig.bounds[0]) == pytest.approx(min(rdh - low, high - rdh), abs=1e-9)
    assert fig.share_left(fig.bounds[0]) == pytest.approx(min(rdh - low, high - rdh) / ((high - low) / 2), abs=1e-9)
    assert fig.severity == expected


def test_findings_say_the_caution_and_lengths_in_the_files_unit_first():
    found = sector_findings(_judge(_surface(rdh_m=15.24)), unit="ft")
    for f in found:
        assert "confirmed only by flight inspection" in f.message and "local regulations decide" in f.message
    rdh = next(f for f in found if f.code == "surface-rdh")
    # 15.24 m = 50 ft exactly (1 ft = 0.3048 m); the band 15 m = 49.21 ft.
    assert "RDH over the DEM surface 50.00 ft (15.24 m)" in rdh.message and "49.21 ft (15.00 m)" in rdh.message
    angle = next(f for f in found if f.code == "surface-path-angle")
    assert "from memory" in angle.message and "3.1.5.1.2.2" in angle.message and "3.1.5.7.1" in angle.message


def test_the_fitted_angle_of_the_prediction_comes_first():
    # The prediction's own fitted angle, when it gives one, is used rather than the slope of its fit.
    base = _surface(angle_deg=3.0)
    fields = {k: getattr(base, k) for k in base.__dataclass_fields__ if k != "fitted_angle_deg"}
    given = types.SimpleNamespace(**fields, fitted_angle_deg=3.2)
    assert _judge(given).fitted_angle_deg == 3.2
    assert _judge(base).fitted_angle_deg == pytest.approx(3.0, abs=1e-12)


def test_bends_above_their_limit_count_as_the_worst_share():
    sector = _judge(_surface(bends=(0.01, 0.042)))
    assert sector.worst_bend_share == pytest.approx(0.042 / 0.035)


def test_a_half_sector_not_found_is_a_warning_not_a_pass():
    sector = _judge(_surface(below=math.nan))
    assert sector.figure("half_sector_below").severity == "warning"
    assert "not found" in _codes(sector)["surface-half-sector-below"].message
