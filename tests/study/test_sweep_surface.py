"""The sweep's best candidates re-judged by the surface prediction, and ranked again."""

import csv
import math

import numpy as np
import pytest
from tests_support import DEMO_SITE, without_surface

from geo.site.site_file import load_site
from geo.study.site_study import run_study
from geo.study.sweep import SweepOptions, SweepResult, candidate_site, run_sweep
from geo.study.sweep_choice import add_ranks
from geo.study.sweep_surface import NOT_JUDGED, _rank_again, rejudge_over_surface


@pytest.fixture(scope="module")
def rejudged():
    # Three candidates of the demo (surface prediction on), the best two re-judged: cheap, and the third shows
    # what a candidate outside the top keeps.
    spec = load_site(DEMO_SITE)
    options = SweepOptions((300.0, 310.0, 320.0), (100.0,), ("right",), surface_top=2)
    result = run_sweep(spec, options)
    add_ranks(result, options, spec)
    before = result.columns["rank"].copy()
    count = rejudge_over_surface(spec, result, options)
    return spec, result, before, count


def test_the_top_candidates_get_their_surface_figures(rejudged):
    spec, result, before, count = rejudged
    c = result.columns
    assert count == 2 and bool(np.all(c["feasible"]))
    top = [int(k) for k in np.argsort(before)[:2]]
    for k in top:
        # Independent of the sweep's columns: the candidate's own study, its surface path read here. The angle
        # of the straight fit from its slope (atan), the asymmetry and the bend share from their definitions.
        study = run_study(candidate_site(spec, result, k), surface_check=False)
        s = study.surface
        assert c["surface_angle_error_deg"][k] == pytest.approx(math.degrees(math.atan(s.straight_fit[1])) - 3.0)
        below, above = s.half_sector_below_deg, s.half_sector_above_deg
        assert c["surface_half_sector_asymmetry"][k] == pytest.approx((above - below) / (above + below))
        share = max(seg.bend_95_ddm / seg.limit_ddm for seg in s.structure)
        assert c["surface_worst_bend_share"][k] == pytest.approx(share)
        assert c["surface_verdict"][k] in ("pass", "warning", "fail")
    (other,) = set(range(3)) - set(top)
    assert math.isnan(c["surface_angle_error_deg"][other]) and c["surface_verdict"][other] == NOT_JUDGED
    assert list(c["rank_before_surface"]) == list(before)


def test_the_csv_writes_the_candidates_not_re_judged_empty(rejudged, tmp_path):
    from geo.outputs.sweep_out import write_sweep_csv

    _, result, before, _ = rejudged
    write_sweep_csv(result, tmp_path / "sweep.csv")

    rows = list(csv.DictReader((tmp_path / "sweep.csv").open(encoding="utf-8")))
    judged = [r for r in rows if r["surface_verdict"] != NOT_JUDGED]
    assert len(judged) == 2 and all(r["surface_angle_error_deg"] != "" for r in judged)
    (left,) = [r for r in rows if r["surface_verdict"] == NOT_JUDGED]
    assert left["surface_angle_error_deg"] == "" and left["surface_worst_bend_share"] == ""


def test_nothing_is_re_judged_without_the_surface_prediction():
    spec = without_surface(load_site(DEMO_SITE))
    options = SweepOptions((300.0, 310.0), (100.0,), ("right",), surface_top=2)
    result = run_sweep(spec, options)
    add_ranks(result, options, spec)
    assert rejudge_over_surface(spec, result, options) == 0
    assert set(result.columns["surface_verdict"]) == {NOT_JUDGED}


def test_failing_candidates_drop_below_the_other_feasible_ones():
    # The rule of SURFACE_RANK_TEXT worked out by hand: ranks 1-5, rank 5 infeasible; ranks 1 and 3 fail over
    # the surface. Passing and not re-judged feasible candidates keep their order (2, 4), then the failing ones
    # in their order (1, 3), then the infeasible (5).
    n = 5
    columns = {
        "feasible": np.array([True, True, True, True, False]),
        "rank": np.array([1, 2, 3, 4, 5]),
        "rank_note": np.array(["", "", "", "", "infeasible"], dtype=object),
    }
    columns["rank_before_surface"] = columns["rank"].copy()
    result = SweepResult(columns, [""] * 4 + ["RDH"], 0, 0.9, None)
    _rank_again(result, {0: ["path angle"], 2: ["bends"]})
    assert list(result.columns["rank"]) == [3, 1, 4, 2, 5]
    assert result.best == 1
    assert "path angle" in result.columns["rank_note"][0] and len(result) == n
