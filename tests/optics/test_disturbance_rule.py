"""What a disturbance is per segment: bends combined with the terrain's, steady shifts (each check names its source)."""

import dataclasses
import tomllib

import numpy as np
import pytest
from tests_support import BASE_SITE

from geo.optics.areas import array_model, derive_areas, path_receivers
from geo.optics.disturbance_rule import (
    ANGLE_MONITOR,
    SENSITIVITY_MONITOR,
    far_segments,
    judged_figures,
    shift_receivers,
    steady_shifts,
)
from geo.optics.objects import GENERIC_OBJECTS
from geo.radio.prediction import DDM_AT_HALF_SECTOR, ddm
from geo.radio.structure import structure_arrays
from geo.radio.structure_limits import structure_segments
from geo.site.site_file import AreaSpec, parse_site
from geo.study.site_study import run_study


@pytest.fixture(scope="module")
def flat():
    spec = parse_site(tomllib.loads(BASE_SITE))
    result = run_study(spec)
    segments = structure_segments(spec.category, result.rdh_m, spec.angle_deg)
    model = array_model(result)
    rc = path_receivers(result, model, segments)
    shift = shift_receivers(rc, segments, model.fields, lambda c, s: ddm(c, s, rc.sbo_scale))
    return result, segments, model, rc, shift


def test_a_steady_offset_is_a_shift_not_a_bend(flat):
    # A synthetic steady DDM offset of 0.01 everywhere. The structure rule (its line or mean takes a
    # constant away) sees no bend; the path moves by offset / sensitivity, the nominal sensitivity
    # being 0.0875 DDM at 0.12 theta (Annex 10 Vol I 3.1.5.6, the SBO scaled so): 0.01 / (0.0875 / 0.36 deg).
    result, segments, model, rc, shift = flat
    offset = 0.01
    change = np.full((1, rc.before_threshold_m.size), offset)
    found = structure_arrays(segments, rc.before_threshold_m, change)
    assert np.nanmax(found.ratio_95) < 1e-9
    q = shift.before_threshold_m.size
    shifts = steady_shifts(segments, rc, change, shift, np.full((1, q), offset), np.full((1, q), offset))
    theta = result.spec.angle_deg
    nominal = offset / (DDM_AT_HALF_SECTOR / (0.12 * theta))
    assert shifts["angle_shift_deg"][0] == pytest.approx(nominal, rel=0.05)
    assert shifts["sensitivity_change"][0] == pytest.approx(0.0, abs=1e-12)
    # the path rose (DDM > 0 on the designed path: 150 Hz, the aircraft below): the +0.10 theta allowance
    assert shifts["shift_share"][0] == pytest.approx(shifts["angle_shift_deg"][0] / (ANGLE_MONITOR[1] * theta))
    judged = judged_figures(found.ratio_95, np.zeros(len(segments)), shifts)
    assert judged["judged_share"][0] == pytest.approx(shifts["shift_share"][0])


def test_an_opened_sector_is_a_sensitivity_change(flat):
    # DDM +0.01 below and -0.01 above the path, none on it: the sector's DDM span 2 x 0.0875 (Annex 10
    # Vol I 3.1.5.6, nominal) grows by 0.02, a sensitivity change of about 0.02 / 0.175, over the 25 % limit.
    result, segments, model, rc, shift = flat
    q = shift.before_threshold_m.size
    change = np.zeros((1, rc.before_threshold_m.size))
    shifts = steady_shifts(segments, rc, change, shift, np.full((1, q), 0.01), np.full((1, q), -0.01))
    assert shifts["angle_shift_deg"][0] == pytest.approx(0.0, abs=1e-12)
    assert shifts["sensitivity_change"][0] == pytest.approx(0.02 / (2 * DDM_AT_HALF_SECTOR), rel=0.05)
    assert shifts["shift_share"][0] == pytest.approx(shifts["sensitivity_change"][0] / SENSITIVITY_MONITOR)


def test_bends_combine_with_the_terrain_by_root_sum_of_squares(flat):
    # Independent bends add in variance (Papoulis, sec. 7-1): shares 0.3 and 0.4 give 0.5.
    segments = flat[1]
    ratio = np.zeros((1, len(segments)))
    ratio[0, -1] = 0.3
    terrain = np.zeros(len(segments))
    terrain[-1] = 0.4
    zero = {"angle_shift_deg": np.zeros(1), "sensitivity_change": np.zeros(1), "shift_share": np.zeros(1)}
    judged = judged_figures(ratio, terrain, zero)
    assert judged["bend_share"][0] == pytest.approx(0.3)
    assert judged["combined_bend_share"][0] == pytest.approx(0.5)
    assert far_segments(segments) == [0, 1]  # coverage limit to A, A to B: the line-referenced ones


def test_the_front_to_back_ratio_cuts_the_area_behind_the_mast_to_its_clearance(flat):
    # Front-to-back ratio (IEEE Std 145-2013): the generic element's back level, 25 dB (a field of
    # 0.056), weakens the illumination of an object behind the mast; by the bistatic radar equation
    # (Knott et al., Radar Cross Section, ch. 2: field as 1 / r from the antenna) it acts as a distance
    # 18 times larger. With isotropic elements the large tail's critical area reaches well behind the
    # mast; with the generic element only the positions against the mast (its own clearance) are left.
    result = flat[0]
    # the grid from 160 m behind the mast, growing at most 200 m out (the test looks behind the mast only)
    grid = AreaSpec(grid_m=20.0, ahead_m=0.0, behind_m=160.0, away_m=40.0, beyond_m=0.0, max_extent_m=200.0)
    behind = {}
    for element in ("isotropic", "generic"):
        prediction = dataclasses.replace(result.spec.prediction, element=element)
        spec = dataclasses.replace(result.spec, objects=(GENERIC_OBJECTS[0],), areas=grid, prediction=prediction)
        areas = derive_areas(run_study(spec), receivers_count=400)
        d = areas.disturbances[0]
        off_mast = ~d.at_mast
        critical = (d.worst_share > grid.critical_share) & off_mast
        behind[element] = float(max(0.0, -d.ahead_m[critical].min())) if critical.any() else 0.0
    assert behind["isotropic"] >= 100.0
    assert behind["generic"] == 0.0
