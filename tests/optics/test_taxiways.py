"""Taxiways and holding positions of ``mastplan areas`` on a flat invented site (each check names its source).

A van (code "van", heading across the runway) and a taxiway running straight across toward the
runway 100 m ahead of the mast, from 200 m beyond the mast to 20 m short of the centre line: it
crosses the van's critical area (the van's areas reach about 200 m ahead of the mast and 45 m
toward the runway on this site, tests/optics/test_areas.py's site). Coarse settings keep it quick:
a 20 m grid and 200 receivers on the path (invented test values; the checks hold on any grid).
"""

from __future__ import annotations

import dataclasses
import tomllib

import numpy as np
import pytest
from tests_support import BASE_SITE

from geo.errors import SiteFileError
from geo.optics.areas import array_model, derive_areas, disturbance, path_receivers
from geo.radio.structure_limits import structure_segments
from geo.site.site_file import AreaSpec, HoldingSpec, TaxiwaySpec, parse_site
from geo.study.site_study import run_study

VAN = """
[[object]]
code = "van"
headings = ["across"]
"""
GRID = AreaSpec(grid_m=20.0, ahead_m=200.0, behind_m=40.0, away_m=40.0, beyond_m=40.0)
RECEIVERS = 200


def _geo(result, u, w):
    """Mast-frame points (u ahead, w toward the runway) to WGS 84, through the runway frame (pyproj)."""
    mast = result.mast
    lat, lon = result.runway.frame.to_geographic(mast.setback_m - np.asarray(u, float), mast.offset_m - np.asarray(w))
    return np.atleast_1d(lat), np.atleast_1d(lon)


@pytest.fixture(scope="module")
def crossing():
    spec = parse_site(tomllib.loads(BASE_SITE + VAN))
    study = run_study(spec)
    lat, lon = _geo(study, [100.0, 100.0], [-200.0, study.mast.offset_m - 20.0])
    taxiway = TaxiwaySpec("B", tuple(zip(lat.tolist(), lon.tolist())), "van")
    spec = dataclasses.replace(spec, taxiways=(taxiway,), areas=GRID)
    first = derive_areas(dataclasses.replace(study, spec=spec), receivers_count=RECEIVERS)
    # Two holding positions checked: at the proposed one, and on the taxiway's most disturbing point.
    (t,) = first.taxiways
    worst = int(np.argmax(np.where(np.isfinite(t.share), t.share, -1.0)))
    holds = tuple(
        HoldingSpec(name, float(t.lat[k]), float(t.lon[k]), "B") for name, k in (("B1", t.holding), ("B2", worst))
    )
    spec = dataclasses.replace(spec, holding_positions=holds)
    result = dataclasses.replace(study, spec=spec)
    return result, derive_areas(result, receivers_count=RECEIVERS)


def test_the_taxiway_crosses_the_critical_area(crossing):
    _, areas = crossing
    (t,) = areas.taxiways
    assert t.inside.any() and not t.inside.all()
    # Points every 10 m at most (our rule): 200 + 130 - 20 = 310 m of line.
    assert np.diff(t.distance_m).max() <= 10.0 + 1e-9
    assert t.distance_m[-1] == pytest.approx(310.0, abs=0.05)


def test_the_holding_position_lies_outside_the_critical_area(crossing):
    import shapely

    result, areas = crossing
    (t,) = areas.taxiways
    k = t.holding
    assert k is not None
    (critical,) = [a for a in areas.areas if a.kind == "critical"]
    point = shapely.Point(t.ahead_m[k], t.toward_runway_m[k])
    assert not critical.polygon.covers(point)
    # The next point toward the runway is inside: it is the nearest holding position outside.
    nearer = k + 1 if t.from_centre_line_m[-1] < t.from_centre_line_m[0] else k - 1
    assert t.inside[nearer]
    # Independent run of the disturbance at that one position (geo.optics.areas.disturbance, no grid).
    spec = result.spec
    segments = structure_segments(spec.category, result.rdh_m, spec.angle_deg)
    model = array_model(result)
    rc = path_receivers(result, model, segments, RECEIVERS)
    van = areas.disturbances[0].obj
    _, share = disturbance(model, rc, segments, van, "across", t.ahead_m[k : k + 1], t.toward_runway_m[k : k + 1])
    assert share[0] <= spec.areas.critical_share
    # Its distance from the centre line: the runway frame against pyproj's geodesic (WGS 84) to the
    # centre line's nearest point, found by bisection along it (an independent construction).
    from pyproj import Geod

    geod = Geod(ellps="WGS84")
    frame = result.runway.frame
    along, _ = frame.to_plane(t.lat[k], t.lon[k])
    foot_lat, foot_lon = frame.to_geographic(float(along), 0.0)
    _, _, distance = geod.inv(t.lon[k], t.lat[k], foot_lon, foot_lat)
    assert t.from_centre_line_m[k] == pytest.approx(distance, abs=0.05)


def test_a_holding_position_inside_fails_and_the_proposed_one_passes(crossing):
    result, areas = crossing
    proposed, worst = areas.holding_checks
    assert proposed.passes and proposed.share <= result.spec.areas.critical_share
    assert not worst.passes and worst.share > result.spec.areas.critical_share
    assert [severity for _, severity, _ in areas.findings] == ["info", "pass", "fail"]


def test_summary_names_the_holding_position_in_both_units(crossing, tmp_path):
    import csv
    import json

    from geo.outputs.areas_out import write_areas
    from geo.units import M_PER_FT

    _, areas = crossing
    folder = write_areas(areas, tmp_path / "out", plots=False)
    summary = json.loads((folder / "summary.json").read_text(encoding="utf-8"))
    (entry,) = summary["taxiways"]
    hold = entry["holding_position"]
    # 1 ft = 0.3048 m exactly (International Yard and Pound Agreement, 1959).
    assert hold["from_centre_line_ft"] == pytest.approx(hold["from_centre_line_m"] / M_PER_FT, abs=0.01)
    assert {"lat", "lon"} <= set(hold)
    rows = list(csv.DictReader((folder / "taxiway_1_b.csv").open(encoding="utf-8")))
    assert len(rows) == areas.taxiways[0].distance_m.size
    layers = {p.stem for p in (folder / "layers").iterdir()}
    assert {"taxiways", "taxiway_critical_stretches", "holding_positions"} <= layers


@pytest.mark.parametrize(
    "table, field",
    [
        ('[[taxiway]]\nname = "A"\nline = [{ lat = -35.41, lon = 148.92 }]\ncode = "E"\n', "taxiway 1.line"),
        ('[[taxiway]]\nname = "A"\nline = [{ lat = -35.41, lon = 148.92 }, { lat = -35.4, lon = 148.92 }]\n'
         'code = "G"\n', "taxiway 1.code"),
        ('[[holding_position]]\nname = "A1"\nlat = -35.41\nlon = 148.92\ntaxiway = "Z"\n',
         "holding_position 1.taxiway"),
        ('[[holding_position]]\nname = "A1"\nlat = -35.41\nlon = 148.92\n', "holding_position 1"),
        ('[[object]]\ncode = "E"\nheight = 5\n', "object 1.height"),
        ('[[object]]\ncode = "Q"\n', "object 1.code"),
    ],
)  # fmt: skip
def test_bad_tables_give_one_line_naming_the_field(table, field):
    with pytest.raises(SiteFileError, match=field) as error:
        parse_site(tomllib.loads(BASE_SITE + table))
    assert "\n" not in str(error.value)


def test_design_codes_give_their_sizes_and_a_size_given_wins():
    # Annex 14 Table 1-1 (from memory): the code letters rise with the wingspan, A (up to 15 m) to
    # F (65 to 80 m); taller aircraft carry taller tails (common practice, no source).
    from geo.site.design_objects import DESIGN_OBJECTS

    heights = [DESIGN_OBJECTS[c].height_m for c in "ABCDEF"]
    assert heights == sorted(heights) and len(set(heights)) == 6
    spec = parse_site(tomllib.loads(BASE_SITE + '[[object]]\ncode = "E"\n\n[[object]]\ncode = "C"\nheight = 13.5\n'))
    e, c = spec.objects
    assert (e.height_m, e.length_m, e.width_m, e.base_m) == (19.0, 12.0, 1.0, 8.0)  # the table's code E row
    assert c.height_m == 13.5 and c.length_m == DESIGN_OBJECTS["C"].length_m and "height from the site file" in c.source
    assert e.name == "code E aircraft" and e.code == "E"
