"""Antenna moves from measured results: the null-reference closed form and the recovery of known
antenna errors from measurements made by an independent image-theory computation written here."""

from __future__ import annotations

import math
import tomllib

import numpy as np
import pytest

from geo.site.measured_file import MeasuredResults, MeasuredRun
from geo.site.site_file import parse_site
from geo.study.adjustment import adjust
from geo.study.site_study import run_study
from tests.tests_support import BASE_SITE

C_M_S = 299_792_458.0  # SI, exact
GP_MHZ = 332.00  # the glide path paired with localizer 109.30 MHz (FAA AIM TBL 1-1-4; Annex 10 Vol I 3.1.6.1)
LAMBDA_M = C_M_S / (GP_MHZ * 1e6)
THETA = math.radians(3.0)
SETBACK_M, OFFSET_M = 290.0, 130.0  # BASE_SITE's mast
BASE_ABOVE_THRESHOLD_M = 511.2 - 512.0  # BASE_SITE: mast base 511.2, threshold 512.0


@pytest.fixture(scope="module")
def study():
    return run_study(parse_site(tomllib.loads(BASE_SITE)))


def design_heights():
    """Null-reference: lower lambda / (4 sin theta), upper twice that (FAA Order 6750.16; image theory)."""
    h = LAMBDA_M / (4 * math.sin(THETA))
    return np.array([h, 2 * h])


@pytest.mark.parametrize("measured_deg", [3.1, 2.95, 3.2])
def test_null_reference_heights_scale_with_the_measured_angle(study, measured_deg):
    # Image theory on a plane: sin(theta) = lambda / (4 h), so a measured theta_m asks for every height scaled by
    # sin(theta_m) / sin(theta_design) (Kraus, Antennas, sec. 11-9); the tool's heights after the move within 1 mm.
    measured = MeasuredResults("t.toml", "m", {"path_angle_deg": measured_deg}, (), ())
    got = adjust(study, measured, step_m=1e-6)
    heights = np.array([a.height_m for a in study.antennas])
    assert heights == pytest.approx(design_heights(), abs=1e-6)  # the study's heights are the closed form's
    want = design_heights() * math.sin(math.radians(measured_deg)) / math.sin(THETA)
    assert heights + got.moves == pytest.approx(want, abs=1e-3)
    assert heights + got.moves_rounded == pytest.approx(want, abs=1e-3)
    assert got.after["path_angle_deg"] == pytest.approx(study.prediction.path_angle_deg, abs=2e-3)


def independent_ddm(heights, distance_m, height_m):
    """DDM along the approach for a null-reference array over a perfectly conducting plane, written here:
    CSB on the lower antenna, SBO on the upper, each with its image (reflection -1) (Kraus sec. 11-9); exact
    distances; DDM = 2 Re(k S / C) (small-signal form of the 90/150 Hz depths, Annex 10 Vol I 3.1.5.5.1 at
    40 % each); k levels the DDM to 0.0875 at 0.88 theta far away for the design heights (Annex 10 Vol I
    3.1.5.6), from the far-field patterns sin(2 pi h sin e / lambda)."""
    k = 2 * math.pi / LAMBDA_M
    h_design = design_heights()
    e = 0.88 * THETA
    ratio = math.sin(k * h_design[1] * math.sin(e)) / math.sin(k * h_design[0] * math.sin(e))
    level = 0.0875 / (2 * ratio)
    shifts = (h_design**2 - h_design[0] ** 2) / (2 * OFFSET_M)  # proximity shifts of the design (FAA 6750.16)
    u = SETBACK_M + np.asarray(distance_m, float)
    z = np.asarray(height_m, float) - BASE_ABOVE_THRESHOLD_M

    def pattern(h, shift):
        w = OFFSET_M - shift
        direct = np.sqrt(u**2 + w**2 + (z - h) ** 2)
        image = np.sqrt(u**2 + w**2 + (z + h) ** 2)
        return np.exp(-1j * k * direct) / direct - np.exp(-1j * k * image) / image

    c = pattern(heights[0], shifts[0])
    s = pattern(heights[1], shifts[1])
    return 2 * level * np.real(s / c)


def test_moves_recover_known_antenna_errors(study):
    # The array as installed: lower 20 mm low, upper 40 mm high (invented errors); DDM measured on a level run
    # at 150 m (0.3 to 1.8 theta) and on the designed path, with 0.0005 DDM of noise (seeded).
    errors = np.array([-0.020, 0.040])
    installed = design_heights() + errors
    rng = np.random.default_rng(23)
    level_d = np.arange(1500.0, 9600.0, 100.0)
    level_h = np.full(level_d.size, 150.0)
    path_d = np.arange(1000.0, 18000.0, 250.0)
    path_h = (SETBACK_M + path_d) * math.tan(THETA) + (study.intercept_elevation_m - 512.0)
    runs = []
    for name, d, h, with_height in (("level", level_d, level_h, True), ("path", path_d, path_h, False)):
        value = independent_ddm(installed, d, h) + rng.normal(0.0, 0.0005, d.size)
        runs.append(MeasuredRun(name, "ddm", d, value, h if with_height else None, tuple(range(2, d.size + 2))))
    got = adjust(study, MeasuredResults("t.csv", "m", {}, (), tuple(runs)), step_m=1e-6)
    assert got.moves == pytest.approx(-errors, abs=3e-3)
    assert got.moves_rounded == pytest.approx(-errors, abs=3e-3)
    assert abs(got.bias_scale) < 0.01
    assert got.misfit_fitted < got.misfit_before
