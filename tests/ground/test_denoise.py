"""The DEM's noise shrunk out of the surface, on real ground: matplotlib's sample DEM (tests/jacksboro.py).

geo.ground.denoise takes cell-scale detail up to NOISE_LIMIT_M (0.1 m) as noise. On a real DEM of
rolling ground that detail is the ground's own shape, metres not centimetres, so the heights must
come back as they are, even on a DEM fine enough for the cell limit (here lifted for the test).
"""

import math

import numpy as np
import pytest
from jacksboro import jacksboro_sheet
from scipy.interpolate import RegularGridInterpolator

import geo.ground.denoise as denoise


def _sheet_heights(scale: float):
    """The sheet's relief scaled about its mean, in local metres (east, north of its north-west corner).

    Local metres by the spherical approximation (111,320 m per degree of longitude at the equator
    times cos(latitude), 110,540 m per degree of latitude: textbook values, from memory); scipy's
    bilinear interpolator between the cells.
    """
    sheet = jacksboro_sheet()
    rows, cols = sheet.z.shape
    lat = sheet.top - rows * sheet.dy / 2.0
    east_m, north_m = sheet.dx * 111_320.0 * math.cos(math.radians(lat)), sheet.dy * 110_540.0
    north = -np.arange(rows)[::-1] * north_m
    east = np.arange(cols) * east_m
    grid = RegularGridInterpolator((north, east), sheet.scaled(scale)[::-1], bounds_error=False, fill_value=np.nan)

    def heights(u, w):
        u, w = np.broadcast_arrays(np.asarray(u, float), np.asarray(w, float))
        return grid(np.column_stack([-(u.ravel() + 10_000.0), w.ravel() + 10_000.0])).reshape(u.shape)

    return heights, min(east_m, north_m)


@pytest.mark.parametrize("scale", [1.0, 0.05])
def test_real_ground_is_kept_as_it_is(monkeypatch, scale):
    # The real relief, and scaled to 5 % (the airfield-like ground of the surface tests): the detail
    # level found (MAD / 0.6745, Donoho and Johnstone 1994) is far above 0.1 m, so nothing is taken
    # out and the heights are the DEM's own, to the last bit.
    monkeypatch.setattr(denoise, "CELL_LIMIT_M", 1e9)
    heights, cell_m = _sheet_heights(scale)
    shrunk = denoise.denoise_heights(heights, cell_m)
    u, w = np.meshgrid(np.arange(0.0, 2000.0, 20.0), np.arange(-300.0, 300.0, 20.0))
    out = shrunk(u, w)
    assert shrunk.noise_sigma_m > 10 * denoise.NOISE_LIMIT_M  # measured: 24 m (full), 1.2 m (5 %)
    assert shrunk.removed_rms_m == 0.0
    assert np.array_equal(out, heights(u, w), equal_nan=True)


def test_a_coarse_dem_is_kept_as_it_is():
    # The sheet's cells are 74 m by 92 m, above CELL_LIMIT_M (10 m): kept as given with the limit in place.
    heights, cell_m = _sheet_heights(0.05)
    assert cell_m > denoise.CELL_LIMIT_M
    shrunk = denoise.denoise_heights(heights, cell_m)
    u, w = np.meshgrid(np.arange(0.0, 1000.0, 25.0), np.arange(-200.0, 200.0, 25.0))
    assert np.array_equal(shrunk(u, w), heights(u, w), equal_nan=True) and shrunk.removed_rms_m == 0.0
