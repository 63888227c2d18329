"""``mastplan sweep``: the site file's unit, rank, top ten, near-feasible candidates, solved setbacks, the OFZ."""

import csv
import dataclasses
import json
import re

import numpy as np
import pytest
from click.testing import CliRunner
from tests_support import DEMO_SITE, FEET_SITE, demo_site_without_surface

from cli.main import main

#: The demo's DEM, named by absolute path in a copy of its site file.
DEMO_DEM = DEMO_SITE.parent / "dem.tif"


def _run(*args):
    return CliRunner().invoke(main, [str(a) for a in args])


@pytest.fixture(scope="module")
def demo_site(tmp_path_factory):
    """The demo site file with the surface prediction off: the sweep has none, and of its best candidate's
    study these tests read the map's ranking and the setback solve only."""
    return demo_site_without_surface(tmp_path_factory.mktemp("site"))


def _rows(folder):
    with (folder / "sweep.csv").open(encoding="utf-8") as fh:
        return list(csv.DictReader(fh))


def test_a_site_in_feet_sweeps_and_prints_in_feet(tmp_path, write_site):
    site = write_site(FEET_SITE)
    res = _run(
        "sweep", site, "--out", tmp_path / "a", "--setback", 1000, 1000, 10, "--offset", 300, 300, 10, "--no-plots"
    )
    assert res.exit_code == 0, res.output
    # 1,000 ft and 300 ft given: 304.8 m and 91.44 m exactly (1 ft = 0.3048 m), the file's unit first.
    assert "setback 1,000.0 ft (304.8 m), offset 300.0 ft (91.4 m)" in res.output
    # Flat ground: RDH = 304.8 m x tan 3 deg = 15.974 m = 52.41 ft; volumes in cubic yards first.
    assert "RDH 52.41 ft (15.97 m)" in res.output and "yd3 (" in res.output
    # The default grid in the file's unit: 750-1,250 ft in 25 ft steps, 250-650 ft in 50 ft steps.
    res = _run("sweep", site, "--out", tmp_path / "b", "--no-plots")
    assert res.exit_code == 0, res.output
    options = json.loads((tmp_path / "b" / "summary.json").read_text())["options"]
    assert options["setbacks_ft"][:3] == pytest.approx([750.0, 775.0, 800.0]) and len(options["setbacks_ft"]) == 21
    assert options["offsets_ft"] == pytest.approx([250.0, 300.0, 350.0, 400.0, 450.0, 500.0, 550.0, 600.0, 650.0])
    assert options["setbacks_m"][1] == pytest.approx(775 * 0.3048)
    # The site's own side by default.
    assert options["sides"] == ["right"]


def test_bad_range_in_the_file_unit(tmp_path, write_site):
    res = _run("sweep", write_site(FEET_SITE), "--out", tmp_path / "c", "--offset", 20, 30, 10)
    # The runway's half-width, 75 ft = 22.86 m: 20 ft is on the runway.
    assert res.exit_code == 2 and "75.0 ft (22.9 m)" in res.output


@pytest.fixture(scope="module")
def demo_default(tmp_path_factory, demo_site):
    out = tmp_path_factory.mktemp("sweep") / "demo"
    res = _run("sweep", demo_site, "--out", out, "--no-plots")
    assert res.exit_code == 0, res.output
    return out, res.output


def test_rank_column_sorted_and_the_top_ten_on_screen(demo_default):
    out, output = demo_default
    rows = _rows(out)
    assert [int(r["rank"]) for r in rows] == list(range(1, len(rows) + 1))
    assert {r["side"] for r in rows} == {"right"}  # the demo site's side
    feasible = [r for r in rows if r["feasible"] == "True"]
    assert rows[: len(feasible)] == feasible  # feasible first
    scores = [float(r["score"]) for r in feasible]
    assert scores == sorted(scores, reverse=True)
    summary = json.loads((out / "summary.json").read_text())
    assert summary["best"]["setback_m"] == pytest.approx(float(rows[0]["setback_m"]))
    assert summary["best"]["offset_m"] == pytest.approx(float(rows[0]["offset_m"]))
    assert len(feasible) >= 10 and "Top 10 by rank:" in output
    listed = [line for line in output.splitlines() if re.match(r"\s+\d+\. (left|right) side", line)]
    assert [int(line.split(".")[0]) for line in listed] == list(range(1, 11))
    page = (out / "best" / "map.html").read_text()
    assert "mastplan-score-legend" in page and "rank 1; right side, setback" in page


def test_ties_are_broken_and_explained():
    from geo.study.sweep_choice import rank_candidates

    # Hand-made columns: candidates 0 and 1 have the same score; 1 needs less cut + fill and ranks first.
    columns = {
        "feasible": np.array([True, True, True, False, False]),
        "score": np.array([90.0, 90.0, 95.0, np.nan, np.nan]),
        "cut_m3": np.array([10.0, 0.0, 0.0, 5.0, 0.0]),
        "fill_m3": np.array([0.0, 5.0, 0.0, 5.0, 0.0]),
        "fraunhofer_margin_m": np.array([0.1, 0.1, 0.1, -0.1, 0.1]),
        "side": np.array(["right"] * 5),
        "setback_m": np.full(5, 300.0),
        "offset_m": np.full(5, 120.0),
        "rdh_m": np.array([15.5, 15.5, 15.5, 15.6, 20.0]),
    }
    reasons = ["", "", "", "rough by the Fraunhofer criterion (margin -0.100 m)", "RDH 20.00 m outside 15 to 18"]
    rank, notes = rank_candidates(columns, reasons, "fraunhofer", 15.5)
    assert list(rank) == [3, 2, 1, 4, 5]
    assert "less cut + fill" in notes[0] and notes[1] == "" and notes[3] == "feasible after the computed grading"


def test_near_feasible_candidates_with_their_grading(tmp_path, demo_site):
    # A small grid, so that fewer than ten candidates are feasible and the near-feasible ones are listed.
    grid = ("--setback", 330, 360, 10, "--offset", 100, 150, 25)
    res = _run("sweep", demo_site, "--out", tmp_path / "iev", "--criterion", "iev", "--no-plots", *grid)
    assert res.exit_code == 0, res.output
    summary = json.loads((tmp_path / "iev" / "summary.json").read_text())
    near = summary["near_feasible"]
    assert near and "Feasible after the computed grading" in res.output
    volumes = [r["cut_m3"] + r["fill_m3"] for r in near]
    assert volumes == sorted(volumes) and all(v > 0 for v in volumes)
    assert all(r["reasons"].startswith("rough by the IEV criterion") and ";" not in r["reasons"] for r in near)
    # Listed with their cut and fill on screen.
    first = near[0]
    assert f"fill {first['fill_m3']:,.0f} m3" in res.output


def test_solved_setbacks_agree_with_the_study_solver(tmp_path, demo_site):
    from geo.site.site_file import MastSpec, load_site
    from geo.study.site_study import run_study

    out = tmp_path / "solve"
    res = _run("sweep", demo_site, "--out", out, "--solve-setback", "--offset", 100, 125, 25, "--side", "both")
    assert res.exit_code == 0, res.output
    rows = _rows(out)
    assert len(rows) == 4
    assert json.loads((out / "summary.json").read_text())["options"]["setbacks_solved_for_target_rdh"] is True
    spec = load_site(demo_site)
    for r in rows:
        assert float(r["rdh_m"]) == pytest.approx(spec.target_rdh_m, abs=0.01)
        # Independent method: the single-site study's own setback solve (its zone polygon and sample grid).
        one = dataclasses.replace(spec, mast=MastSpec(side=r["side"], offset_m=float(r["offset_m"]), setback_m=None))
        study = run_study(one)
        # RDH agrees within 1 cm between sweep and study (tests/study/test_sweep.py): 0.01 / tan 3 deg = 0.19 m.
        assert float(r["setback_m"]) == pytest.approx(study.mast.setback_m, abs=0.3)
    bad = _run("sweep", demo_site, "--out", tmp_path / "x", "--solve-setback", "--setback", 200, 300, 10)
    assert bad.exit_code == 2 and "--solve-setback" in bad.output


def test_a_mast_in_the_obstacle_free_zone_is_infeasible(tmp_path, demo_site):
    out = tmp_path / "ofz"
    res = _run("sweep", demo_site, "--out", out, "--setback", 300, 310, 10, "--offset", 60, 120, 20, "--no-plots")
    assert res.exit_code == 0, res.output
    for r in _rows(out):
        lateral = float(r["offset_m"]) - float(r["upper_shift_m"])
        top = float(r["mast_top_height_m"])
        # Hand rule, Annex 14 (memory): the inner transitional surface rises 33.3 % from 60 m; below 60 m
        # the OFZ's floor is the strip itself.
        floor = max(lateral - 60.0, 0.0) * 0.333
        if top > floor:
            assert r["feasible"] == "False" and "mast in the obstacle free zone" in r["reasons"]
            assert " ft) above its floor" in r["reasons"]
        else:
            assert "obstacle free zone" not in r["reasons"]
    assert not any(r["feasible"] == "True" and float(r["offset_m"]) <= 80.0 for r in _rows(out))


def test_the_side_of_a_surveyed_position_is_the_default(tmp_path, write_site):
    from geo.site.site_file import load_site
    from geo.study.site_study import run_study

    # Place the mast on the left side by side/offset/setback, then give its position instead (the study's
    # own geodesic placement), and sweep without --side: only the left side.
    left = run_study(load_site(write_site(FEET_SITE.replace('side = "right"', 'side = "left"'), "left.toml")))
    text = FEET_SITE.replace(
        'side = "right"\noffset = 400\nsetback = 1000',
        f"position = {{ lat = {left.mast.lat_deg:.9f}, lon = {left.mast.lon_deg:.9f} }}",
    )
    res = _run("sweep", write_site(text), "--out", tmp_path / "p", "--setback", 1000, 1000, 10, "--no-plots")
    assert res.exit_code == 0, res.output
    assert {r["side"] for r in _rows(tmp_path / "p")} == {"left"}


def test_the_site_file_may_accept_a_mast_in_the_obstacle_free_zone(tmp_path, write_site):
    # Flat ground, 200 ft (60.96 m) from the centre line: the inner transitional surface (33.3 % from 60 m,
    # Annex 14 Table 4-1, memory) is under 0.4 m high there, far below a mast about 9.6 m high.
    args = ("--setback", 1000, 1000, 10, "--offset", 200, 200, 10, "--no-plots")
    res = _run("sweep", write_site(FEET_SITE), "--out", tmp_path / "no", *args)
    assert res.exit_code == 0, res.output
    (row,) = _rows(tmp_path / "no")
    assert row["feasible"] == "False" and "mast in the obstacle free zone" in row["reasons"]
    allowed = write_site(FEET_SITE + "[surfaces]\nallow_in_obstacle_free_zone = true\n", "allowed.toml")
    res = _run("sweep", allowed, "--out", tmp_path / "yes", *args)
    assert res.exit_code == 0, res.output
    (row,) = _rows(tmp_path / "yes")
    assert row["feasible"] == "True" and row["reasons"] == ""


def test_the_best_candidates_are_re_judged_over_the_surface(tmp_path):
    # The demo with its surface prediction on, two candidates and --surface-top 1: the best one gets the surface
    # columns, the other keeps them empty ("not judged"), and the screen says how many were re-judged.
    text = DEMO_SITE.read_text(encoding="utf-8").replace('dem = "dem.tif"', f'dem = "{DEMO_DEM.as_posix()}"')
    site = tmp_path / "demo.toml"
    site.write_text(text, encoding="utf-8")
    out = tmp_path / "sweep"
    res = _run(
        "sweep", site, "--out", out, "--setback", 300, 310, 10, "--offset", 100, 100, 25, "--surface-top", 1,
        "--no-plots",
    )  # fmt: skip
    assert res.exit_code == 0, res.output
    assert "Re-judged over the DEM surface: 1 candidate(s)" in res.output
    rows = _rows(out)
    assert rows[0]["surface_verdict"] in ("pass", "warning") and rows[0]["surface_angle_error_deg"] != ""
    assert rows[1]["surface_verdict"] == "not judged" and rows[1]["surface_half_sector_asymmetry"] == ""
    summary = json.loads((out / "summary.json").read_text())
    assert summary["surface"]["asked"] == 1 and summary["surface"]["rejudged"] == 1
    # Without the surface prediction nothing is re-judged, and the screen says why.
    res = _run("sweep", demo_site_without_surface(tmp_path), "--out", tmp_path / "off", "--setback", 300, 300, 10,
               "--offset", 100, 100, 25, "--no-plots")  # fmt: skip
    assert res.exit_code == 0, res.output
    assert "Re-judged over the DEM surface: none (the site file says prediction.surface = false)." in res.output
