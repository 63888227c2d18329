"""Magnetic variation (World Magnetic Model through pygeomag) and the runway designator rule."""

from datetime import date

import pytest

from geo.airfield.magnetic import (
    DEFAULT_EPOCH_YEAR,
    decimal_year,
    designator_number,
    designator_steps_apart,
    magnetic_variation,
    parse_designator,
)

# The Space Needle, Seattle: pygeomag's documented examples (its README and the docstring of
# GeoMag.calculate, pygeomag 1.1.0), altitude 0 km.
SPACE_NEEDLE = (47.6205, -122.3493)


def test_variation_matches_pygeomag_documented_wmm_2025_value():
    v = magnetic_variation(*SPACE_NEEDLE, 0.0, 2025.25)
    assert v.variation_deg == pytest.approx(15.065629638512593, abs=1e-9)  # pygeomag docs, WMM-2025 at 2025.25
    assert (v.model, v.model_epoch_year, v.unreliable) == ("WMM-2025", 2025.0, False)


def test_an_older_date_takes_the_older_model_as_pygeomag_documents():
    v = magnetic_variation(*SPACE_NEEDLE, 0.0, 2013.25)
    assert v.variation_deg == pytest.approx(16.415602225952366, abs=1e-9)  # pygeomag docs, WMM-2010 at 2013.25
    assert v.model == "WMM-2010"


def test_the_default_epoch_is_the_wmm_2025_epoch_not_the_clock():
    from pygeomag import GeoMag

    # The epoch in the header of WMM-2025's coefficient file as pygeomag ships it (NOAA/BGS WMM-2025).
    assert GeoMag(coefficients_file="wmm/WMM_2025.COF").life_span[0] == DEFAULT_EPOCH_YEAR
    assert magnetic_variation(*SPACE_NEEDLE, 0.0, DEFAULT_EPOCH_YEAR).model == "WMM-2025"


def test_annual_change_is_the_variation_a_year_on():
    from pygeomag import GeoMag

    geo_mag = GeoMag(coefficients_file="wmm/WMM_2025.COF")  # the reference library itself
    now = geo_mag.calculate(glat=46.35, glon=-101.2, alt=0.612, time=2026.0).d
    later = geo_mag.calculate(glat=46.35, glon=-101.2, alt=0.612, time=2027.0).d
    v = magnetic_variation(46.35, -101.2, 612.0, 2026.0)
    assert v.variation_deg == pytest.approx(now, abs=1e-12)
    assert v.annual_change_deg == pytest.approx(later - now, abs=1e-12)


def test_dates_outside_the_models_are_refused():
    with pytest.raises(ValueError, match="no World Magnetic Model"):
        magnetic_variation(*SPACE_NEEDLE, 0.0, 2031.0)


def test_decimal_year():
    # 2024 is a leap year: 1 July is day 182 of 366 (Gregorian calendar).
    assert decimal_year(date(2024, 7, 1)) == pytest.approx(2024 + 182 / 366, abs=1e-12)
    assert decimal_year(date(2025, 1, 1)) == 2025.0


@pytest.mark.parametrize(
    "bearing_deg, number",
    # ICAO Annex 14 Vol I 5.2.2 (from memory): the whole number nearest one tenth of the magnetic
    # bearing; a single digit takes a leading zero and north is 36, not 00.
    [(266.6, 27), (264.9, 26), (86.6, 9), (5.1, 1), (4.9, 36), (359.9, 36), (0.0, 36), (354.9, 35), (-3.0, 36)],
)
def test_designator_number_is_the_bearing_over_ten_rounded(bearing_deg, number):
    assert designator_number(bearing_deg) == number


def test_steps_go_round_the_compass():
    # 36 and 01 are neighbours; opposite ends are 18 apart (ICAO Annex 14 Vol I 5.2.2, from memory).
    assert designator_steps_apart(1, 356.0) == 1
    assert designator_steps_apart(27, 86.6) == 18
    assert designator_steps_apart(24, 266.6) == 3


@pytest.mark.parametrize("text, parsed", [("27", (27, "")), ("09L", (9, "L")), ("36C", (36, "C")), ("01R", (1, "R"))])
def test_good_designators_parse(text, parsed):
    assert parse_designator(text) == parsed


@pytest.mark.parametrize("text", ["9", "00", "37", "27X", "27 ", "27l", "RWY27", "", "270", "09LR"])
def test_bad_designators_do_not_parse(text):
    assert parse_designator(text) is None
