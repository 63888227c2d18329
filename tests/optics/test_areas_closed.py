"""Areas that close, on grids fine enough: halving the spacing, and the planner's outlines.

A flat invented site (tests_support.BASE_SITE) and a fuel truck (design code "truck", 10 m long,
heading across the runway): cheaper than the demo (whose generic objects take minutes per grid),
with a sensitive share of 0.35 so that the grid closes sooner, and 120 receivers on the path
(invented test settings). The grid spacing 10 m is the finest :data:`COARSE_OBJECT_SHARE` lets
pass without a warning for a 10 m object; halved, 5 m.
"""

from __future__ import annotations

import dataclasses
import tomllib

import numpy as np
import pytest
from tests_support import BASE_SITE

from geo.optics.areas import COARSE_OBJECT_SHARE, derive_areas
from geo.optics.taxiways import object_for_code
from geo.site.site_file import AreaSpec, parse_site
from geo.study.site_study import run_study

TRUCK = dataclasses.replace(object_for_code("truck"), headings=("across",))
SETTINGS = dict(critical_share=0.5, sensitive_share=0.35, ahead_m=200.0, behind_m=40.0, away_m=40.0, beyond_m=40.0)


@pytest.fixture(scope="module")
def halved():
    spec = parse_site(tomllib.loads(BASE_SITE))
    study = run_study(spec)
    runs = {}
    for grid in (10.0, 5.0):
        s = dataclasses.replace(spec, objects=(TRUCK,), areas=AreaSpec(grid_m=grid, **SETTINGS))
        runs[grid] = derive_areas(dataclasses.replace(study, spec=s), receivers_count=120)
    return runs


def test_the_areas_close_and_the_grid_is_fine_enough(halved):
    assert TRUCK.length_m * COARSE_OBJECT_SHARE >= 10.0
    for run in halved.values():
        assert not [w for w in run.warnings if "grid spacing" in w and "length" in w]
        for area in run.areas:
            assert area.open_sides == () and not area.polygon.is_empty
        d = run.disturbances[0]
        assert d.growth_rounds >= 1  # the first rectangle was too small: it grew


def test_halving_the_spacing_changes_no_area_by_more_than_ten_percent(halved):
    # The criterion of the derived areas' convergence (common practice in mesh refinement, no source):
    # the same areas from a grid twice as fine, within 10 %.
    coarse, fine = ({(a.object_name, a.kind): a.area_m2 for a in halved[g].areas} for g in (10.0, 5.0))
    for key, area in coarse.items():
        print(f"\n{key}: {area:,.0f} m2 at 10 m, {fine[key]:,.0f} m2 at 5 m")
        assert abs(area - fine[key]) <= 0.10 * fine[key], key


def test_the_outline_holds_the_union_and_each_side_touches_it(halved):
    # Independent construction: the rectangle from the extreme cells the grid marks (centres plus
    # half a step), against each area's outline and the union of the objects'.
    import shapely

    for run in halved.values():
        step = run.settings.grid_m
        d = run.disturbances[0]
        for area in [*run.areas, *run.unions]:
            limit = area.share
            inside = d.worst_share > limit
            u, w = d.ahead_m[inside], d.toward_runway_m[inside]
            expected = shapely.box(u.min() - step / 2, w.min() - step / 2, u.max() + step / 2, w.max() + step / 2)
            outline = area.outline
            assert outline.buffer(1e-6).covers(area.polygon)
            assert area.polygon.area <= outline.area + 1e-6
            assert (
                outline.equals_exact(expected.normalize(), 1e-6) or outline.symmetric_difference(expected).area < 1e-6
            )
            reach = area.reach_m()
            assert reach["ahead_m"] == pytest.approx(u.max() + step / 2)
            assert reach["away_m"] == pytest.approx(max(-(w.min() - step / 2), 0.0))


def test_the_union_of_the_objects_holds_each_objects_area(halved):
    run = halved[10.0]
    for union in run.unions:
        for area in run.areas:
            if area.kind == union.kind:
                assert union.polygon.buffer(1e-6).covers(area.polygon)
    assert np.isfinite([u.area_m2 for u in run.unions]).all()
