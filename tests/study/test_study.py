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
