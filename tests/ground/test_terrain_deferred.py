"""The study's terrain when the setback is searched: figures made once, for the setback kept.

Reference: an independent full analysis (:func:`geo.ground.terrain.analyse_terrain`) at the setback the
study kept; the study defers the fit zone, the lowest antenna's plane and the roughness of each
trial setback to the one it keeps, so both must agree to the last bit.
"""

import dataclasses

import numpy as np

from geo.ground.dem import Dem
from geo.ground.terrain import analyse_terrain, solve_plane
from geo.site.site_file import load_site
from geo.study.site_study import run_study


def _same(a, b):
    if isinstance(a, np.ndarray):
        return np.array_equal(a, b, equal_nan=True)
    if dataclasses.is_dataclass(a):
        return all(_same(getattr(a, f.name), getattr(b, f.name)) for f in dataclasses.fields(a))
    if isinstance(a, (list, tuple)):
        return len(a) == len(b) and all(_same(x, y) for x, y in zip(a, b))
    if isinstance(a, float) and np.isnan(a):
        return np.isnan(b)
    return a == b


def test_solved_setback_terrain_is_the_full_analysis_there():
    from demo_airfield import SITE_FILE

    spec = load_site(SITE_FILE)
    assert spec.mast.setback_m is None and spec.target_rdh_m is not None  # the demo searches its setback
    result = run_study(dataclasses.replace(spec, prediction=dataclasses.replace(spec.prediction, surface=False)))
    with Dem.open(spec.terrain) as dem:
        args = (dem, result.runway.frame, result.mast.side, result.mast.setback_m, result.mast.offset_m)
        again = analyse_terrain(*args, spec.array, result.wavelength_m, spec.angle_deg)
        solved = solve_plane(*args, spec.array, result.wavelength_m, spec.angle_deg)
    terrain = result.terrain
    assert solved.rpi_elevation_m == terrain.rpi_elevation_m
    for f in dataclasses.fields(terrain):
        if f.name == "zone":
            for g in ("near_m", "far_m", "area_m2", "receivers", "max_half_width_m"):
                assert getattr(terrain.zone, g) == getattr(again.zone, g), g
            assert terrain.zone.polygon.equals_exact(again.zone.polygon, 0.0)
        else:
            assert _same(getattr(terrain, f.name), getattr(again, f.name)), f.name
