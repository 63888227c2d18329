"""Screening a planned building: the map's cell under its centre, the verdict and its margins."""

import numpy as np
import pytest

from geo.optics.building_heights import AllowedHeights, HeightMap, HeightSettings, cell_grid
from geo.study.building_screening import _map_height, screening_findings


def small_map():
    settings = HeightSettings(extent_m=200.0, step_m=50.0, orientations=("along", "across"))
    u, w = cell_grid(settings)
    heights = np.arange(u.size * w.size, dtype=float)  # a distinct height per cell, rows across the runway
    segments = np.zeros(heights.size, int)
    maps = [AllowedHeights(o, heights + k, heights, segments, 0) for k, o in enumerate(("along", "across"))]
    zeros = np.zeros((w.size, u.size))
    return HeightMap(None, settings, u, w, zeros, zeros, maps, [])


@pytest.mark.parametrize("centre", [(-180.0, -180.0), (10.0, 60.0), (124.0, -26.0), (199.0, 199.0)])
def test_the_cell_under_a_centre_is_the_nearest_cell_centre(centre):
    # Independent construction: the nearest cell centre by brute force over the grid.
    hm = small_map()
    uu, ww = np.meshgrid(hm.u_m, hm.w_m)
    nearest = np.argmin(np.hypot(uu - centre[0], ww - centre[1]))
    assert _map_height(hm, centre, "along") == nearest
    assert _map_height(hm, centre, "across") == nearest + 1
    assert np.isnan(_map_height(hm, (300.0, 0.0), "along"))  # off the map


def test_verdict_and_margins_in_words():
    passed = {"name": "A", "height_m": 10.0, "map_allowed_height_m": 14.0, "map_margin_m": 4.0,
              "map_orientation": "along", "map_pass": True, "full_share_of_limit": 0.3, "full_pass": True,
              "pass": True}  # fmt: skip
    failed = {**passed, "name": "B", "full_share_of_limit": 0.7, "full_pass": False, "pass": False}
    off = {**passed, "name": "C", "map_allowed_height_m": None, "map_margin_m": None, "pass": False}
    a, b, c = screening_findings([passed, failed, off], 0.5, "m")
    assert (a.severity, b.severity, c.severity) == ("pass", "fail", "fail")
    assert "+4.0 m" in a.message and "30%" in a.message and "70%" in b.message and "outside the map" in c.message
    assert all("flight inspection" in f.message for f in (a, b, c))
