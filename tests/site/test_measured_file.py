"""The measurement file reader: TOML figures, CSV runs, and one-line errors naming the row and column."""

from __future__ import annotations

import pytest

from geo.errors import SiteFileError
from geo.site.measured_file import load_measured
from geo.units import M_PER_FT


def write(tmp_path, name, text):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def test_toml_figures_in_feet(tmp_path):
    got = load_measured(write(tmp_path, "m.toml", 'units = "ft"\n[measured]\npath_angle_deg = 3.05\nrdh = 50\n'
                              '[conditions]\nsnow_depth = 1\nsnow = "wet"\n'))  # fmt: skip
    assert got.figures == {"path_angle_deg": 3.05, "rdh_m": pytest.approx(50 * M_PER_FT)}  # 1 ft = 0.3048 m exactly
    assert got.conditions[0].snow_depth_m == pytest.approx(M_PER_FT) and got.conditions[0].snow == "wet"


def test_csv_runs_with_units_in_the_header(tmp_path):
    text = "# a comment\nrun,distance_nm,height_ft,ddm\nA,1.0,500,0.01\nA,2.0,500,0.02\nB,1.5,,0.0\nB,2.5,,-0.01\n"
    got = load_measured(write(tmp_path, "m.csv", text))
    a, b = got.runs
    assert a.name == "A" and a.distance_m.tolist() == [1852.0, 3704.0]  # 1 NM = 1,852 m exactly
    assert a.height_m.tolist() == pytest.approx([500 * M_PER_FT] * 2) and b.height_m is None
    assert a.rows == (3, 4) and b.rows == (5, 6)  # rows counted as in the file, the header row 2 here


@pytest.mark.parametrize(
    ("text", "where"),
    [
        ("distance_m,ddm\n100,0.01\n200,x\n", "row 3, column ddm"),
        ("distance_m,ddm\n100,0.01\n-5,0.0\n", "row 3, column distance_m"),
        ("distance_m,angle_deg\n100,3\n200,25\n", "row 3, column angle_deg"),
        ("distance_m,ddm,speed\n100,0.01,3\n", "row 1, column 3 ('speed')"),
        ("ddm\n0.01\n0.02\n", "row 1"),
        ("distance_m,ddm\n100,0.01\n200\n", "row 3"),
        ("run,distance_m,height_m,ddm\nA,100,50,0.01\nA,200,,0.02\n", "row 3, column height_m"),
    ],
)
def test_bad_csv_names_the_row_and_column(tmp_path, text, where):
    path = write(tmp_path, "bad.csv", text)
    with pytest.raises(SiteFileError) as err:
        load_measured(path)
    assert err.value.field == where
    assert str(err.value).startswith(f"{path}: {where}: ") and "\n" not in str(err.value)


@pytest.mark.parametrize(
    ("text", "field"),
    [
        ('units = "yd"\n[measured]\nrdh = 15\n', "units"),
        ('units = "m"\n[measured]\nangle = 3\n', "measured.angle"),
        ('units = "m"\n[measured]\npath_angle_deg = "3"\n', "measured.path_angle_deg"),
        ('units = "m"\n', "measured"),
        ('units = "m"\n[measured]\nrdh = 15\n[conditions]\nsnow_depth = [0.1, 0.2]\nsnow = "dry"\n', "conditions"),
    ],
)
def test_bad_toml_names_the_field(tmp_path, text, field):
    with pytest.raises(SiteFileError) as err:
        load_measured(write(tmp_path, "bad.toml", text))
    assert err.value.field == field


def test_other_endings_are_refused(tmp_path):
    with pytest.raises(SiteFileError, match=r"\.toml \(figures\) or \.csv"):
        load_measured(write(tmp_path, "m.txt", "x"))
