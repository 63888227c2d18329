"""Converged by default: the DEM's noise as roughness, facets refined where the ground asks, the path sampled densely.

Each check names its source: the Gaussian characteristic function (Ament's factor), stationary
phase (a plane gives image theory), scipy's bilinear interpolator, numpy's line fit.
"""

import math

import numpy as np
import pytest
from dem_helpers import box_around, write_dem
from pyproj import Transformer
from scipy.interpolate import RegularGridInterpolator

from geo.ground.denoise import THRESHOLD_SIGMAS, denoise_heights
from geo.optics import surface_prediction as sp
from geo.radio.arrays import antenna_heights_m, proximity_shifts_m
from geo.radio.prediction import ArrayModel, predict_path
from geo.radio.reflection import coherent_roughness_factor
from geo.radio.structure_limits import structure_segments
from geo.site.site_file import load_site
from geo.study.site_study import run_study

LAM = 0.895  # glide path wavelength at 335 MHz [m]
CRS = "EPSG:32755"  # UTM 55S, around the test site of tests_support.BASE_SITE
CELL = 5.0


def test_ament_factor_is_the_mean_phase_of_gaussian_heights():
    # Ament (1953): the coherent reflection of Gaussian heights of RMS sigma is the mean of the
    # phase factor exp(-j 2 k h sin psi); independent: that mean by Monte Carlo over 400,000
    # Gaussian heights (its standard error about 0.0016).
    rng = np.random.default_rng(11)
    heights = rng.normal(0.0, 1.0, 400_000)
    k = 2.0 * math.pi / LAM
    for sigma, psi_deg in ((0.03, 3.0), (0.5, 10.0), (0.2, 30.0)):
        psi = math.radians(psi_deg)
        mean = np.mean(np.exp(-2j * k * sigma * math.sin(psi) * heights))
        assert float(coherent_roughness_factor(sigma, psi, LAM)) == pytest.approx(mean.real, abs=0.005)
        assert abs(mean.imag) < 0.005


def _lattice_heights(noise_m, ditch_depth_m=1.6, seed=3, cell_m=CELL, ditch_scale_m=5.0):
    """A lattice of ``cell_m``: a gentle plane, a ditch across at u = 150 m, Gaussian noise per post.

    The ditch is ``ditch_depth_m exp(-((u - 150) / ditch_scale_m)^2)`` deep. Heights between posts by
    scipy's bilinear interpolator (independent of the project's DEM code).
    """
    u = np.arange(-200.0, 2500.0 + cell_m, cell_m)
    w = np.arange(-300.0, 300.0 + cell_m, cell_m)
    uu, ww = np.meshgrid(u, w, indexing="ij")
    smooth = 0.002 * uu - 0.003 * ww - ditch_depth_m * np.exp(-(((uu - 150.0) / ditch_scale_m) ** 2))
    posts = smooth + np.random.default_rng(seed).normal(0.0, noise_m, uu.shape)
    interp = RegularGridInterpolator((u, w), posts, method="linear")
    exact = RegularGridInterpolator((u, w), smooth, method="linear")

    def heights(a, b):
        a, b = np.broadcast_arrays(np.asarray(a, float), np.asarray(b, float))
        inside = (a >= u[0]) & (a <= u[-1]) & (b >= w[0]) & (b <= w[-1])
        out = np.full(a.shape, np.nan)
        out[inside] = interp(np.column_stack([a[inside], b[inside]]))
        return out

    def without_noise(a, b):
        a, b = np.broadcast_arrays(np.asarray(a, float), np.asarray(b, float))
        inside = (a >= u[0]) & (a <= u[-1]) & (b >= w[0]) & (b <= w[-1])
        out = np.full(a.shape, np.nan)
        out[inside] = exact(np.column_stack([a[inside], b[inside]]))
        return out

    return heights, without_noise


def test_denoising_removes_post_noise_and_keeps_a_ditch():
    # Donoho and Johnstone (1994): soft thresholding at a few noise deviations removes noise and
    # keeps detail well above it, biased by at most the threshold. The lattice's noise-free surface
    # is known (the same posts without noise, scipy's interpolator): away from the ditch the
    # denoised surface lies at least 3 times closer to it than the noisy one (RMS); at the ditch's
    # axis its depth (1.6 m) is kept within the threshold plus the posts' own noise there (3 sigma,
    # 0.09 m: detail above the threshold keeps its noise).
    heights, truth = _lattice_heights(0.03)
    denoised = denoise_heights(heights, CELL)
    u, w = np.meshgrid(np.arange(0.0, 500.0, 1.7), np.arange(-60.0, 60.0, 1.3))
    z = denoised(u, w)
    away = np.abs(u - 150.0) > 30.0
    noisy_rms = np.sqrt(np.mean((heights(u, w) - truth(u, w))[away] ** 2))
    clean_rms = np.sqrt(np.mean((z - truth(u, w))[away] ** 2))
    assert clean_rms < noisy_rms / 3.0
    axis_u, axis_w = np.full(25, 150.0), np.linspace(-50.0, 50.0, 25)
    kept = denoised(axis_u, axis_w) - truth(axis_u, axis_w)
    assert np.max(np.abs(kept)) <= THRESHOLD_SIGMAS * denoised.noise_sigma_m + 3 * 0.03
    # What it takes out is of the noise's size (the bilinear surface between posts of RMS 3 cm).
    assert 0.005 < denoised.removed_rms_m < 0.03


def _flat_setup(offset=120.0, setback=300.0):
    h = antenna_heights_m("null-reference", LAM, 3.0, 0.0)
    model = ArrayModel.build(h, proximity_shifts_m(h, offset), (1, 0), (0, 1), LAM, phase_for_angle_deg=3.0)
    image = predict_path(model, 3.0, setback, offset, 0.0)
    return model, image, structure_segments("I", 15.0, 3.0)


def test_facets_are_refined_over_a_ditch_and_not_elsewhere():
    # The detail rule (geo.optics.surface_facets.surface_grid): where the ground between two nodes
    # departs from the straight line by more than lambda / (64 sin 6 deg) (0.134 m at 335 MHz), the
    # interval is cut in 2 or 4 parts until the departure, falling as the square of the side, meets
    # it. On a 1 m DEM (facets 2.5 m) a ditch 1.6 m deep, exp(-((u - 150) / 2 m)^2), departs from the
    # chord of a 2.5 m interval by up to h^2 / 8 * z'' = 6.25 / 8 * 0.8 = 0.63 m (its curvature at the
    # axis, 2 * 1.6 / 4 m^-1): cut there into sides of at most 1.25 m; a plane is not cut.
    model, image, _ = _flat_setup()
    _, truth = _lattice_heights(0.0, cell_m=1.0, ditch_scale_m=2.0)
    dense, points = sp._approach_points(image, 300.0, 120.0)
    grid = sp._grid(model, truth, 1.0, points[::50])
    steps = np.diff(grid.u_m)
    mid = (grid.u_m[:-1] + grid.u_m[1:]) / 2.0
    near = np.abs(mid - 150.0) < 1.0
    assert np.max(steps[near]) <= 1.25 + 1e-9
    far = (mid > 300.0) & (mid < 500.0)
    assert np.min(steps[far]) == pytest.approx(2.5, rel=0.05)
    flat = sp._grid(model, lambda a, b: 0.0 * np.asarray(a), 1.0, points[::50])
    flat_mid = (flat.u_m[:-1] + flat.u_m[1:]) / 2.0
    assert np.min(np.diff(flat.u_m)[np.abs(flat_mid - 150.0) < 1.0]) == pytest.approx(2.5, rel=0.05)


def _dem(tmp_path, name, heights):
    west, north, n, _ = box_around(CRS, -35.41, 148.92, 2500.0, CELL)
    return write_dem(tmp_path / name, CRS, west, north, CELL, n, n, heights)


def test_a_noisy_plane_gives_image_theory_and_the_fitted_angle(tmp_path, write_site, site_text):
    # Stationary phase (Born and Wolf, app. III): over a plane the surface prediction is image
    # theory; 3 cm of noise per DEM post, counted as roughness (Ament factor about 0.9999 at 3 deg),
    # must leave it there within the flat-plane tolerance of 0.002 deg, converged. The path angle
    # where aircraft fly is the elevation of a straight line through the path heights from 2 to
    # 10 NM: independent, numpy's line fit through image theory's own path heights there.
    x0, y0 = Transformer.from_crs("EPSG:4326", CRS, always_xy=True).transform(148.92, -35.41)
    rng = np.random.default_rng(5)

    def heights(x, y):
        return 510.0 + 0.002 * (x - x0) + rng.normal(0.0, 0.03, np.shape(x))

    _dem(tmp_path, "noisy.tif", heights)
    text = site_text.replace("base_elevation = 511.2\n", "") + '\n[terrain]\ndem = "noisy.tif"\n'
    result = run_study(load_site(write_site(text)))
    surface, image = result.surface, result.prediction
    assert surface.converged["converged"]
    assert abs(surface.path_angle_deg - image.path_angle_deg) <= 0.002
    assert abs(surface.half_sector_below_deg - image.half_sector_below_deg) <= 0.002
    assert 0.0 < surface.roughness_m < 0.03
    part = (image.along_m <= -2 * 1852.0) & (image.along_m >= -10 * 1852.0)
    slope = np.polyfit(-image.along_m[part], image.path_z_m[part], 1)[0]
    assert surface.fitted_angle_deg == pytest.approx(math.degrees(math.atan(slope)), abs=0.002)
    # Sampled evenly and densely: at most 20 m apart from 10 NM to the threshold.
    d = np.diff(surface.approach_along_m)
    assert np.max(d) <= 20.0 + 1e-9 and np.ptp(d) < 1e-6
    assert surface.approach_along_m[0] == pytest.approx(-10 * 1852.0)
    assert all(seg.well_sampled for seg in surface.structure)


def test_the_cost_limit_stops_the_refinement_and_says_so(monkeypatch):
    # The convergence loop (geo.optics.surface_prediction._refined): with tolerances no sampling can
    # meet (1e-12), every band is refined until the next check would pass the cost limit; the
    # prediction then says it has not converged, which band and which limit stopped it, and the
    # study's finding repeats it. Independent of the physics: the loop's own bookkeeping.
    from geo.study.surface import surface_findings

    model, image, segments = _flat_setup()
    _, ground = _lattice_heights(0.0, ditch_depth_m=0.5)
    monkeypatch.setattr(sp, "DDM_TOLERANCE", 1e-12)
    monkeypatch.setattr(sp, "ANGLE_TOLERANCE_DEG", 1e-12)
    monkeypatch.setattr(sp, "MAX_REFINE", 2.0)
    found = sp.predict_surface(model, image, ground, CELL, 3.0, 300.0, 120.0, segments, visibility="none")
    conv = found.converged
    assert not conv["converged"]
    assert "cost limit" in conv["not_converged_because"] and "times finer" in conv["not_converged_because"]
    # With MAX_REFINE 2 the check at facets halved is made, but no band is taken at that sampling,
    # since the check that would confirm it (4 times finer) passes the limit.
    assert all(band["refine"] == 1.0 and len(band["steps"]) == 1 for band in conv["bands"])
    assert all(band["steps"][0]["refine"] == 2.0 for band in conv["bands"])
    words = " ".join(f.message for f in surface_findings(found, "I") if f.code == "surface-convergence")
    assert "cost limit" in words
