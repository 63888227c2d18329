"""Every DEM and datum check before the setback solve: the key that looks wrong, named with its fix.

Check values: the EGM96 undulation at the demo threshold from PROJ's geoid grid, as seen in
../shared/REFERENCE.md "Real ground" (at lon -101.2, lat 46.35 an ellipsoidal height of 0 is an EGM96
height of +20.51 m, so N = -20.51 m); h = H + N (Hofmann-Wellenhof and Moritz, *Physical Geodesy*,
sec. 2.7); 1 ft = 0.3048 m exactly (NIST Handbook 44, App. C). The demo DEM is 612.0 m at the
threshold plus centimetres of cell noise (demo_airfield/make_dem.py, ``ground_m``), the surveyed
612.0 m of demo_airfield/site.toml: the disagreements expected below are computed from those values.
"""

from __future__ import annotations

import re
import shutil
from pathlib import Path

import numpy as np
import pytest
from tests_support import DEMO_SITE, NO_SURFACE

from geo.errors import SiteFileError
from geo.site.site_file import load_site
from geo.study.dem_causes import HeightKeys, likely_cause
from geo.study.findings import check_datum_keys
from geo.study.site_study import run_study

M_PER_FT = 0.3048  # NIST Handbook 44, App. C (written here, not taken from the library)
N_EGM96_M = -20.51  # EGM96 undulation at the demo threshold (PROJ egm96_15.gtx via REFERENCE.md)
THRESHOLD_M = 612.0  # demo_airfield/site.toml runway.threshold.elevation
#: The demo DEM's own disagreement with its survey at the threshold: cell noise of centimetres (make_dem.py).
DEM_NOISE_M = 0.1


def _site(folder: Path, replacements=(), runway_extra: str = "", terrain_extra: str = "") -> Path:
    """The demo site file in ``folder`` with its DEM beside it, edited; no surface prediction."""
    text = DEMO_SITE.read_text(encoding="utf-8")
    for old, new in replacements:
        assert old in text
        text = text.replace(old, new)
    text = text.replace("width = 45\n", "width = 45\n" + runway_extra, 1)
    text = text.replace("[terrain]\n", "[terrain]\n" + terrain_extra)
    shutil.copy(DEMO_SITE.parent / "dem.tif", folder / "dem.tif")
    path = folder / "site.toml"
    path.write_text(text + NO_SURFACE, encoding="utf-8")
    return path


def _survey_ellipsoidal(n_m: float):
    """The demo's elevations moved from the DEM's orthometric datum to the ellipsoid: h = H + N."""
    return [
        ("elevation = 612.0", f"elevation = {612.0 + n_m!r}"),
        ("elevation = 606.4", f"elevation = {606.4 + n_m!r}"),
        ("base_elevation = 611.4", f"base_elevation = {611.4 + n_m!r}"),
    ]


def _difference_m(text: str) -> float:
    """The disagreement (DEM minus survey) a message states. [m]"""
    return float(re.search(r"by ([+-][\d,.]+) m", text).group(1).replace(",", ""))


def _figures(text: str) -> tuple[float, float]:
    """The disagreement and the agreement after the correction a message states. [m]"""
    within = float(re.search(r"within ([\d,.]+) m", text).group(1).replace(",", ""))
    return _difference_m(text), within


def _stop(path: Path) -> SiteFileError:
    with pytest.raises(SiteFileError) as info:
        run_study(load_site(path))
    assert "puts the mast" not in str(info.value)  # not the solve's error
    return info.value


def test_datum_undulation_of_the_wrong_sign_stops_before_the_solve(tmp_path):
    given = -N_EGM96_M  # +20.51: the sign slip
    path = _site(
        tmp_path,
        _survey_ellipsoidal(N_EGM96_M),
        runway_extra=f'vertical_datum = "WGS84"\ngeoid_undulation = {given!r}\n',
        terrain_extra='vertical_datum = "EGM96"\n',
    )
    error = _stop(path)
    text = str(error)
    assert error.field == "runway.geoid_undulation" and text.startswith(f"{path}: runway.geoid_undulation: ")
    assert "the sign of runway.geoid_undulation looks wrong: with -20.51 m" in text
    # DEM: H + N_given; survey: H + N_true, so DEM - survey = N_given - N_true = 2 N_given = +41.02 m.
    diff, within = _figures(text)
    assert diff == pytest.approx(given - N_EGM96_M, abs=DEM_NOISE_M)
    assert within <= DEM_NOISE_M
    assert "\n" not in text


def test_datum_undulation_in_feet_in_a_metre_file_stops_before_the_solve(tmp_path):
    given = round(N_EGM96_M / M_PER_FT, 2)  # -67.29: the number in feet, in a file in metres
    path = _site(
        tmp_path,
        _survey_ellipsoidal(N_EGM96_M),
        runway_extra=f'vertical_datum = "WGS84"\ngeoid_undulation = {given!r}\n',
        terrain_extra='vertical_datum = "EGM96"\n',
    )
    error = _stop(path)
    text = str(error)
    assert error.field == "runway.geoid_undulation"
    assert "runway.geoid_undulation looks written in feet in a metre file" in text
    assert "write runway.geoid_undulation = -20.51" in text
    # DEM - survey = N_given - N_true = N_given (1 - 0.3048) = -46.78 m.
    diff, within = _figures(text)
    assert diff == pytest.approx(given * (1.0 - M_PER_FT), abs=DEM_NOISE_M)
    assert within <= DEM_NOISE_M
    assert "length unit" not in text and 'units = "ft"' not in text


def test_datum_undulation_in_metres_in_a_foot_file_is_named():
    # A foot file that writes geoid_undulation = -20.51 (metres): read as -20.51 ft = -6.2514 m.
    read_m = N_EGM96_M * M_PER_FT
    keys = HeightKeys("ft", 0.0, "EGM96", "WGS84", "published undulation", read_m, read_m)
    dem_m = THRESHOLD_M + read_m  # H + N as read
    survey_m = THRESHOLD_M + N_EGM96_M  # H + N
    # DEM - survey = N_read (1 - 1/0.3048) = +14.26 m: under the 15-40 m band of a missing datum.
    assert dem_m - survey_m == pytest.approx(read_m * (1.0 - 1.0 / M_PER_FT), abs=1e-9)
    field_name, cause = likely_cause(dem_m, survey_m, keys)
    assert field_name == "runway.geoid_undulation"
    assert "looks written in metres in a foot file" in cause
    assert "write runway.geoid_undulation = -67.29" in cause  # -20.51 m / 0.3048 m per ft


def test_datum_sign_with_a_fixed_setback_is_the_first_finding(tmp_path):
    given = -N_EGM96_M
    path = _site(
        tmp_path,
        [*_survey_ellipsoidal(N_EGM96_M), ("offset = 120\n", "offset = 120\nsetback = 300\n")],
        runway_extra=f'vertical_datum = "WGS84"\ngeoid_undulation = {given!r}\n',
        terrain_extra='vertical_datum = "EGM96"\n',
    )
    first = run_study(load_site(path)).findings[0]
    assert first.code == "dem-threshold" and first.severity == "warning"
    assert "the sign of runway.geoid_undulation looks wrong" in first.message
    assert _figures(first.message)[0] == pytest.approx(2.0 * given, abs=DEM_NOISE_M)


def test_datum_runway_datum_without_the_terrain_one_stops_naming_it(tmp_path):
    path = _site(tmp_path, _survey_ellipsoidal(N_EGM96_M), runway_extra='vertical_datum = "WGS84"\n')
    error = _stop(path)
    text = str(error)
    assert error.field == "terrain.vertical_datum"
    assert "the DEM is taken to be in WGS84 too" in text and "give terrain.vertical_datum" in text
    # Nothing converted: DEM - survey = H - (H + N) = -N = +20.51 m.
    assert _difference_m(text) == pytest.approx(-N_EGM96_M, abs=DEM_NOISE_M)


def test_datum_vertical_offset_that_should_not_be_there_stops_naming_it(tmp_path):
    path = _site(tmp_path, [("vertical_offset = 0.0", "vertical_offset = 30")])
    error = _stop(path)
    text = str(error)
    assert error.field == "terrain.vertical_offset"
    assert "terrain.vertical_offset = 30.00 looks wrong: without it the DEM agrees" in text
    diff, within = _figures(text)
    assert diff == pytest.approx(30.0, abs=DEM_NOISE_M) and within <= DEM_NOISE_M


@pytest.mark.parametrize(
    "runway_extra, terrain_extra, words",
    [
        ('vertical_datum = "EGM96"\n', "", "terrain.vertical_datum: the DEM's heights are taken to be in EGM96 too"),
        (
            "",
            'vertical_datum = "EGM96"\n',
            "runway.vertical_datum: the site file's elevations are taken to be in EGM96",
        ),
    ],
)
def test_datum_one_key_of_two_is_a_warning_naming_the_assumption(tmp_path, runway_extra, terrain_extra, words):
    # The demo's survey and DEM share a datum, so naming it on one side only changes nothing but the warning.
    result = run_study(load_site(_site(tmp_path, runway_extra=runway_extra, terrain_extra=terrain_extra)))
    found = [f for f in result.findings if f.code == "vertical-datum"]
    assert len(found) == 1 and found[0].severity == "warning" and words in found[0].message
    assert "dem-threshold" not in {f.code for f in result.findings}


def test_datum_both_or_neither_key_is_no_warning():
    assert check_datum_keys("EGM96", "WGS84") is None and check_datum_keys(None, None) is None
    assert check_datum_keys(None, "WGS84").code == "vertical-datum"


def test_datum_stop_on_the_command_line_is_one_line_with_exit_2(tmp_path):
    from click.testing import CliRunner

    from cli.main import main

    path = _site(
        tmp_path,
        _survey_ellipsoidal(N_EGM96_M),
        runway_extra=f'vertical_datum = "WGS84"\ngeoid_undulation = {-N_EGM96_M!r}\n',
        terrain_extra='vertical_datum = "EGM96"\n',
    )
    out = tmp_path / "out"
    run = CliRunner().invoke(main, ["run", str(path), "--out", str(out)])
    assert run.exit_code == 2 and "Traceback" not in run.output and not out.exists()
    lines = [line for line in run.output.splitlines() if line.strip()]
    assert len(lines) == 1 and "runway.geoid_undulation" in lines[0]


def test_datum_sign_stops_the_sweeps_setback_solve_too(tmp_path):
    from geo.study.solved_setbacks import solve_setbacks
    from geo.study.sweep import SweepOptions

    path = _site(
        tmp_path,
        _survey_ellipsoidal(N_EGM96_M),
        runway_extra=f'vertical_datum = "WGS84"\ngeoid_undulation = {-N_EGM96_M!r}\n',
        terrain_extra='vertical_datum = "EGM96"\n',
    )
    with pytest.raises(SiteFileError) as info:
        solve_setbacks(load_site(path), SweepOptions((250.0, 310.0), (100.0, 150.0), sides=("right",)))
    assert info.value.field == "runway.geoid_undulation" and str(info.value).startswith(f"{path}: ")
    assert _difference_m(str(info.value)) == pytest.approx(-2.0 * N_EGM96_M, abs=DEM_NOISE_M)


def test_the_ground_falling_the_wrong_way_along_the_runway_is_a_warning():
    # demo_airfield/make_dem.py: the demo ground is 612.0 - 0.002 along - 0.003 cross (m; plus a few
    # centimetres of noise, and its ditch, rise and hill lie away from the centre line's ends), so from
    # the threshold to the end, L m along the centre line, the DEM falls by 0.002 L. The survey says
    # 612.0 to 606.4 (demo_airfield/site.toml): the same way, no warning. An end surveyed 5.6 m above
    # the threshold instead rises: the ground falls the wrong way for the landing direction.
    from demo_airfield import SITE_FILE
    from geo.airfield.frame import RunwayFrame
    from geo.ground.dem import Dem
    from geo.site.site_file import load_site
    from geo.study.dem_checks import RUNWAY_FALL_TOLERANCE_M, check_runway_fall

    spec = load_site(SITE_FILE)
    thr, end = spec.threshold, spec.end
    frame = RunwayFrame(thr.lat_deg, thr.lon_deg, end.lat_deg, end.lon_deg)
    length = float(frame.to_plane(end.lat_deg, end.lon_deg)[0])
    with Dem.open(spec.terrain) as dem:
        ground = dem.sample_frame(frame, np.array([0.0, length]), np.array([0.0, 0.0]))
        assert float(ground[1] - ground[0]) == pytest.approx(-0.002 * length, abs=0.1)  # make_dem's slope
        assert check_runway_fall(dem, frame, length, thr.elevation_m, end.elevation_m) is None
        wrong = check_runway_fall(dem, frame, length, thr.elevation_m, thr.elevation_m + 5.6, "ft")
        level = check_runway_fall(dem, frame, length, thr.elevation_m, thr.elevation_m + 0.5 * RUNWAY_FALL_TOLERANCE_M)
    assert wrong is not None and wrong.code == "runway-fall" and wrong.severity == "warning"
    assert "falls by" in wrong.message and "rises by" in wrong.message and "runway.threshold" in wrong.message
    assert "ft (" in wrong.message  # the site file's unit first, metres in brackets
    assert level is None  # a level runway in the survey: no direction to judge
