"""Names a reader understands (issue 21): every summary.json key documented, one word for the designed
path, one-word CSV columns, KML placemarks in words at their heights, infinite shares written as a word."""

from __future__ import annotations

import json
import math
import re
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest
from click.testing import CliRunner

ROOT = Path(__file__).resolve().parents[2]
KML = "{http://www.opengis.net/kml/2.2}"


def documented_keys() -> list[str]:
    """The key column of docs/summary_keys.md."""
    text = (ROOT / "docs" / "summary_keys.md").read_text(encoding="utf-8")
    return re.findall(r"^\| `([^`]+)` \| \S", text, flags=re.M)


def key_paths(value, path: str = "") -> list[str]:
    """Every key path of a JSON value; a list's items by its first one (``a[].b``)."""
    if isinstance(value, dict):
        return [p for k, v in value.items() for p in key_paths(v, f"{path}.{k}" if path else k)]
    if isinstance(value, list):
        if value and isinstance(value[0], (dict, list)):
            return key_paths(value[0], path + "[]")
        return [path + "[]"]
    return [path]


def is_documented(path: str, documented: list[str]) -> bool:
    """A path matches a documented one, ``<name>`` matching any one key; ``_ft`` keys by their ``_m`` twin."""
    twin = re.sub(r"_ft(2?)(?=$|\.|\[)", r"_m\1", path)
    for doc in documented:
        pattern = re.sub(r"<\w+>", r"[^.\\[]+", re.escape(doc).replace(r"\<", "<").replace(r"\>", ">"))
        if re.fullmatch(pattern, twin):
            return True
    return False


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    from cli.main import main

    out = tmp_path_factory.mktemp("names") / "demo"
    got = CliRunner().invoke(main, ["demo", "--out", str(out), "--no-plots", "--quiet"])
    assert got.exit_code == 0, got.output
    return out


def test_every_summary_key_of_the_demo_is_documented(demo):
    summary = json.loads((demo / "summary.json").read_text(encoding="utf-8"))
    documented = documented_keys()
    assert len(documented) > 250
    missing = [p for p in key_paths(summary) if not is_documented(p, documented)]
    assert missing == []


def test_the_key_check_can_fail():
    documented = ["a.b_m", "c.<criterion>.limit_m", "d[].e"]
    assert is_documented("a.b_ft", documented) and is_documented("c.rayleigh.limit_ft", documented)
    assert is_documented("d[].e", documented)
    assert not is_documented("a.u_from_m", documented) and not is_documented("c.rayleigh.rms_m", documented)
    assert key_paths({"a": [{"b": 1}], "c": [1, 2], "d": {"e": None}}) == ["a[].b", "c[]", "d.e"]


def test_internal_names_are_gone(demo):
    text = (demo / "summary.json").read_text(encoding="utf-8")
    for old in ('"u_from_m"', '"w_from_m"', '"plane_solve"', '"lateral_passes"', '"zone_share"', '"judged"',
                '"scope"', '"nominal_deg"', '"area"'):  # fmt: skip
        assert old not in text
    area = json.loads(text)["prediction"]["surface"]["integration_area"]
    assert area["ahead_of_mast_from_m"] < area["ahead_of_mast_to_m"] and "mast's foot" in area["frame"]


def test_path_csv_says_designed_never_nominal(demo):
    header = (demo / "path.csv").read_text(encoding="utf-8").splitlines()[0].split(",")
    assert "designed_height_m" in header and "ddm_on_designed" in header
    assert not [name for name in header if "nominal" in name]
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    assert "nominal" not in readme


def test_kml_placemarks_have_names_in_words_and_their_heights(demo):
    summary = json.loads((demo / "summary.json").read_text(encoding="utf-8"))
    root = ET.parse(demo / "site.kml").getroot()
    placemarks = root.iter(f"{KML}Placemark")
    by_name = {p.find(f"{KML}name").text: p for p in placemarks}
    assert not [n for n in by_name if "_" in n]  # no layer names like reflection_zones 1
    for antenna in summary["antennas"]:
        height = antenna["height_above_ground_m"]
        (name,) = [n for n in by_name if n.startswith(f"{antenna['role'].capitalize()} antenna, ")]
        assert f"{height:,.2f} m" in name
        point = by_name[name].find(f"{KML}Point")
        assert point.find(f"{KML}altitudeMode").text == "relativeToGround"
        altitude = float(point.find(f"{KML}coordinates").text.split(",")[2])
        assert altitude == pytest.approx(height, abs=1e-3) and altitude > 0.0
    (top,) = [p for n, p in by_name.items() if n.startswith("Top of the glide path mast")]
    top_altitude = float(top.find(f"{KML}Point/{KML}coordinates").text.split(",")[2])
    assert top_altitude >= max(a["height_above_ground_m"] for a in summary["antennas"])


def test_an_infinite_share_is_a_word_and_reads_back():
    from geo.outputs.summary import INFINITE_SHARE, share_value

    assert share_value(math.inf) == INFINITE_SHARE == "infinity"
    assert float(share_value(math.inf)) == math.inf
    assert share_value(math.nan) is None and share_value(0.25) == 0.25
    assert json.loads(json.dumps({"share": share_value(math.inf)})) == {"share": "infinity"}
