"""The site file's buildings in a study on flat ground: the summary's keys, a building far off, two together."""

import dataclasses
import tomllib

import numpy as np
import pytest
from tests_support import BASE_SITE

from geo.outputs.summary import summary_dict
from geo.site.buildings import BuildingSpec
from geo.site.site_file import parse_site
from geo.study.buildings import buildings_for_study
from geo.study.site_study import run_study
from tests.outputs.test_summary_keys import documented_keys, is_documented, key_paths


@pytest.fixture(scope="module")
def flat():
    return run_study(parse_site(tomllib.loads(BASE_SITE)))


def hangar(result, name, u, w, height_m, cladding="metal"):
    """An 80 m x 60 m building at (u, w) in the mast frame, its length along the runway."""
    mast = result.mast
    lat, lon = result.runway.frame.to_geographic(mast.setback_m - u, mast.offset_m - w)
    return BuildingSpec(name, height_m, centre_deg=(float(lat), float(lon)), length_m=80.0, width_m=60.0,
                        heading_deg=result.runway.true_bearing_deg, cladding=cladding)  # fmt: skip


def with_buildings(result, *buildings):
    spec = dataclasses.replace(result.spec, buildings=tuple(buildings))
    return run_study(spec)


def test_every_buildings_summary_key_is_documented(flat):
    # docs/summary_keys.md names every key (tests/outputs/test_summary_keys.py's rule, on a run with buildings).
    result = with_buildings(flat, hangar(flat, "A", 500.0, -300.0, 15.0), hangar(flat, "B", 900, -600, 8, "glass"))
    summary = summary_dict(result)
    found = summary["prediction"]["surface"]["buildings"]
    assert found["over"] == "reflecting plane" and len(found["each"]) == 2
    ours = [p for p in key_paths(summary) if p.startswith("prediction.surface.buildings")]
    missing = [p for p in ours if not is_documented(p, documented_keys())]
    assert len(ours) > 20 and missing == []
    assert [f.code for f in result.findings].count("building-bends") == 2


def test_a_building_far_off_leaves_the_path_as_it_was(flat):
    # Issue 22's criterion (< 1e-4 DDM far to the side): the path with it is the path without it.
    found = buildings_for_study(flat, (hangar(flat, "far", 0.0, -8000.0, 20.0),))
    assert np.abs(found.ddm_with - found.ddm_without).max() < 1e-4
    assert abs(found.fitted_angle_with_deg - found.fitted_angle_without_deg) < 1e-3
    for a, b in zip(found.structure_with, found.structure_without):
        assert a.bend_95_ddm == pytest.approx(b.bend_95_ddm, abs=1e-4)


def test_two_small_buildings_add_as_their_fields_do(flat):
    # Superposition (Maxwell's equations are linear; single scattering between the buildings left out):
    # to first order in the small fields the DDM change of both is the sum of each one's.
    a, b = hangar(flat, "a", 700.0, -400.0, 3.0), hangar(flat, "b", 1200.0, -700.0, 3.0)
    both = buildings_for_study(flat, (a, b))
    each = [buildings_for_study(flat, (x,)) for x in (a, b)]
    change = both.ddm_with - both.ddm_without
    summed = sum(e.ddm_with - e.ddm_without for e in each)
    assert np.abs(change - summed).max() <= 0.05 * np.abs(change).max()
