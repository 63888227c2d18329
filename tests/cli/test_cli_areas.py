"""``mastplan areas`` and its site-file keys: outputs, one-line errors, exit codes."""

import csv
import json

import pytest
from click.testing import CliRunner

from cli.main import main
from geo.errors import SiteFileError
from geo.site.site_file import load_site
from geo.units import M_PER_FT

#: A coarse grid and one small object keep the command quick (invented test values).
AREAS = """
[[object]]
name = "tug"
height = 3.0
length = 6.0
width = 2.5
headings = ["along"]

[areas]
critical_share = 0.5
sensitive_share = 0.2
grid = 40
ahead = 240
behind = 40
away = 40
beyond = 40
"""


def _run(*args):
    return CliRunner().invoke(main, list(args))


def test_site_keys_are_read_in_the_files_units(write_site, site_text):
    # 1 ft = 0.3048 m exactly (International Yard and Pound Agreement, 1959).
    text = site_text + AREAS.replace("grid = 40", "grid = 100")
    spec = load_site(write_site(text.replace('units = "m"', 'units = "ft"').replace("offset = 130", "offset = 400")
                                .replace("setback = 290", "setback = 1000").replace("width = 45", "width = 150")
                                .replace("base_elevation = 511.2", "base_elevation = 1677")
                                .replace("elevation = 512.0", "elevation = 1680")
                                .replace("elevation = 515.0", "elevation = 1690")))  # fmt: skip
    (obj,) = spec.objects
    assert obj.height_m == pytest.approx(3.0 * M_PER_FT) and obj.width_m == pytest.approx(2.5 * M_PER_FT)
    assert obj.headings == ("along",) and obj.base_m == 0.0
    assert spec.areas.grid_m == pytest.approx(100 * M_PER_FT)
    assert spec.areas.critical_share == 0.5 and spec.areas.shares_source == "site file [areas]"


def test_defaults_without_the_tables(write_site, site_text):
    spec = load_site(write_site(site_text))
    assert spec.objects == ()
    assert spec.areas.shares_source == "common practice, no source"
    assert spec.areas.sensitive_share < spec.areas.critical_share


@pytest.mark.parametrize(
    "old, new, field",
    [
        ("height = 3.0", "height = -3", "object 1.height"),
        ('headings = ["along"]', 'headings = ["sideways"]', "object 1.headings"),
        ('name = "tug"', 'name = "tug"\ncolour = "red"', "object 1.colour"),
        ("critical_share = 0.5", "critical_share = 0.1", "areas.sensitive_share"),
        ("grid = 40", "grid = 0.1", "areas.grid"),
        ("beyond = 40", "beyond = 40\nrings = 3", "areas.rings"),
        ("height = 3.0", "height = 3.0\nbase = 4.0", "object 1.base"),
        ("grid = 40", "grid = 40\nfront_to_back_db = -3", "areas.front_to_back_db"),
    ],
)
def test_bad_keys_give_one_line_naming_the_field(tmp_path, write_site, site_text, old, new, field):
    site = write_site(site_text + AREAS.replace(old, new, 1))
    with pytest.raises(SiteFileError, match=field.replace("[", r"\[").replace("]", r"\]")):
        load_site(site)
    res = _run("areas", str(site), "--out", str(tmp_path / "a"))
    assert res.exit_code == 2
    lines = res.output.strip().splitlines()
    assert len(lines) == 1 and field in lines[0] and "Traceback" not in res.output
    assert not (tmp_path / "a").exists()


@pytest.fixture(scope="module")
def written(tmp_path_factory):
    from tests_support import BASE_SITE

    folder = tmp_path_factory.mktemp("areas")
    site = folder / "site.toml"
    site.write_text(BASE_SITE + AREAS + "[[protected_area]]\nname = 'p'\nkind = 'critical'\nahead = 200\n"
                    "toward_runway = 60\n", encoding="utf-8")  # fmt: skip
    res = _run("areas", str(site), "--out", str(folder / "out"))
    return site, folder / "out", res


def test_command_writes_every_output(written):
    site, out, res = written
    assert res.exit_code == 0, res.output
    assert "planning aid" in res.output and "tug, critical" in res.output
    names = {p.name for p in out.iterdir()}
    assert {"summary.json", "areas.csv", "areas.gpkg", "areas.kml", "map.html", "layers"} <= names
    assert any(n.startswith("disturbance_1_tug") and n.endswith(".png") for n in names)
    layer = json.loads((out / "layers" / "derived_areas.geojson").read_text())
    kinds = {f["properties"]["kind"] for f in layer["features"]}
    assert kinds <= {"critical", "sensitive"} and "sensitive" in kinds
    props = layer["features"][0]["properties"]
    for key in ("object", "area_m2", "area_ft2", "reach_ahead_m", "reach_ahead_ft", "reach_toward_runway_ft"):
        assert key in props
    # 1 m2 = 1 / 0.3048^2 ft2 (International Yard and Pound Agreement, 1959).
    assert props["area_ft2"] == pytest.approx(props["area_m2"] / M_PER_FT**2, rel=1e-6)


def test_table_and_summary_agree(written):
    _, out, _ = written
    rows = list(csv.DictReader((out / "areas.csv").open(encoding="utf-8")))
    summary = json.loads((out / "summary.json").read_text())
    # The grid grew from -40..240 m ahead and -40..160 m across (whole 40 m steps) until the areas
    # closed: one row per position of the final rectangle (counted from its sides) and heading.
    extent = summary["derived_areas"][0]["grid_extent"]
    along = (extent["ahead_m"] + extent["behind_m"]) / 40 + 1
    across = (extent["toward_runway_m"] + extent["away_m"]) / 40 + 1
    assert extent["ahead_m"] >= 240 and extent["behind_m"] >= 40 and extent["toward_runway_m"] >= 160
    assert len(rows) == along * across
    assert not summary["warnings"] or all("open" not in w for w in summary["warnings"])
    for entry in summary["derived_areas"]:
        assert not entry["critical"]["reaches_grid_edge"] and not entry["sensitive"]["reaches_grid_edge"]
    bends = {"bend_95_ddm_coverage_limit_to_a", "bend_95_ddm_a_to_b", "bend_95_ddm_b_to_c"}
    assert bends | {"share_of_limit", "ahead_ft"} <= set(rows[0])
    assert not [name for name in rows[0] if " " in name]  # every column name is one word (issue 21)
    (entry,) = summary["derived_areas"]
    shares = [float(r["share_of_limit"]) for r in rows if r["share_of_limit"] not in ("", "infinity")]
    assert entry["largest_share_of_limit"] == pytest.approx(max(shares), rel=1e-3)
    assert summary["settings"]["shares_source"] == "site file [areas]"
    assert any("planning aid" in c for c in summary["cautions"])
    page = (out / "map.html").read_text(encoding="utf-8")
    assert "Derived critical area: tug" in page and "Protected areas" in page and "zone" in page
    # One layer per object and kind, each in the legend (geo.outputs.webmap.legend_items' rows).
    assert page.count("Derived sensitive area: tug") >= 2 and page.count("Derived critical area: all objects") >= 2


def test_no_plots_and_overwrite(written, tmp_path):
    site, out, _ = written
    res = _run("areas", str(site), "--out", str(out))
    assert res.exit_code == 2 and "--overwrite" in res.output
    res = _run("areas", str(site), "--out", str(tmp_path / "b"), "--no-plots", "-q")
    assert res.exit_code == 0 and res.output == ""
    assert not list((tmp_path / "b").glob("*.png"))
    # Reproducible outputs (DEVELOPERS.md): the same site gives the same bytes.
    for name in ("summary.json", "areas.csv", "layers/derived_areas.geojson", "map.html", "areas.kml"):
        assert (tmp_path / "b" / name).read_bytes() == (out / name).read_bytes(), name


def test_a_feet_site_shows_feet_first_on_screen_and_in_the_tables(tmp_path):
    # The site file says its unit once (units = "ft"): every length shown goes through
    # geo.units.format_length with it first, and the tables put each _ft twin before its _m.
    from tests_support import FEET_SITE

    tables = AREAS.replace("grid = 40", "grid = 130").replace("ahead = 240", "ahead = 780")
    tables = tables.replace("sensitive_share = 0.2", "sensitive_share = 0.45")  # a smaller grid to close
    for key in ("behind", "away", "beyond"):
        tables = tables.replace(f"{key} = 40", f"{key} = 130")
    site = tmp_path / "site.toml"
    site.write_text(FEET_SITE + tables, encoding="utf-8")
    res = _run("areas", str(site), "--out", str(tmp_path / "out"), "--no-plots")
    assert res.exit_code == 0, res.output
    line = next(x for x in res.output.splitlines() if x.startswith("tug, critical"))
    assert " ft2 (" in line and " ft (" in line and " m (" not in line.split(";")[1].split("(")[0]
    for name in ("areas.csv", "outlines.csv"):
        header = (tmp_path / "out" / name).read_text(encoding="utf-8").splitlines()[0].split(",")
        for k, column in enumerate(header):
            if column.endswith("_m") and column[:-2] + "_ft" in header:
                assert header.index(column[:-2] + "_ft") == k - 1, (name, column)
