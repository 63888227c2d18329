"""Whole studies: positions, solver and findings, against independent constructions."""

import pytest
from pyproj import Geod

from geo.errors import SiteFileError
from geo.site.site_file import load_site
from geo.study.site_study import run_study
from geo.units import M_PER_FT

GEOD = Geod(ellps="WGS84")


def test_antenna_positions_match_a_geodesic_construction(write_site, site_text):
    # Independent method: pyproj.Geod forward geodesics (GeographicLib), within 5 cm.
    result = run_study(load_site(write_site(site_text)))
    thr = result.spec.threshold
    az, _, _ = GEOD.inv(thr.lon_deg, thr.lat_deg, result.spec.end.lon_deg, result.spec.end.lat_deg)
    lon_p, lat_p, back = GEOD.fwd(thr.lon_deg, thr.lat_deg, az, 290.0)
    for antenna in result.antennas:
        lon_a, lat_a, _ = GEOD.fwd(lon_p, lat_p, back + 180.0 + 90.0, 130.0 - antenna.shift_toward_runway_m)
        _, _, miss = GEOD.inv(lon_a, lat_a, antenna.lon_deg, antenna.lat_deg)
        assert miss < 0.05
    lon_g, lat_g, _ = GEOD.fwd(thr.lon_deg, thr.lat_deg, az, result.gpip.along_m)
    assert GEOD.inv(lon_g, lat_g, result.gpip.lon_deg, result.gpip.lat_deg)[2] < 0.05
    assert result.runway.length_m == pytest.approx(GEOD.inv(thr.lon_deg, thr.lat_deg, 148.95, -35.42)[2], abs=1e-6)


def test_surveyed_position_gives_back_side_offset_and_setback(write_site, site_text):
    first = run_study(load_site(write_site(site_text)))
    text = site_text.replace(
        'side = "right"\noffset = 130\nsetback = 290\n',
        f"position = {{ lat = {first.mast.lat_deg!r}, lon = {first.mast.lon_deg!r} }}\n",
    )
    again = run_study(load_site(write_site(text, "surveyed.toml")))
    assert again.mast.side == "right"
    assert again.mast.setback_m == pytest.approx(290.0, abs=1e-4)
    assert again.mast.offset_m == pytest.approx(130.0, abs=1e-4)
    assert again.rdh_m == pytest.approx(first.rdh_m, abs=1e-6)


def test_setback_solved_from_target_rdh(write_site, site_text):
    text = site_text.replace("setback = 290\n", "").replace(
        'array = "null-reference"', 'array = "null-reference"\ntarget_rdh = 15.5'
    )
    result = run_study(load_site(write_site(text)))
    assert result.mast.setback_source == "solved for target RDH"
    assert result.rdh_m == pytest.approx(15.5, abs=1e-9)


def test_findings_follow_annex_10_rdh_bands(write_site, site_text):
    # Annex 10 Vol I 3.1.5.1.4-3.1.5.1.6 (values seen, paragraph numbers memory): 15 m +3 m;
    # 12 m +6 m for Category I on code 1-2 runways. RDH here: 511.2 + 290 tan 3 - 512 = 14.40 m.
    result = run_study(load_site(write_site(site_text)))
    assert result.rdh_m == pytest.approx(14.398, abs=0.001)
    by_code = {f.code: f for f in result.findings}
    assert by_code["rdh"].severity == "warning"  # Cat I, code unknown: 15 m recommended
    cat2 = run_study(
        load_site(
            write_site(site_text.replace('array = "null-reference"', 'array = "null-reference"\ncategory = "II"'))
        )
    )
    assert {f.code: f for f in cat2.findings}["rdh"].severity == "fail"
    code2 = run_study(load_site(write_site(site_text.replace("width = 45", "width = 45\ncode = 2"))))
    assert {f.code: f for f in code2.findings}["rdh"].severity == "pass"


def test_typical_ranges_from_the_aim(write_site, site_text):
    # FAA AIM 1-1-9 (seen): 750-1,250 ft from the approach end, 250-650 ft from the centre line.
    result = run_study(load_site(write_site(site_text)))
    by_code = {f.code: f for f in result.findings}
    assert 750 * M_PER_FT < 290.0 < 1250 * M_PER_FT and by_code["setback-typical"].severity == "pass"
    assert 250 * M_PER_FT < 130.0 < 650 * M_PER_FT and by_code["offset-typical"].severity == "pass"
    far = run_study(
        load_site(
            write_site(site_text.replace("setback = 290", "setback = 420").replace("offset = 130", "offset = 60"))
        )
    )
    by_code = {f.code: f for f in far.findings}
    assert 420.0 > 1250 * M_PER_FT and by_code["setback-typical"].severity == "info"
    assert 60.0 < 250 * M_PER_FT and by_code["offset-typical"].severity == "info"


def test_mast_past_the_runway_end_is_an_input_error(write_site, site_text):
    with pytest.raises(SiteFileError, match="outside the") as info:
        run_study(load_site(write_site(site_text.replace("setback = 290", "setback = 4000"))))
    assert info.value.field == "mast.setback"


def test_unpaired_frequency_is_a_warning(write_site, site_text):
    result = run_study(load_site(write_site(site_text.replace("localizer_mhz = 109.30", "frequency_mhz = 332.07"))))
    assert {f.code: f for f in result.findings}["channel"].severity == "warning"


def _demo_with(tmp_path, runway_lines: str, swap: bool = False):
    """The demo site (no surface prediction) with lines added to [runway], its ends swapped if asked."""
    from tests_support import demo_site_without_surface

    path = demo_site_without_surface(tmp_path)
    text = path.read_text(encoding="utf-8")
    if swap:
        thr = "threshold = { lat = 46.35, lon = -101.2, elevation = 612.0 }"
        end = "end = { lat = 46.351049044, lon = -101.236344979, elevation = 606.4 }"
        assert thr in text and end in text
        text = text.replace(thr, "@T").replace(end, "@E")
        text = text.replace("@T", "threshold = " + end.split(" = ", 1)[1]).replace(
            "@E", "end = " + thr.split(" = ", 1)[1]
        )
    path.write_text(text.replace("code = 4", f"code = 4\n{runway_lines}", 1), encoding="utf-8")
    return path


def _expected_demo_number(year: float) -> int:
    """The demo's runway number from outside sources: pyproj.Geod's bearing, pygeomag's declination."""
    from pygeomag import GeoMag

    true_deg = GEOD.inv(-101.2, 46.35, -101.236344979, 46.351049044)[0] % 360.0
    model = GeoMag(coefficients_file="wmm/WMM_2025.COF" if year >= 2025 else "wmm/WMM_2020.COF")
    declination_deg = model.calculate(glat=46.35, glon=-101.2, alt=0.612, time=year).d
    # ICAO Annex 14 Vol I 5.2.2 (from memory): magnetic bearing / 10, rounded.
    return round(((true_deg - declination_deg) % 360.0) / 10.0)


def test_demo_designator_27_agrees_with_its_magnetic_bearing(tmp_path):
    assert _expected_demo_number(2025.0) == 27  # the demo is runway 27 (demo_airfield/site.toml)
    result = run_study(load_site(_demo_with(tmp_path, 'designator = "27"')))
    [found] = [f for f in result.findings if f.code == "runway-designator"]
    assert found.severity == "pass" and "WMM-2025 at 2025.0" in found.message
    assert result.magnetic.bearing_number == _expected_demo_number(2025.0)
    from pygeomag import GeoMag

    declination_deg = GeoMag(coefficients_file="wmm/WMM_2025.COF").calculate(46.35, -101.2, 0.612, 2025.0).d
    assert result.magnetic.variation.variation_deg == pytest.approx(declination_deg, abs=1e-9)
    true_deg = GEOD.inv(-101.2, 46.35, -101.236344979, 46.351049044)[0] % 360.0
    assert result.magnetic.magnetic_bearing_deg == pytest.approx(true_deg - declination_deg, abs=1e-6)


def test_demo_magnetic_date_takes_the_model_of_that_date(tmp_path):
    result = run_study(load_site(_demo_with(tmp_path, 'designator = "27"\nmagnetic_date = 2022-01-01')))
    assert result.magnetic.variation.model == "WMM-2020"
    assert result.magnetic.bearing_number == _expected_demo_number(2022.0)


def test_swapped_threshold_and_end_are_one_line_error(tmp_path):
    path = _demo_with(tmp_path, 'designator = "27"', swap=True)
    with pytest.raises(SiteFileError) as info:
        run_study(load_site(path))
    text = str(info.value)
    assert info.value.field == "runway.threshold" and "\n" not in text
    assert text.startswith(f"{path}: runway.threshold: threshold and end look swapped: ")
    assert "swap runway.threshold and runway.end" in text
    # The reversed demo lands on 092.4 deg true (pyproj.Geod), runway 09 (Annex 14 5.2.2, from memory).
    assert "makes runway 09" in text and "true 092.4 deg" in text


def test_a_designator_of_neither_direction_is_a_warning(tmp_path):
    result = run_study(load_site(_demo_with(tmp_path, 'designator = "24R"')))
    [found] = [f for f in result.findings if f.code == "runway-designator"]
    assert found.severity == "warning"
    assert 'runway.designator "24R"' in found.message and "runway 27, 3 numbers away" in found.message
    assert "variation 5.8 deg E" in found.message and "magnetic bearing 266.6 deg" in found.message


def test_without_designator_nothing_magnetic_is_computed(tmp_path):
    result = run_study(load_site(_demo_with(tmp_path, "")))
    assert result.magnetic is None and not [f for f in result.findings if f.code == "runway-designator"]
