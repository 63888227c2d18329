"""Vertical datums: DEM heights converted into the survey's datum, or refused; the DEM checked at the threshold.

Check values: geoid undulations computed independently with pyproj from PROJ's EGM96 grid
(Debian's proj-data, ``egm96_15.gtx``), and the two values seen in ../shared/REFERENCE.md
(an ellipsoidal height of 0 at lon -101.2, lat 46.35 is an EGM96 height of +20.51 m; at lon 144.0,
lat -37.0, -5.49 m). Relation h = H + N (Hofmann-Wellenhof and Moritz, Physical Geodesy, sec. 2.7).
"""

from __future__ import annotations

import os
import re
import shutil
import subprocess
import warnings
from pathlib import Path

import numpy as np
import pytest
import rasterio
from tests_support import DEMO_SITE, NO_SURFACE, without_surface

from geo.errors import SiteFileError, TerrainError
from geo.ground.vertical_datum import datum_conversion
from geo.outputs.summary import summary_dict
from geo.site.site_file import load_site
from geo.study.site_study import run_study
from geo.units import M_PER_FT

DEMO_DEM = DEMO_SITE.parent / "dem.tif"


def _egm96_folder() -> str | None:
    """The folder of Debian's EGM96 grid, found independently of the library (dpkg, then the usual place)."""
    if shutil.which("dpkg"):
        out = subprocess.run(["dpkg", "-L", "proj-data"], capture_output=True, text=True, check=False).stdout
        for line in out.splitlines():
            if line.endswith("egm96_15.gtx"):
                return str(Path(line).parent)
    return "/usr/share/proj" if Path("/usr/share/proj/egm96_15.gtx").is_file() else None


@pytest.fixture(scope="module")
def egm96():
    """Independent pyproj transformer: WGS 84 ellipsoidal height -> EGM96 height; skip locally without the grid."""
    folder = _egm96_folder()
    if folder is None:
        if os.environ.get("CI"):
            pytest.fail("CI must run the geoid tests: .ci/run installs Debian's proj-data (egm96_15.gtx)")
        pytest.skip("PROJ's EGM96 grid is not installed (apt-get install proj-data); CI installs it")
    import pyproj.datadir
    from pyproj.transformer import TransformerGroup

    pyproj.datadir.append_data_dir(folder)
    group = TransformerGroup("EPSG:4979", "EPSG:4326+5773", always_xy=True)
    assert group.best_available
    return group.transformers[0]


PLACES = [(-101.2, 46.35), (144.0, -37.0), (0.0, 0.0), (77.5, 12.9), (-70.7, -33.4), (10.0, 60.0), (-150.0, 61.2)]


@pytest.mark.parametrize("lon, lat", PLACES)
def test_egm96_undulations_agree_with_pyproj(egm96, lon, lat):
    # Independent value: pyproj turns an ellipsoidal height of 0 into the EGM96 height -N.
    _, _, egm96_height = egm96.transform(lon, lat, 0.0)
    n = -egm96_height
    to_wgs84 = datum_conversion("EGM96", "WGS84")
    to_egm96 = datum_conversion("WGS84", "EGM96")
    assert to_wgs84.method == "geoid grid" and "egm96_15" in to_wgs84.grids[0]
    assert to_wgs84.shift_m([lon], [lat])[0] == pytest.approx(n, abs=1e-6)  # h = H + N
    assert to_egm96.shift_m([lon], [lat])[0] == pytest.approx(-n, abs=1e-6)  # H = h - N


@pytest.mark.parametrize("lon, lat, egm96_height_m", [(-101.2, 46.35, 20.51), (144.0, -37.0, -5.49)])
def test_egm96_undulations_match_the_values_seen(egm96, lon, lat, egm96_height_m):
    # ../shared/REFERENCE.md "Real ground" (seen): h = 0 -> H = +20.51 m and -5.49 m, so N = -H.
    shift = datum_conversion("EGM96", "WGS84").shift_m([lon], [lat])[0]
    assert shift == pytest.approx(-egm96_height_m, abs=0.005)


def test_published_undulation_needs_no_grid_and_is_exact():
    # h = H + N with the published N: a DEM in EGM96 for a survey in WGS 84 gains N exactly, the reverse loses it.
    up = datum_conversion("EGM96", "WGS84", geoid_undulation_m=-20.37)
    down = datum_conversion("WGS84", "EGM2008", geoid_undulation_m=-20.37)
    assert up.method == down.method == "published undulation" and up.grids == ()
    lon, lat = np.array([-101.2, 144.0, 0.0]), np.array([46.35, -37.0, 0.0])
    assert (up.shift_m(lon, lat) == -20.37).all()
    assert (down.shift_m(lon, lat) == 20.37).all()


def test_same_or_unstated_datums_convert_nothing():
    for a, b in [("EGM96", "EGM96"), (None, "WGS84"), ("EGM2008", None), (None, None)]:
        c = datum_conversion(a, b)
        assert not c.applied and (c.shift_m([10.0], [50.0]) == 0.0).all()


def _egm2008_available() -> bool:
    from pyproj.transformer import TransformerGroup

    from geo.ground.vertical_datum import add_system_proj_data

    add_system_proj_data()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return TransformerGroup("EPSG:4326+3855", "EPSG:4979", always_xy=True).best_available


def test_a_missing_grid_is_an_error_that_names_it():
    if _egm2008_available():
        pytest.skip("an EGM2008 grid is installed here; the error needs a missing grid")
    # PROJ's grid name for EGM2008 (PROJ-data, cdn.proj.org): us_nga_egm08_25.tif.
    with pytest.raises(TerrainError, match=r"us_nga_egm08_25\.tif.*runway\.geoid_undulation"):
        datum_conversion("EGM2008", "WGS84")
    # With the published undulation the same conversion needs no grid.
    assert datum_conversion("EGM2008", "WGS84", -20.0).applied


# ---- Studies with datums -------------------------------------------------------------------------


def _site(folder: Path, replacements=(), runway_extra: str = "", terrain_extra: str = "", dem: str | None = None):
    """The demo site in ``folder`` (its DEM copied beside it unless ``dem`` names another), edited.

    The surface prediction is off: the studies here are compared by their heights, RDH, slopes and findings
    on the DEM's datum, which do not depend on it.
    """
    text = DEMO_SITE.read_text(encoding="utf-8")
    for old, new in replacements:
        assert old in text
        text = text.replace(old, new)
    text = text.replace("width = 45\n", "width = 45\n" + runway_extra, 1)
    text = text.replace("[terrain]\n", "[terrain]\n" + terrain_extra)
    if dem is None:
        shutil.copy(DEMO_DEM, folder / "dem.tif")
    else:
        text = re.sub(r'^dem = "dem.tif".*$', f'dem = "{dem}"', text, flags=re.M)
    path = folder / "site.toml"
    path.write_text(text + NO_SURFACE, encoding="utf-8")
    return path


def _survey_in_wgs84(n_m: float):
    """The demo's elevations moved from the DEM's (orthometric) datum to ellipsoidal: h = H + N."""
    return [
        ("elevation = 612.0", f"elevation = {612.0 + n_m!r}"),
        ("elevation = 606.4", f"elevation = {606.4 + n_m!r}"),
        ("base_elevation = 611.4", f"base_elevation = {611.4 + n_m!r}"),
    ]


@pytest.fixture(scope="module")
def plain():
    return run_study(without_surface(load_site(DEMO_SITE)))


def test_study_with_the_published_undulation_equals_the_plain_study_shifted(tmp_path, plain):
    n = -20.5  # invented published undulation (near the EGM96 value there, REFERENCE.md)
    path = _site(
        tmp_path,
        _survey_in_wgs84(n),
        runway_extra=f'vertical_datum = "WGS84"\ngeoid_undulation = {n!r}\n',
        terrain_extra='vertical_datum = "EGM96"\n',
    )
    shifted = run_study(load_site(path))
    # Every height moves by N; every height difference (RDH, antenna heights, slopes) stays.
    assert shifted.rdh_m == pytest.approx(plain.rdh_m, abs=1e-6)
    assert shifted.terrain.forward_slope_deg == pytest.approx(plain.terrain.forward_slope_deg, abs=1e-9)
    assert shifted.terrain.ground_at_mast_m - plain.terrain.ground_at_mast_m == pytest.approx(n, abs=1e-6)
    for a, b in zip(shifted.antennas, plain.antennas):
        assert a.height_m == pytest.approx(b.height_m, abs=1e-9)
    conv = summary_dict(shifted)["terrain"]["vertical_datum_conversion"]
    assert conv["method"] == "published undulation" and conv["applied"]
    assert conv["shift_at_mast_m"] == n and conv["shift_at_mast_ft"] == pytest.approx(n / M_PER_FT, abs=1e-4)


def test_study_with_the_egm96_grid_shifts_by_the_undulation_at_the_mast(tmp_path, plain, egm96):
    _, _, h_at_threshold = egm96.transform(-101.2, 46.35, 0.0)
    n_thr = -h_at_threshold
    path = _site(
        tmp_path,
        _survey_in_wgs84(n_thr),
        runway_extra='vertical_datum = "WGS84"\n',
        terrain_extra='vertical_datum = "EGM96"\n',
    )
    result = run_study(load_site(path))
    _, _, h_at_mast = egm96.transform(result.mast.lon_deg, result.mast.lat_deg, 0.0)
    summary = summary_dict(result)["terrain"]
    conv = summary["vertical_datum_conversion"]
    print(f"EGM96 -> WGS84 at the demo mast: {conv['shift_at_mast_m']} m ({conv['shift_at_mast_ft']} ft)")
    assert conv["method"] == "geoid grid" and conv["shift_at_mast_m"] == pytest.approx(-h_at_mast, abs=1e-4)
    # The geoid changes by centimetres over the site, so the RDH stays within a few centimetres of the plain one.
    assert result.rdh_m == pytest.approx(plain.rdh_m, abs=0.05)
    assert "dem-threshold" not in {f.code for f in result.findings}


def test_site_file_datum_keys_are_checked(tmp_path):
    with pytest.raises(SiteFileError, match=r'runway\.vertical_datum: must be "EGM96", "EGM2008" or "WGS84"'):
        load_site(_site(tmp_path, runway_extra='vertical_datum = "NAVD88"\n'))
    with pytest.raises(SiteFileError, match=r"runway\.geoid_undulation: needs runway\.vertical_datum"):
        load_site(_site(tmp_path, runway_extra="geoid_undulation = -20.5\n"))
    with pytest.raises(SiteFileError, match=r"terrain\.vertical_datum"):
        load_site(_site(tmp_path, terrain_extra='vertical_datum = "egm96"\n'))
    feet = _site(
        tmp_path,
        [('units = "m"', 'units = "ft"')],
        runway_extra='vertical_datum = "WGS84"\ngeoid_undulation = -100\n',
    )
    spec = load_site(feet)
    assert spec.geoid_undulation_m == pytest.approx(-30.48, abs=1e-12)  # 100 ft, NIST HB 44 App. C
    assert spec.terrain.survey_vertical_datum == "WGS84" and spec.terrain.geoid_undulation_m == spec.geoid_undulation_m


# ---- The DEM at the threshold against the survey -------------------------------------------------


def _feet_dem(folder: Path) -> str:
    """The demo DEM with its heights in feet and no unit in its metadata."""
    with rasterio.open(DEMO_DEM) as src:
        z = src.read(1)
        profile = src.profile
    z = np.where(z == src.nodata, z, z / M_PER_FT).astype(z.dtype)
    with rasterio.open(folder / "feet.tif", "w", **profile) as dst:
        dst.write(z, 1)
    return "feet.tif"


def test_a_dem_in_feet_read_as_metres_stops_with_the_cause(tmp_path, plain):
    dem = _feet_dem(tmp_path)
    with pytest.raises(TerrainError) as info:
        run_study(load_site(_site(tmp_path, dem=dem)))
    text = str(info.value)
    # The site file's name first, the ratio and the key that fixes it.
    assert text.startswith(str(tmp_path / "site.toml") + ": ")
    assert 'terrain.vertical_unit = "ft"' in text and "feet read as metres" in text
    fixed = run_study(load_site(_site(tmp_path, dem=dem, terrain_extra='vertical_unit = "ft"\n')))
    assert fixed.rdh_m == pytest.approx(plain.rdh_m, abs=1e-3)


#: A setback given, so that a DEM far from the survey still places the mast (the target RDH could not be met).
_FIXED_SETBACK = ("offset = 120\n", "offset = 120\nsetback = 300\n")
_NO_OFFSET = ("vertical_offset = 0.0\n", "")


def test_a_geoid_against_the_ellipsoid_is_the_first_finding(tmp_path):
    # Survey ellipsoidal (N = -20.5 m, invented near the EGM96 value there), no datum stated: 20.5 m apart.
    result = run_study(load_site(_site(tmp_path, [*_survey_in_wgs84(-20.5), _FIXED_SETBACK])))
    first = result.findings[0]
    assert first.code == "dem-threshold" and first.severity == "warning"
    assert "runway.vertical_datum" in first.message and "terrain.vertical_datum" in first.message


def test_another_offset_names_the_offset_and_a_gross_one_stops(tmp_path):
    result = run_study(load_site(_site(tmp_path, [_NO_OFFSET, _FIXED_SETBACK], terrain_extra="vertical_offset = 60\n")))
    assert result.findings[0].code == "dem-threshold" and "terrain.vertical_offset" in result.findings[0].message
    with pytest.raises(TerrainError, match="exceeds 100 m"):
        run_study(load_site(_site(tmp_path, [_NO_OFFSET, _FIXED_SETBACK], terrain_extra="vertical_offset = 150\n")))


def test_agreeing_dem_adds_no_threshold_finding(plain):
    assert "dem-threshold" not in {f.code for f in plain.findings}


def test_the_sweep_applies_the_datum_conversion_too(tmp_path):
    from geo.study.sweep import SweepOptions, run_sweep

    n = -20.5  # invented published undulation
    options = SweepOptions((250.0, 310.0), (100.0, 150.0), sides=("right",))
    plain = run_sweep(load_site(DEMO_SITE), options)
    path = _site(
        tmp_path,
        _survey_in_wgs84(n),
        runway_extra=f'vertical_datum = "WGS84"\ngeoid_undulation = {n!r}\n',
        terrain_extra='vertical_datum = "EGM96"\n',
    )
    shifted = run_sweep(load_site(path), options)
    np.testing.assert_allclose(shifted.columns["rdh_m"], plain.columns["rdh_m"], atol=1e-6)
    ground = [k for k in ("ground_at_mast_m", "plane_elevation_at_mast_m", "rpi_elevation_m") if k in plain.columns]
    assert ground, "the sweep reports the ground at each mast"
    for k in ground:
        np.testing.assert_allclose(shifted.columns[k] - plain.columns[k], n, atol=1e-6)


def test_the_command_line_stops_on_a_gross_mismatch_with_exit_2_and_writes_nothing(tmp_path):
    from click.testing import CliRunner

    from cli.main import main

    dem = _feet_dem(tmp_path)
    site = _site(tmp_path, dem=dem)
    out = tmp_path / "out"
    run = CliRunner().invoke(main, ["run", str(site), "--out", str(out)])
    assert run.exit_code == 2
    assert "Traceback" not in run.output and 'terrain.vertical_unit = "ft"' in run.output
    assert str(site) in run.output and not out.exists()


@pytest.mark.parametrize(
    "dem_m, words",
    [
        (612.0 / M_PER_FT, 'terrain.vertical_unit = "ft"'),  # 1 ft = 0.3048 m exactly (NIST HB 44 App. C)
        (612.0 * M_PER_FT, 'terrain.vertical_unit = "m"'),
        (612.0 - 20.5, "runway.vertical_datum"),  # 15-40 m: a geoid against the ellipsoid (issue 10 band)
        (612.0 + 33.0, "runway.vertical_datum"),
        (612.0 - 8.0, "terrain.vertical_offset"),
        (612.0 + 60.0, "terrain.vertical_offset"),
    ],
)
def test_the_likely_cause_follows_from_the_size_of_the_difference(dem_m, words):
    from geo.study.findings import check_dem_threshold

    finding = check_dem_threshold(dem_m, 612.0)
    assert finding.code == "dem-threshold" and finding.severity == "warning" and words in finding.message


def test_a_few_metres_are_no_finding():
    from geo.study.findings import check_dem_threshold

    assert check_dem_threshold(612.0 + 4.9, 612.0) is None and check_dem_threshold(612.0 - 4.9, 612.0) is None
