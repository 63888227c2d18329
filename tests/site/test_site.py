"""The site file loader: units, and one clear error per kind of bad input."""

import pytest

from geo.errors import SiteFileError
from geo.site.site_file import load_site
from geo.units import M_PER_FT


def test_valid_file_in_metres(write_site, site_text):
    spec = load_site(write_site(site_text))
    assert spec.width_m == 45.0 and spec.mast.offset_m == 130.0
    assert spec.threshold.elevation_m == 512.0
    assert len(spec.sha256) == 64


def test_feet_are_converted_once_and_exactly(write_site, site_text):
    # 1 ft = 0.3048 m exactly (International Yard and Pound Agreement, 1959).
    text = (
        site_text.replace('units = "m"', 'units = "ft"')
        .replace("width = 45", "width = 150")
        .replace("offset = 130", "offset = 400")
        .replace("setback = 290", "setback = 1000")
        .replace("base_elevation = 511.2", "base_elevation = 1677")
        .replace("elevation = 512.0", "elevation = 1680")
        .replace("elevation = 515.0", "elevation = 1690")
    )
    spec = load_site(write_site(text))
    assert spec.width_m == pytest.approx(150 * M_PER_FT)
    assert spec.mast.offset_m == pytest.approx(400 * M_PER_FT)
    assert spec.mast.setback_m == pytest.approx(1000 * M_PER_FT)
    assert spec.threshold.elevation_m == pytest.approx(1680 * M_PER_FT)
    assert spec.angle_deg == 3.0  # angles are not lengths


BAD = [
    # (replace this, with that, field in the message, words of the fix)
    ('units = "m"', 'units = "yards"', "units", '"m" or "ft"'),
    ('units = "m"', "", "units", "missing"),
    ("width = 45", "width = -3", "runway.width", "at least 10"),
    # Annex 14 Vol I 3.1.10 (from memory): no runway is narrower than 18 m; 10 m is the floor read.
    ("width = 45", "width = 4e-226", "runway.width", "at least 10"),
    ("width = 45", 'width = "wide"', "runway.width", "must be a number"),
    ("width = 45", "width = nan", "runway.width", "finite"),
    ("width = 45", "width = inf", "runway.width", "finite"),
    ("width = 45", "width = true", "runway.width", "must be a number"),
    ("lat = -35.41,", "lat = 95,", "runway.threshold.lat", "at most 90"),
    ("lat = -35.42, lon = 148.95", "lat = -35.41, lon = 148.92", "runway.end", "same point"),
    ("localizer_mhz = 109.30", "localizer_mhz = 109.30\nfrequency_mhz = 332.0", "glide_path", "exactly one"),
    ("localizer_mhz = 109.30", "", "glide_path", "exactly one"),
    ("localizer_mhz = 109.30", "localizer_mhz = 109.40", "glide_path.localizer_mhz", "40 paired"),
    ("localizer_mhz = 109.30", "frequency_mhz = 340.0", "glide_path.frequency_mhz", "at most 335.4"),
    ("offset = 130", "offset = -130", "mast.offset", "greater than 0"),
    ("offset = 130", "offset = 20", "mast.offset", "on the runway"),
    ('array = "null-reference"', 'array = "log-periodic"', "glide_path.array", "use one of"),
    ("angle_deg = 3.0", "angle_deg = 7.5", "glide_path.angle_deg", "at most 6"),
    ('side = "right"', 'side = "port"', "mast.side", '"left" or "right"'),
    ("setback = 290", "setback = 290\ncolour = 1", "mast.colour", "unknown key"),
    ("[mast]", "[mast]\nposition = { lat = -35.41, lon = 148.93 }", "mast.position", "not both"),
    ("setback = 290", "", "mast.setback", "target_rdh"),
    ("[site]", "[sight]", "sight", "unknown key"),
    ('name = "Test strip"', "name = 12", "site.name", "text in quotes"),
    ("width = 45", "width = 45\ncode = 5", "runway.code", "1, 2, 3 or 4"),
    ("width = 45", "[runway.extra]", "runway.extra", "unknown key"),
]


@pytest.mark.parametrize("old, new, field, words", BAD)
def test_bad_input_names_the_field_and_the_fix(write_site, site_text, old, new, field, words):
    assert old in site_text
    path = write_site(site_text.replace(old, new, 1))
    with pytest.raises(SiteFileError) as info:
        load_site(path)
    message = str(info.value)
    assert info.value.field == field
    assert words in message
    assert "\n" not in message and message.startswith(str(path))


@pytest.mark.parametrize("value", ["-10", "-0.5"])
def test_a_negative_terrain_clearance_is_refused(write_site, site_text, value):
    # A path below the terrain is never acceptable: the smallest clearance is 0.
    from tests_support import DEMO_SITE

    dem = (DEMO_SITE.parent / "dem.tif").as_posix()
    path = write_site(site_text + f'[terrain]\ndem = "{dem}"\nmin_clearance = {value}\n')
    with pytest.raises(SiteFileError) as info:
        load_site(path)
    assert info.value.field == "terrain.min_clearance" and "at least 0" in str(info.value)
    assert load_site(write_site(site_text + f'[terrain]\ndem = "{dem}"\nmin_clearance = 0\n')).terrain


def test_broken_toml_and_missing_file(write_site, tmp_path):
    with pytest.raises(SiteFileError, match="not valid TOML"):
        load_site(write_site("units = \n"))
    with pytest.raises(SiteFileError, match="cannot read"):
        load_site(tmp_path / "nope.toml")
    bad = tmp_path / "latin1.toml"
    bad.write_bytes('units = "m"\n[site]\nname = "Aérodrome"\n'.encode("latin-1"))
    with pytest.raises(SiteFileError, match="UTF-8"):
        load_site(bad)


@pytest.mark.parametrize(
    "block, field, words",
    [
        (
            "[[protected_area]]\nname = 'a'\nkind = 'forbidden'\nahead = 1\ntoward_runway = 1\n",
            "protected_area 1.kind",
            '"critical" or "sensitive"',
        ),
        (
            "[[protected_area]]\nname = 'a'\nkind = 'critical'\ntoward_runway = 1\n",
            "protected_area 1.ahead",
            "missing",
        ),
        (
            "[[protected_area]]\nname = 'a'\nkind = 'critical'\noutline = [[0, 0], [1, 1]]\n",
            "protected_area 1.outline",
            "at least 3",
        ),
        (
            "[[protected_area]]\nname = 'a'\nkind = 'critical'\noutline = [[0, 0], [1, 1], [1, 'x']]\n",
            "protected_area 1.outline",
            "pairs",
        ),
        (
            "[[protected_area]]\nname = 'a'\nkind = 'critical'\nahead = 5\ntoward_runway = 1\noutline = [[0, 0]]\n",
            "protected_area 1.outline",
            "either",
        ),
        ("protected_area = 3\n", "protected_area", "array of tables"),
    ],
)
def test_protected_area_errors(write_site, site_text, block, field, words):
    text = (
        site_text.replace('units = "m"', 'units = "m"\n' + block)
        if block.startswith("protected_area =")
        else site_text + "\n" + block
    )
    with pytest.raises(SiteFileError) as info:
        load_site(write_site(text))
    assert info.value.field == field and words in str(info.value)


def test_report_table_is_optional_and_read_as_given(write_site, site_text):
    spec = load_site(write_site(site_text))
    assert (spec.report.prepared_by, spec.report.date, spec.report.page) == ("", "", "A4")
    text = (
        site_text
        + "\n[report]\n"
        + 'prepared_by = "P"\nchecked_by = "C"\nrevision = "2"\ndate = "2025-05-12"\npage = "Letter"\n'
    )
    rep = load_site(write_site(text)).report
    assert (rep.prepared_by, rep.checked_by, rep.revision, rep.date, rep.page) == (
        "P",
        "C",
        "2",
        "2025-05-12",
        "Letter",
    )


@pytest.mark.parametrize(
    "line, field",
    [
        ("prepared_by = 3", "report.prepared_by"),
        ("checked_by = true", "report.checked_by"),
        ("revision = 2", "report.revision"),
        ("date = 2025-05-12", "report.date"),  # a TOML date, not a text: the date is the file's words
        ('page = "A3"', "report.page"),
        ('page = "a4"', "report.page"),
        ('signed = "x"', "report.signed"),
        ('revision = """B\nC"""', "report.revision"),
    ],
)
def test_bad_report_fields_are_one_line_errors(write_site, site_text, line, field):
    with pytest.raises(SiteFileError) as err:
        load_site(write_site(site_text + "\n[report]\n" + line + "\n"))
    message = str(err.value)
    assert field in message and "\n" not in message


@pytest.mark.parametrize(
    "line, words",
    [
        ('designator = "37"', "two digits 01 to 36"),
        ('designator = "9"', "two digits 01 to 36"),
        ('designator = "00"', "two digits 01 to 36"),
        ('designator = "27X"', "then optionally L, C or R"),
        ('designator = "27l"', "then optionally L, C or R"),
        ("designator = 27", "in quotes"),
        ("magnetic_date = 2031-01-01", "outside the World Magnetic Models"),
        ("magnetic_date = 2009-12-31", "outside the World Magnetic Models"),
        ('magnetic_date = "2024/05/01"', "YYYY-MM-DD"),
        ('magnetic_date = "2024-02-30"', "YYYY-MM-DD"),
        ("magnetic_date = 2024-05-01T10:00:00", "without a time"),
        ("magnetic_date = 2024", "YYYY-MM-DD"),
    ],
)
def test_bad_designator_or_magnetic_date_is_one_clear_error(write_site, site_text, line, words):
    text = site_text.replace("width = 45", f"width = 45\n{line}", 1)
    field = line.split(" =")[0]
    with pytest.raises(SiteFileError) as info:
        load_site(write_site(text))
    assert info.value.field == f"runway.{field}" and words in str(info.value)
    assert "\n" not in str(info.value)


def test_designator_and_magnetic_date_are_read(write_site, site_text):
    import datetime

    text = site_text.replace("width = 45", 'width = 45\ndesignator = "09L"\nmagnetic_date = "2024-05-01"', 1)
    spec = load_site(write_site(text))
    assert spec.designator == "09L" and spec.magnetic_date == datetime.date(2024, 5, 1)
    assert load_site(write_site(site_text)).designator is None
