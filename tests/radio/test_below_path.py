"""DDM below the path (Annex 10 Vol I 3.1.5.6.5, from memory): closed forms and invented DDM curves."""

import math

import numpy as np
import pytest

from geo.radio.arrays import ARRAY_TYPES, antenna_heights_m, proximity_shifts_m
from geo.radio.below_path import BELOW_PATH_DDM, check_below_path, sampled_ddm
from geo.radio.prediction import ArrayModel, far_field_ddm, predict_path
from geo.site.channels import wavelength_m

LAM = wavelength_m(332.0)
THETA = 3.0


def _model(array):
    t = ARRAY_TYPES[array]
    heights = antenna_heights_m(array, LAM, THETA)
    return ArrayModel.build(
        heights, proximity_shifts_m(heights, 120.0), t.csb_feed, t.sbo_feed, LAM, phase_for_angle_deg=THETA
    )


def _closed_form_ddm(e_rad):
    # Image theory over a perfect conductor (Kraus, Antennas, sec. 11-9): every array type here gives
    # SBO/CSB proportional to cos x, x = pi sin(e) / (2 sin theta) (null-reference sin 2x / sin x;
    # sideband-reference (sin y - sin 3y) / sin y = -2 cos 2y with y = x / 2; the derived capture-effect
    # feeds SBO 1:-2:1, CSB 1:-0.5:0 give (sin x - 2 sin 2x + sin 3x) / (sin x - sin 2x / 2) = -4 cos x), scaled to
    # 0.0875 at 0.88 theta (Annex 10 Vol I 3.1.5.6).
    s = math.sin(math.radians(THETA))
    return (
        0.0875
        * np.cos(math.pi * np.sin(e_rad) / (2 * s))
        / math.cos(math.pi * math.sin(math.radians(0.88 * THETA)) / (2 * s))
    )


def _closed_form_reach_deg():
    s = math.sin(math.radians(THETA))
    c88 = math.cos(math.pi * math.sin(math.radians(0.88 * THETA)) / (2 * s))
    return math.degrees(math.asin(2 * s / math.pi * math.acos(BELOW_PATH_DDM * c88 / 0.0875)))


@pytest.mark.parametrize("array", list(ARRAY_TYPES))
def test_image_model_reaches_0_22_where_the_closed_form_says(array):
    model = _model(array)
    p = predict_path(model, THETA, 300.0, 120.0)
    check = check_below_path(lambda e: far_field_ddm(model, e, p.sbo_scale), THETA, p.path_angle_deg)
    reach = _closed_form_reach_deg()
    assert check.reach_deg == pytest.approx(reach, abs=2e-5)
    assert 0.68 < check.reach_fraction < 0.70  # the closed form gives 0.688 theta
    assert check.smooth and check.passed
    # Lowest DDM in the band: 0.22 at the reach angle itself (the closed form falls monotonically toward the path).
    assert check.lowest_ddm == pytest.approx(BELOW_PATH_DDM, abs=1e-9)
    assert check.ddm_at_down_to == pytest.approx(_closed_form_ddm(math.radians(0.45 * THETA)), rel=1e-6)


def test_carrier_levels_below_the_path_by_closed_form():
    # Carrier relative to the path at 0.45 theta (Kraus sec. 11-9, x = pi sin e / (2 sin theta)):
    # null-reference sin x; sideband-reference sin(x/2) / sin(pi/4); capture-effect sin x - sin(2x)/2.
    s = math.sin(math.radians(THETA))
    x = math.pi * math.sin(math.radians(0.45 * THETA)) / (2 * s)
    expected = {
        "null-reference": math.sin(x),
        "sideband-reference": math.sin(x / 2) / math.sin(math.pi / 4),
        "capture-effect": math.sin(x) - math.sin(2 * x) / 2,
    }
    for array, level in expected.items():
        model = _model(array)
        p = predict_path(model, THETA, 300.0, 120.0)
        check = check_below_path(
            lambda e, m=model, k=p.sbo_scale: far_field_ddm(m, e, k),
            THETA,
            p.path_angle_deg,
            carrier_of_elevation=lambda e, m=model: np.abs(m.far_fields(e)[0]),
        )
        assert check.carrier_at_down_to_db == pytest.approx(20 * math.log10(level), abs=0.01)
    assert 20 * math.log10(expected["capture-effect"]) == pytest.approx(-16.2, abs=0.05)  # the issue's -16 dB


def _tabulated(points):
    # An invented DDM curve, piecewise linear in e / theta (tests of the Annex 10 3.1.5.6.5 rules).
    f, d = np.array(points).T

    def ddm(e):
        return np.interp(np.degrees(e) / THETA, f[::-1], d[::-1])

    return ddm


def test_a_dip_before_0_22_is_not_smooth():
    # 3.1.5.6.5: the DDM shall increase smoothly for decreasing angle until 0.22 is reached.
    dip = _tabulated([(1.0, 0.0), (0.8, 0.15), (0.75, 0.12), (0.6, 0.25), (0.3, 0.3)])
    check = check_below_path(dip, THETA)
    assert not check.smooth and not check.passed
    assert check.reach_fraction == pytest.approx(0.6 + 0.15 * 0.03 / 0.13, abs=1e-6)


def test_the_band_ends_at_0_45_or_at_the_site_files_lower_angle():
    # Reached at 0.7 theta, falls below 0.22 between 0.45 and 0.30 theta: passes down to 0.45 theta,
    # fails down to 0.30 theta (3.1.5.6.5: down to 0.30 theta where the intercept procedure needs it).
    sag = _tabulated([(1.0, 0.0), (0.7, 0.22), (0.5, 0.3), (0.45, 0.25), (0.35, 0.15), (0.3, 0.2)])
    assert check_below_path(sag, THETA).passed
    low = check_below_path(sag, THETA, down_to_fraction=0.30)
    assert not low.passed
    assert low.lowest_ddm == pytest.approx(0.15, abs=1e-3) and low.lowest_at_deg == pytest.approx(
        0.35 * THETA, abs=0.01
    )


def test_reached_only_below_0_30_theta_fails_and_between_passes():
    # 3.1.5.6.5: 0.22 DDM shall be reached at an angle not less than 0.30 theta.
    late = _tabulated([(1.0, 0.0), (0.3, 0.2)])
    check = check_below_path(late, THETA)
    assert check.reach_deg is None and not check.passed
    between = _tabulated([(1.0, 0.0), (0.4, 0.22), (0.3, 0.3)])
    check = check_below_path(between, THETA)
    assert check.passed and check.reach_fraction == pytest.approx(0.4, abs=1e-6)


def test_lower_edge_outside_0_30_0_45_is_refused():
    with pytest.raises(ValueError, match="0.3-0.45"):
        check_below_path(lambda e: np.zeros_like(e), THETA, down_to_fraction=0.2)


def _site_with(site_text, array, extra=""):
    text = site_text.replace('array = "null-reference"', f'array = "{array}"')
    assert f'array = "{array}"' in text
    return text + extra


@pytest.mark.parametrize("array", list(ARRAY_TYPES))
def test_study_reports_a_below_path_finding_and_summary_block_per_array(write_site, site_text, array):
    from geo.outputs.summary import summary_dict
    from geo.site.site_file import load_site
    from geo.study.site_study import run_study

    result = run_study(load_site(write_site(_site_with(site_text, array))))
    codes = {f.code: f for f in result.findings}
    assert codes["below-path"].severity == "pass"  # flat ground: reached at 0.688 theta (closed form above)
    block = summary_dict(result)["below_path"]
    assert block["down_to_fraction"] == 0.45 and block["down_to_source"] == "default"
    assert block["course"]["reach_fraction"] == pytest.approx(0.688, abs=0.002)
    assert block["course"]["pass"] is True
    if array == "capture-effect":
        assert (
            codes["below-path-course-only"].severity == "info" and "too weak" in codes["below-path-course-only"].message
        )
        assert block["clearance"]["combined"]["pass"] is True
        assert block["clearance"]["offset_hz"] == 8000.0
        assert "derived" in block["clearance"]["feeds"]["source"]
    else:
        assert block["clearance"] is None


def test_site_file_lower_edge_and_its_bounds(write_site, site_text):
    from geo.errors import SiteFileError
    from geo.site.site_file import load_site
    from geo.study.site_study import run_study

    spec = load_site(write_site(site_text + "\n[prediction]\nbelow_path_down_to = 0.30\n"))
    assert spec.prediction.below_path_down_to == 0.30
    assert run_study(spec).below_path.down_to_fraction == 0.30
    for bad in ("0.2", "0.5", '"low"'):
        with pytest.raises(SiteFileError, match=r"prediction\.below_path_down_to.*(at least 0.3|at most 0.45|number)"):
            load_site(write_site(site_text + f"\n[prediction]\nbelow_path_down_to = {bad}\n"))


def test_sampled_ddm_is_exact_for_cubics_and_converges_as_h4():
    # Lagrange interpolation through 4 points reproduces any cubic exactly, and its error for a
    # smooth function falls as h^4 (Press et al., Numerical Recipes, 3rd ed., 2007, sec. 3.2).
    xs = np.sort(np.r_[np.linspace(0.02, 0.06, 20), 0.0411])  # uneven, as with the band's edge added
    cubic = lambda x: 3.0 - 2.0 * x + 40.0 * x**2 - 900.0 * x**3  # noqa: E731
    x = np.linspace(0.02, 0.06, 997)
    assert np.max(np.abs(sampled_ddm(xs, cubic(xs))(x) - cubic(x))) < 1e-12
    errors = []
    for n in (11, 21, 41):
        xs = np.linspace(0.02, 0.06, n)
        errors.append(np.max(np.abs(sampled_ddm(xs, np.sin(200.0 * xs))(x) - np.sin(200.0 * x))))
    assert errors[0] / errors[1] > 10.0 and errors[1] / errors[2] > 12.0  # 2^4 = 16 in the limit
    with pytest.raises(ValueError, match="at least 4"):
        sampled_ddm([0.1, 0.2, 0.3], [0.0, 0.1, 0.2])


@pytest.mark.parametrize("array", list(ARRAY_TYPES))
def test_sampled_ddm_at_the_surface_checks_elevations_keeps_the_closed_form_reach(array):
    # The image DDM sampled only at the surface check's elevations (31 from 0.30 theta to the path)
    # and read through the cubic still reaches 0.22 where the closed form says (Kraus, as above).
    from geo.study.surface import BELOW_PATH_SAMPLES

    model = _model(array)
    p = predict_path(model, THETA, 300.0, 120.0)
    e = np.linspace(0.30 * math.radians(THETA), math.radians(p.path_angle_deg), BELOW_PATH_SAMPLES)
    sampled = sampled_ddm(e, far_field_ddm(model, e, p.sbo_scale))
    check = check_below_path(sampled, THETA, p.path_angle_deg)
    assert check.reach_deg == pytest.approx(_closed_form_reach_deg(), abs=1e-4)
    assert check.ddm_at_down_to == pytest.approx(_closed_form_ddm(math.radians(0.45 * THETA)), abs=2e-4)
