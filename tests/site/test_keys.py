"""The reference of the site file (docs/site-file.md) names every key the parser accepts, and no other.

The keys the parser accepts are found from the parser itself, not from the list it uses: an unknown
key planted in each table is refused with a message that lists the table's allowed keys.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from geo.errors import SiteFileError
from geo.site.keys import SITE_KEYS, reference_markdown
from geo.site.site_file import parse_site

ROOT = Path(__file__).resolve().parents[2]
REFERENCE = ROOT / "docs" / "site-file.md"
PLANTED = "zz_not_a_key"


def base_doc() -> dict:
    """A valid site document on invented ground (flat, no DEM)."""
    return {
        "units": "m",
        "site": {"name": "Probe Field (fictional)"},
        "runway": {
            "threshold": {"lat": 46.0, "lon": -100.0, "elevation": 500.0},
            "end": {"lat": 46.0, "lon": -100.04, "elevation": 500.0},
            "width": 45,
        },
        "glide_path": {"angle_deg": 3.0, "localizer_mhz": 110.3, "array": "null-reference", "target_rdh": 15.5},
        "mast": {"side": "right", "offset": 120},
    }


def _planted(table: str) -> dict:
    """The base document with an unknown key in ``table`` (created where the base lacks it)."""
    doc = base_doc()
    if table in ("protected_area", "object", "building", "taxiway", "holding_position"):
        doc[table] = [{PLANTED: 1}]
    elif table == "mast.position":
        doc["mast"] = {"position": {"lat": 46.001, "lon": -100.005, PLANTED: 1}}
    elif table == "":
        doc[PLANTED] = 1
    else:
        node = doc
        for part in table.split("."):
            node = node.setdefault(part, {})
        node[PLANTED] = 1
    return doc


def accepted_keys(table: str) -> list[str]:
    """The keys the parser names as allowed in ``table``, from its unknown-key error."""
    with pytest.raises(SiteFileError) as caught:
        parse_site(_planted(table))
    field = f"{table}.{PLANTED}" if table else PLANTED
    if table in ("protected_area", "object", "building", "taxiway", "holding_position"):
        field = f"{table} 1.{PLANTED}"  # list entries counted from 1
    assert caught.value.field == field, caught.value
    return re.search(r"allowed: (.*)$", caught.value.problem).group(1).split(", ")


def documented_keys() -> dict[str, list[str]]:
    """Each section of docs/site-file.md and the keys its table lists."""
    found, table = {}, None
    for line in REFERENCE.read_text(encoding="utf-8").splitlines():
        heading = re.match(r"## (?:The top level|`\[\[?([\w.]+)\]\]?`)", line)
        if heading:
            table = heading.group(1) or ""
            found[table] = []
        elif table is not None and (row := re.match(r"\| `(\w+)` \|", line)):
            found[table].append(row.group(1))
    return found


def test_the_reference_is_made_from_the_current_list():
    assert REFERENCE.read_text(encoding="utf-8") == reference_markdown(), "run python docs/make_site_reference.py"


def test_every_table_of_the_parser_has_a_section_and_no_other():
    # The tables: the top level's keys that are tables, and the inline points.
    top = accepted_keys("")
    tables = {""} | {k for k in top if k != "units"} | {"runway.threshold", "runway.end", "mast.position"}
    assert set(documented_keys()) == tables


@pytest.mark.parametrize("table", sorted(SITE_KEYS))
def test_the_reference_lists_exactly_the_keys_the_parser_accepts(table):
    assert documented_keys()[table] == accepted_keys(table)


def test_the_probe_sees_a_key_the_reference_lacks():
    # The check must be able to fail: a reference missing one key differs from what the parser accepts.
    documented = documented_keys()["terrain"]
    assert documented[:-1] != accepted_keys("terrain")
