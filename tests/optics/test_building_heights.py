"""Allowed building heights and a building's effect on the path: checks against the issue's criteria.

Each check names its source. The criteria (issue 22): a building far to the side changes the path by
less than 1e-4 DDM (behind the mast: see that test, the criterion does not hold for isotropic
elements); allowed heights grow with distance from the reflection zone; the allowed height at a cell, put
back into the full prediction as a building, gives a disturbance at the share within 10 %.
"""

import dataclasses
import math
import tomllib

import numpy as np
import pytest
from tests_support import BASE_SITE

from geo.optics.areas import array_model
from geo.optics.building_heights import HeightSettings, allowed_heights, box_disturbance, cell_grid
from geo.optics.buildings import BuildingShape, building_fields, rectangle_outline
from geo.radio.element import ISOTROPIC, element_for
from geo.radio.prediction import ddm
from geo.radio.structure_limits import structure_segments
from geo.site.buildings import BuildingSpec
from geo.site.site_file import parse_site
from geo.study.buildings import approach_receivers, buildings_for_study, study_receivers
from geo.study.site_study import run_study


@pytest.fixture(scope="module")
def flat():
    spec = parse_site(tomllib.loads(BASE_SITE))
    result = run_study(spec)
    segments = structure_segments(spec.category, result.rdh_m, spec.angle_deg)
    model = array_model(result)
    return result, segments, model, study_receivers(result)


def largest_change(result, model, u, w, height_m, front_to_back_db=None):
    """Largest |DDM change| along the path (10 NM to the threshold) of an 80 m x 60 m building at (u, w).

    ``front_to_back_db``: the generic element with that front-to-back ratio in place of the model's
    (0: isotropic elements); None: the model's own.
    """
    if front_to_back_db is not None:
        element = ISOTROPIC if front_to_back_db == 0.0 else element_for("generic", front_to_back_db)
        model = dataclasses.replace(model, element=element)
    _, points = approach_receivers(result)
    c, s = model.fields(points)
    k = result.prediction.sbo_scale
    shape = BuildingShape("b", rectangle_outline((u, w), 80.0, 60.0, 0.0), height_m)
    dc, ds = building_fields(model, [shape], points)
    return float(np.abs(ddm(c + dc[0], s + ds[0], k) - ddm(c, s, k)).max())


def test_a_building_far_to_the_side_changes_the_path_by_less_than_1e4(flat):
    # Issue 22's criterion (< 1e-4 DDM), abeam the mast 5 and 8 km away from the runway; physics: the scattered
    # field falls as 1 / (r1 r2) (Knott et al., ch. 5).
    result, _, model, _ = flat
    assert largest_change(result, model, 0.0, -5000.0, 20.0) < 1e-4
    assert largest_change(result, model, 0.0, -8000.0, 20.0) < 1e-4


def test_a_building_behind_the_mast_is_seen_through_the_elements_back_lobe(flat):
    # The issue asks for < 1e-4 DDM behind the mast, outside the elements' main lobe. Physics instead: a
    # hangar wall behind the mast, facing it, mirrors the array back toward the approach, so its change
    # is the isotropic one times the elements' back level. The generic element of geo.radio.element (a
    # raised cos^(2n)(phi / 2), Balanis, Antenna Theory, sec. 6.2): 20 dB more front-to-back ratio, 10
    # times less change (within 10 %: the pattern's own term is small near the back); isotropic, far
    # from 1e-4.
    result, _, model, _ = flat
    for u in (-600.0, -1000.0):
        at_20, at_40 = (largest_change(result, model, u, 0.0, 10.0, fb) for fb in (20.0, 40.0))
        assert at_20 / at_40 == pytest.approx(10.0, rel=0.10)
    assert largest_change(result, model, -600.0, 0.0, 10.0, front_to_back_db=0.0) > 1e-2


def heights_at(flat, u, w, settings):
    result, segments, model, receivers = flat
    u, w = np.asarray(u, float), np.asarray(w, float)
    return allowed_heights(model, receivers, segments, u, w, np.zeros(u.size), settings, "along", workers=1)


def test_allowed_heights_grow_away_from_the_reflection_zone(flat):
    # Issue 22's criterion; physics: the scattered field falls with distance (Knott et al., ch. 5), so the
    # disturbance of a given building falls and the allowed height rises. A line of cells in front of the
    # mast, beside the reflection zone, outward away from the runway (0.4, 1.5 and 5 km out): never lower
    # farther out, the top of the bracket (at least 100 m) 5 km out. Not cell by cell: a wall parallel to
    # the runway mirrors the array toward the approach from a band of cells ahead of the mast out to about
    # 1.5 km, inside which the allowed height wobbles by a few metres (14 m 0.8 km out, 16 m 0.4 km out).
    settings = HeightSettings(resolution_m=2.0)
    line = heights_at(flat, [500.0] * 3, [-400.0, -1500.0, -5000.0], settings).height_m
    assert np.all(np.diff(line) >= 0.0), line
    assert line[-1] == settings.max_height_m and line[0] < settings.max_height_m / 2


def test_allowed_height_put_back_into_the_full_prediction_gives_the_share(flat):
    # Issue 22's criterion: within 10 % of the share. The full prediction (geo.study.buildings: receivers
    # from 10 NM to the threshold, the receivers the command gives the map too; the site file's building
    # on its geodesic rectangle) is computed apart from the map's vectorised plates.
    result, segments, model, receivers = flat
    settings = HeightSettings(resolution_m=0.25, orientations=("along",))
    cell = (500.0, -600.0)  # 37 m allowed with the generic element (100 m, the bracket's top, 800 m out)
    found = heights_at(flat, [cell[0]], [cell[1]], settings)
    height = float(found.height_m[0])
    assert settings.min_height_m < height < settings.max_height_m  # bisected, not at a bracket's end
    mast = result.mast
    lat, lon = result.runway.frame.to_geographic(mast.setback_m - cell[0], mast.offset_m - cell[1])
    building = BuildingSpec("cell", height, centre_deg=(float(lat), float(lon)), length_m=80.0, width_m=60.0,
                            heading_deg=result.runway.true_bearing_deg)  # fmt: skip
    spec = dataclasses.replace(result.spec, buildings=(building,))
    full = buildings_for_study(dataclasses.replace(result, spec=spec)).effects[0].worst_share
    assert full == pytest.approx(settings.share, rel=0.10)


def test_vectorised_cells_match_one_cell_at_a_time(flat):
    # Independence of the cells (each cell's plates, facet sides and groups are its own): evaluated
    # together or one at a time, the same shares to rounding.
    result, segments, model, receivers = flat
    settings = HeightSettings()
    u, w = np.array([400.0, -200.0, 900.0]), np.array([-120.0, -300.0, 600.0])
    heights = np.array([15.0, 30.0, 10.0])
    together, _ = box_disturbance(model, receivers, segments, u, w, np.zeros(3), heights, settings, "along")
    for i in range(3):
        alone, _ = box_disturbance(model, receivers, segments, u[i : i + 1], w[i : i + 1], np.zeros(1),
                                   heights[i : i + 1], settings, "along")  # fmt: skip
        assert alone[0] == pytest.approx(together[i], rel=1e-9)


def test_the_grid_is_centred_on_the_mast():
    # Geometry: 2 km each way at 20 m is 200 cells a side (the 4 km x 4 km at 20 m: 40,000 cells).
    u, w = cell_grid(HeightSettings())
    assert u.size * w.size == 40_000 and u[0] == pytest.approx(-1990.0) and np.allclose(u + u[::-1], 0.0)
    assert math.isclose(np.diff(u).max(), 20.0)
