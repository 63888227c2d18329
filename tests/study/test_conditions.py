"""The path under snow and ground conditions ([conditions]): closed forms of image theory and the
site file's errors."""

from __future__ import annotations

import math
import tomllib

import pytest

from geo.errors import SiteFileError
from geo.site.site_file import parse_site
from geo.study.site_study import run_study
from geo.study.variants import Variant, variant_prediction
from tests.tests_support import BASE_SITE

#: A wet snow surface that reflects fully (reflection coefficient -1 to 1e-4 at 3 deg: Fresnel, Balanis sec. 5.3),
#: the case the closed form is for; the model's own wet snow (lossy, eps about 2.5) is checked more loosely.
WET_REFLECTING = complex(1e6, 0.0)


def flat_study(extra: str = ""):
    return run_study(parse_site(tomllib.loads(BASE_SITE + extra)))


@pytest.fixture(scope="module")
def study():
    return flat_study('\n[conditions]\nsnow_depth = [0.0, 0.3, 1.0]\nsnow = "wet"\n')


@pytest.mark.parametrize("depth_m", [0.3, 1.0, 1.5])
def test_wet_snow_on_a_plane_moves_the_null_reference_path(study, depth_m):
    # Image theory (Kraus, Antennas, sec. 11-9): the SBO antenna at 2h stands H = 2h - d above the wet snow's
    # surface and the path lies on its first null, sin(theta) = lambda / (2 H), for a fully reflecting surface.
    h = study.antennas[0].height_m
    lam = study.wavelength_m
    want = math.degrees(math.asin(lam / (2.0 * (2.0 * h - depth_m))))
    full = variant_prediction(study, Variant(snow_depth_m=depth_m, snow="wet", snow_permittivity=WET_REFLECTING))
    assert full.path_angle_deg == pytest.approx(want, abs=1e-3)
    # the model's wet snow reflects less than fully, which moves the path a little (our check of the size)
    lossy = variant_prediction(study, Variant(snow_depth_m=depth_m, snow="wet"))
    assert lossy.path_angle_deg == pytest.approx(want, abs=1e-2)


def test_conditions_of_the_site_file(study):
    got = study.conditions
    assert [c.condition.snow_depth_m for c in got] == [0.0, 0.3, 1.0]
    assert got[0].path_angle_deg == pytest.approx(study.prediction.path_angle_deg, abs=1e-9)
    h, lam = study.antennas[0].height_m, study.wavelength_m
    assert got[2].path_angle_deg > got[1].path_angle_deg > got[0].path_angle_deg
    # the RDH rises with the path angle: the straight path from the same intercept (geometry of the path)
    assert got[2].rdh_m > got[1].rdh_m > got[0].rdh_m
    assert got[1].path_angle_deg == pytest.approx(math.degrees(math.asin(lam / (2 * (2 * h - 0.3)))), abs=1e-2)


def test_dry_snow_of_air_is_no_snow(study):
    # a layer with the permittivity of air changes nothing but the reference plane (image theory)
    air = variant_prediction(study, Variant(snow_depth_m=0.5, snow="dry", snow_permittivity=complex(1.0, 0.0)))
    assert air.path_angle_deg == pytest.approx(study.prediction.path_angle_deg, abs=1e-9)
    # the layer's coefficient is the plane-wave one (Born and Wolf sec. 1.6.4): at a range R it errs by about
    # 2 d^2 / R in path difference, a few centimetres of RDH for half a metre (our estimate; checked loosely)
    assert air.straight_fit[0] == pytest.approx(study.prediction.straight_fit[0], abs=0.05)


def test_ground_classes_per_condition():
    s = flat_study('\n[conditions]\nground = ["dry", "medium", "wet"]\n')
    assert [c.condition.ground for c in s.conditions] == ["dry", "medium", "wet"]
    # a lossy plane moves a null-reference path by hundredths of a degree at most (our check of the size)
    for c in s.conditions:
        assert c.path_angle_deg == pytest.approx(s.prediction.path_angle_deg, abs=0.05)


@pytest.mark.parametrize(
    ("table", "field"),
    [
        ("snow_depth = 0.3\n", "conditions.snow"),
        ('snow_depth = -1\nsnow = "dry"\n', "conditions.snow_depth"),
        ('snow_depth = [0.1, "x"]\nsnow = "dry"\n', "conditions.snow_depth 2"),
        ('snow_depth = 0.2\nsnow = "slush"\n', "conditions.snow"),
        ('ground = "swamp"\n', "conditions.ground"),
        ('ground = ["wet", 3]\n', "conditions.ground 2"),
        ("depth = 1\n", "conditions.depth"),
    ],
)
def test_bad_conditions(table, field):
    with pytest.raises(SiteFileError) as err:
        parse_site(tomllib.loads(BASE_SITE + "\n[conditions]\n" + table))
    assert err.value.field == field


def test_snow_over_the_lowest_antenna():
    site = BASE_SITE.replace('array = "null-reference"', 'array = "sideband-reference"')  # lower at 2.1 m
    with pytest.raises(SiteFileError, match="reaches the lowest antenna"):
        run_study(parse_site(tomllib.loads(site + '\n[conditions]\nsnow_depth = 2.5\nsnow = "dry"\n')))
    with pytest.raises(SiteFileError, match="give less snow"):
        flat_study('\n[conditions]\nsnow_depth = 2.9\nsnow = "wet"\n')
