"""The surface prediction on the noise-free demo terrain against a dense Kirchhoff integral (issue 19).

The demo DEM is written again without its random roughness (``demo_airfield/make_dem.py`` with the
generator's normal draws replaced by zeros) and the study is run once on it. Inside the study's call of
``predict_surface`` the test runs mastplan again without terrain shadowing and with the DEM as geometry
(``visibility="none", noise="geometry", check=False``), takes its far-field path angle and half-sectors at
its own sampling (one facet per DEM cell) and, for the same receivers, with the facet sides halved and
quartered (``_evaluate`` of the same job, ``refine`` 2 and 4), and samples the DEM heights for its own
integral. The question of the issue is the facet discretisation: mastplan integrates over flat facets about
one DEM cell in size with the phase linearised on each (sinc factors); the test integrates the same
surface, over the same area, by dense point sampling. So two things are inputs, the definition of the
quantity, and everything else is the test's own:

* **The area (input).** Each far receiver's weight at a ground point is mastplan's own
  (``geo.optics.surface_facets.area_limits`` and ``AreaLimits.pair_weights``: the Planck taper over that
  receiver's first Fresnel zones scaled ``ZONE_FACTOR``, times its ramp at the mast's foot), built as
  ``surface_prediction._grid`` builds it: antennas and receiver as heights above the plane, the receiver
  at ``FAR_RANGE_M`` along its direction. The same weight for the surface and for the plane.
* **The coupling (input, derived here).** The model documents its physics (``geo.optics.kernel``, module
  notes): the physical-optics current of a perfect conductor, made reciprocal by averaging with the
  swapped problem, on one-sided ground. The test writes it from the textbook, not from the kernel's code.
  With the source's field ``e exp(-j k r1) / r1`` (``e = z x s1 / |z x s1|`` horizontal, ``s1`` the
  unit ray from the antenna) the current is ``J = 2 n x H = (2 / eta) [s1 (n.e) - e (n.s1)] exp(-j k r1)
  / r1`` (Balanis, *Advanced Engineering Electromagnetics*, 1989, ch. 7, physical optics, from memory),
  and its far field along the receiver's polarisation ``e_r = z x d / |z x d|`` is ``-(j k eta / 4 pi)
  Integral J.e_r exp(j k d.x) dS`` (ibid. ch. 6, radiation of surface currents; the common ``exp(-j k R)
  / R`` dropped), so the coupling is ``F_1 = 2 [(s1.e_r)(n.e) - (e.e_r)(n.s1)]``. The swapped problem
  (the receiver as source, the wave arriving along ``-d`` with polarisation ``-e_r``, received along
  ``-s1`` with ``-e``) gives ``F_2 = 2 [(e.e_r)(n.d) - (d.e)(n.e_r)]``; by reciprocity (ibid. ch. 7, from
  memory) both estimate the same coupling, and physical optics makes them differ off the specular
  direction. The average ``F = (s1.e_r)(n.e) - (d.e)(n.e_r) + (e.e_r)(|n.s1| + |n.d|)`` counts where the
  ground is lit from above (``n.s1 < 0``: the unlit side of a slope carries no current in physical
  optics) and, the model's one-sided ground, radiates upward (``n.d > 0``: a ray to the receiver would
  run into the slope at once), times ``-Gamma`` for lossy ground (the Fresnel coefficient for horizontal
  polarisation, Balanis 1989 sec. 5.3, from memory, at the mean of the two local grazing
  angles; -1 for a perfect conductor, as at the demo). The field of each antenna is then

      E = exp(j k d.p) + Gamma exp(j k d.p') + [K(surface) - K(plane)],
      K = -(j k / 4 pi) Sum W (-Gamma) F exp(-j k (r1 - d.x)) / r1 |N| h^2,

  ``p'`` the image in the fitted plane, ``N = (-z_u, -z_w, 1)`` (``n dS = N du dw``), ``W`` the weight
  above. Over the plane the bracket vanishes and image theory comes back (Beckmann and Spizzichino, *The
  Scattering of Electromagnetic Waves from Rough Surfaces*, 1963, ch. 3; Born and Wolf, *Principles of
  Optics*, 1999, app. III, from memory).
* **The surface (the test's own discretisation).** The DEM's bilinear surface (``heights(u, w)``, as the
  study gives it to mastplan) at the nodes of a regular ``(u, w)`` lattice of step ``h``, each node
  weighing ``h^2``; its slopes from heights 1 mm apart (the bilinear surface's own, except within 1 mm of
  a cell edge); no facets, no linearised phase, no sinc factors. ``h`` = 0.5 m, then 0.25 m (the
  convergence of the test's integral).
* The path angle (DDM = 0) and the half-sectors (DDM = +-0.0875, ICAO Annex 10 Vol I 3.1.5.6, from
  memory) by Brent's method on this DDM(e), ``DDM = 2 k Re(SBO / CSB)`` with mastplan's SBO scale ``k``.

Measured when written (noise-free demo, no shadowing; deg): the test's path angle 2.97658, 2.97733,
2.97725 and 2.97741 with h = 1, 0.5, 0.25 and 0.125 m; at h = 0.25 m path angle 2.97725, half-sectors
below and above 0.36116 and 0.36355. mastplan at refine 1 (its own sampling): 2.97738, 0.36066, 0.35855;
refine 2: 2.97597, 0.36078, 0.36259; refine 4: 2.97653, 0.36129, 0.36294 (refine 8: 2.97794).
So the path angle is within 0.0015 deg of the dense integral at every sampling (0.0001 at mastplan's own)
and the half-sectors within 0.001 at refine 2 and 4; at one facet per cell the upper half-sector is 0.0050
low, which mastplan's doubling check sees (refine 2 moves it by 0.0040, beyond its 0.002) and refines.
Physics, not discretisation, measured with the same area and lattice (h = 0.25 m): the scalar
Beckmann-Spizzichino obliquity ``2 |n.s1|`` without the one-sided rule gives 2.9852, ``F_1`` alone
(one-sided) 2.9723, the average without the one-sided rule 2.9790: on the demo the ditch's walls (slopes to
0.27, five times the grazing angle) make the choice of the physical-optics coupling worth up to 0.008 deg.
"""

from __future__ import annotations

import math
import re
import time
from pathlib import Path

import numpy as np
import pytest
from scipy.optimize import brentq

import demo_airfield.make_dem as make_dem
import geo
import geo.optics.surface_prediction as sp
import geo.study.surface as study_surface
from geo.optics.surface_facets import area_limits

SITE = Path(make_dem.__file__).resolve().parent / "site.toml"
#: Sampling steps of the test's integral (the second halves the first). [m]
STEPS_M = (0.5, 0.25)
#: Distance of the heights the slopes are taken from. [m]
SLOPE_DELTA_M = 1e-3
#: mastplan's facet sides divided by these (1: its own sampling, one facet per DEM cell).
REFINES = (1, 2, 4)
#: DDM at the half-sector (ICAO Annex 10 Vol I 3.1.5.6, from memory).
HALF_SECTOR_DDM = 0.0875
#: Brackets of the roots around image theory's angles. [deg]
BRACKET_DEG = 0.06
#: Tolerances of issue 19: the path angle against the independent integral, and that integral's own
#: change with its sampling halved. [deg]
PATH_TOLERANCE_DEG = 0.002
REFINEMENT_TOLERANCE_DEG = 0.0005
#: The half-sectors at the samplings where mastplan's doubling check stops moving them (refine 2, 4). [deg]
HALF_SECTOR_TOLERANCE_DEG = 0.002


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
    """The test's integral: the array, the plane, and the surface on a regular lattice (rows w, columns u)."""

    def __init__(self, model, sbo_scale, u_m, w_m, z_m, z_u, z_w):
        self.p = np.asarray(model.positions_m, float)
        self.csb = np.asarray(model.csb, complex)
        self.sbo = np.asarray(model.sbo, complex)
        self.normal = np.asarray(model.normal, float) / np.linalg.norm(model.normal)
        self.lam = float(model.wavelength_m)
        self.k = 2.0 * math.pi / self.lam
        self.eps_r, self.sigma = model.relative_permittivity, model.conductivity_s_m
        self.sbo_scale = float(sbo_scale)
        self.u, self.w, self.z, self.z_u, self.z_w = u_m, w_m, z_m, z_u, z_w

    def images(self):
        n = self.normal
        return self.p - 2.0 * (self.p @ n)[:, None] * n[None, :]

    def plane_z(self, u, w):
        n = self.normal
        return -(n[0] * u + n[1] * w) / n[2]

    def above_plane(self, points):
        """(u, w, height above the plane), as ``surface_prediction._above_plane``."""
        p = np.atleast_2d(points)
        return np.column_stack([p[:, 0], p[:, 1], p[:, 2] - self.plane_z(p[:, 0], p[:, 1])])

    def area(self, e_rad):
        """mastplan's area of the far receiver at ``e_rad`` (as ``surface_prediction._grid``): an input."""
        receiver = sp.FAR_RANGE_M * self.direction(e_rad)[None, :]
        return area_limits(self.above_plane(self.p), self.above_plane(receiver), self.lam, sp.ZONE_FACTOR)

    @staticmethod
    def direction(e_rad):
        return np.array([math.cos(e_rad), 0.0, math.sin(e_rad)])

    def coupling(self, p, d, u, w, z, n_u, n_w):
        """``-Gamma F exp(-j k (r1 - d.x)) / r1`` with ``N = (n_u, n_w, 1)`` for ``n`` (module notes)."""
        su, sw, sz = u - p[0], w - p[1], z - p[2]
        r1 = np.sqrt(su * su + sw * sw + sz * sz)
        s_u, s_w, s_z = su / r1, sw / r1, sz / r1
        h1 = np.hypot(s_u, s_w)
        e_u, e_w = -s_w / h1, s_u / h1  # z x s1, horizontal
        h2 = math.hypot(d[0], d[1])
        r_u, r_w = -d[1] / h2, d[0] / h2  # z x d
        n_s1 = n_u * s_u + n_w * s_w + s_z
        n_d = n_u * d[0] + n_w * d[1] + d[2]
        e_er = e_u * r_u + e_w * r_w
        f = (s_u * r_u + s_w * r_w) * (n_u * e_u + n_w * e_w) - (d[0] * e_u + d[1] * e_w) * (n_u * r_u + n_w * r_w)
        f = (f + e_er * (np.abs(n_s1) + np.abs(n_d))) * ((n_s1 < 0.0) & (n_d > 0.0))
        if self.eps_r is not None:
            size = np.sqrt(n_u * n_u + n_w * n_w + 1.0)
            mean = 0.5 * (np.arcsin(np.minimum(np.abs(n_s1) / size, 1.0)) + np.arcsin(np.minimum(n_d / size, 1.0)))
            f = f * -_gamma_h(np.sin(mean), self.eps_r, self.sigma, self.lam)
        return f * np.exp(-1j * self.k * (r1 - d[0] * u - d[1] * w - d[2] * z)) / r1

    def antenna_fields(self, e_rad, step_m, difference=True, rows_per_chunk=40):
        """Each antenna's field toward a distant receiver at ``e_rad`` (module notes), lattice step ``step_m``.

        ``difference=False``: the direct wave and K(plane) only (the raw integral over the plane).
        """
        k, n = self.k, self.normal
        d = self.direction(e_rad)
        area = self.area(e_rad)
        assert area.u0_m >= self.u[0] and area.u1_m <= self.u[-1]  # the lattice holds the whole area
        assert area.w0_m >= self.w[0] and area.w1_m <= self.w[-1]
        every = int(round(step_m / (self.u[1] - self.u[0])))
        h = every * (self.u[1] - self.u[0])
        cols = np.flatnonzero((np.arange(self.u.size) % every == 0) & (self.u <= area.u1_m))
        rows = np.flatnonzero((np.arange(self.w.size) % every == 0) & (self.w >= area.w0_m) & (self.w <= area.w1_m))
        plane_n = (n[0] / n[2], n[1] / n[2])  # N of the plane z = -(n_u u + n_w w) / n_z
        bracket = np.zeros(self.p.shape[0], complex)
        for start in range(0, rows.size, rows_per_chunk):
            r = rows[start : start + rows_per_chunk]
            uu, ww = np.meshgrid(self.u[cols], self.w[r])
            weight = area.pair_weights(uu.ravel(), ww.ravel())[:, 0]
            used = np.flatnonzero(weight > 0.0)
            if used.size == 0:
                continue
            u, w, weight = uu.ravel()[used], ww.ravel()[used], weight[used]
            z = self.z[np.ix_(r, cols)].ravel()[used]
            n_u, n_w = -self.z_u[np.ix_(r, cols)].ravel()[used], -self.z_w[np.ix_(r, cols)].ravel()[used]
            zp = self.plane_z(u, w)
            for i, p in enumerate(self.p):
                plane = self.coupling(p, d, u, w, zp, *plane_n)
                value = plane if not difference else self.coupling(p, d, u, w, z, n_u, n_w) - plane
                bracket[i] += np.sum(weight * value)
        bracket *= -1j * k / (4.0 * math.pi) * h * h
        direct = np.exp(1j * k * (self.p @ d))
        if not difference:
            return direct + bracket
        gamma = _gamma_h(np.array([d @ n]), self.eps_r, self.sigma, self.lam)[0]
        return direct + gamma * np.exp(1j * k * (self.images() @ d)) + bracket

    def ddm(self, e_rad, step_m):
        e = self.antenna_fields(e_rad, step_m)
        return 2.0 * self.sbo_scale * float(np.real((self.sbo @ e) / (self.csb @ e)))


def _roots(ground, step_m, image, half_sectors=True):
    """Path angle and half-sectors of the test's DDM(e), by Brent's method around image theory's roots. [deg]"""

    def root(centre_deg, target):
        lo, hi = (math.radians(centre_deg + s * BRACKET_DEG) for s in (-1.0, 1.0))
        return math.degrees(brentq(lambda e: ground.ddm(e, step_m) - target, lo, hi, xtol=1e-7))

    path = root(image.path_angle_deg, 0.0)
    if not half_sectors:
        return (path,)
    below = root(image.path_angle_deg - image.half_sector_below_deg, HALF_SECTOR_DDM)
    above = root(image.path_angle_deg + image.half_sector_above_deg, -HALF_SECTOR_DDM)
    return path, path - below, above - path


def _lattice(ground, heights, image, step_m, rows_per_call=40):
    """The DEM heights and slopes on the lattice of step ``step_m`` holding every area the roots can ask for."""
    lowest = math.radians(image.path_angle_deg - image.half_sector_below_deg - BRACKET_DEG)
    highest = math.radians(image.path_angle_deg + image.half_sector_above_deg + BRACKET_DEG)
    areas = [ground.area(e) for e in np.linspace(lowest, highest, 25)]
    u1 = max(a.u1_m for a in areas) + 10.0
    w0, w1 = min(a.w0_m for a in areas) - 10.0, max(a.w1_m for a in areas) + 10.0
    u = step_m * np.arange(int(math.ceil(u1 / step_m)) + 1)  # the areas start at the foot, u = 0
    w = step_m * np.arange(math.floor(w0 / step_m), math.ceil(w1 / step_m) + 1)
    z, z_u, z_w = (np.empty((w.size, u.size)) for _ in range(3))
    for start in range(0, w.size, rows_per_call):
        part = slice(start, start + rows_per_call)
        uu, ww = (a.ravel() for a in np.meshgrid(u, w[part]))
        here = np.asarray(heights(uu, ww), float)
        z[part] = here.reshape(-1, u.size)
        z_u[part] = ((np.asarray(heights(uu + SLOPE_DELTA_M, ww), float) - here) / SLOPE_DELTA_M).reshape(-1, u.size)
        z_w[part] = ((np.asarray(heights(uu, ww + SLOPE_DELTA_M), float) - here) / SLOPE_DELTA_M).reshape(-1, u.size)
    return u, w, z, z_u, z_w


def _angles(surface):
    return surface.path_angle_deg, surface.half_sector_below_deg, surface.half_sector_above_deg


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    """The study on the noise-free demo DEM; mastplan's angles without shadowing; the test's integral."""
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
    refined = sp._refined

    def refined_too(job, along, check, zone_factor):
        """The prediction's own sampling, and its far-field receivers again with finer facets (same job)."""
        out = refined(job, along, check, zone_factor)
        far = job.n_path + np.arange(job.windows.size)
        held["refined"] = {r: sp._evaluate(job, far, float(r), zone_factor)[1] for r in REFINES}
        return out

    def recording(model, image, heights, cell_m, *args, **kwargs):
        result = predict_surface(model, image, heights, cell_m, *args, **kwargs)
        # The DEM as geometry, its bilinear surface itself: the study hands over its heights with the
        # noise shrunk (geo.ground.denoise); the wrapped callable is the DEM's own.
        heights = getattr(heights, "heights", heights)
        options = {**kwargs, "visibility": "none", "noise": "geometry", "check": False}
        with pytest.MonkeyPatch.context() as inner:
            inner.setattr(sp, "_refined", refined_too)
            held["mastplan"] = _angles(predict_surface(model, image, heights, cell_m, *args, **options))
        held["mastplan_study"] = _angles(result)
        start = time.process_time()
        ground = Ground(model, image.sbo_scale, None, None, None, None, None)
        lattice = _lattice(ground, heights, image, min(STEPS_M))  # the DEM is open only inside this call
        assert all(np.isfinite(a).all() for a in lattice)
        held["sampling_cpu_s"] = time.process_time() - start
        held.update(model=model, image=image, ground=Ground(model, image.sbo_scale, *lattice))
        return result

    with pytest.MonkeyPatch.context() as patch:
        patch.setattr(study_surface, "predict_surface", recording)
        study = geo.run_study(geo.load_site(str(folder / "site.toml")))
    held["study"] = study.surface
    start = time.process_time()
    held["brute"] = {step: _roots(held["ground"], step, held["image"]) for step in STEPS_M}
    held["cpu_s"] = time.process_time() - start
    return held


def test_study_reports_the_recorded_prediction(demo):
    # the wrapper saw the study's own call (the recorded inputs are those of the study's result)
    assert demo["study"].path_angle_deg == demo["mastplan_study"][0]


def test_refined_evaluations_are_of_the_prediction(demo):
    # the far-field receivers of the same job at refine 1 give the prediction's own angles (so the
    # refine 2 and 4 figures are of the same quantity); the grids differ only in their extent
    assert demo["refined"][1] == pytest.approx(demo["mastplan"], abs=1e-4)


def test_plane_offset_gives_image_theory_of_lowered_antennas(demo):
    """The test's integral over the plane raised 0.1 m: image theory with the antennas 0.1 m lower.

    Independent of mastplan: over a plane the Kirchhoff integral gives the image (Beckmann and
    Spizzichino ch. 3), so a constant offset is the same array 0.1 m lower over the fitted plane. The
    area's foot ramp counts the ground right under the antennas as the fitted plane, which the lowered
    array does not see: measured 0.0013 deg from it.
    """
    ground, image, model = demo["ground"], demo["image"], demo["model"]
    uu, ww = np.meshgrid(ground.u, ground.w)
    offset = 0.1
    n = ground.normal
    flat_u, flat_w = np.full(uu.shape, -n[0] / n[2]), np.full(uu.shape, -n[1] / n[2])
    raised = Ground(model, image.sbo_scale, ground.u, ground.w, ground.plane_z(uu, ww) + offset, flat_u, flat_w)
    brute = _roots(raised, max(STEPS_M), image, half_sectors=False)
    lowered = Ground(model, image.sbo_scale, None, None, None, None, None)
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

    The raw integral over the area converges slowly (a few Fresnel zones, and the foot ramp cuts into
    the lower antenna's first zone, which reaches to 15 m from the mast): measured 0.27 and 0.19 from the
    image wave; a wrong sign gives 2, a factor two 0.5 or 1.
    """
    ground = demo["ground"]
    e = math.radians(3.0)
    d = ground.direction(e)
    raw = ground.antenna_fields(e, max(STEPS_M), difference=False) - np.exp(1j * ground.k * ground.p @ d)
    gamma = _gamma_h(np.array([d @ ground.normal]), ground.eps_r, ground.sigma, ground.lam)[0]
    expected = gamma * np.exp(1j * ground.k * ground.images() @ d)
    assert np.all(np.abs(raw / expected - 1.0) < 0.35)


def test_brute_force_is_converged_in_its_sampling(demo):
    coarse, fine = (demo["brute"][step] for step in STEPS_M)
    assert np.all(np.abs(np.subtract(fine, coarse)) < REFINEMENT_TOLERANCE_DEG)


def test_path_angle_matches_brute_force(demo):
    """Issue 19: mastplan's own sampling (one facet per DEM cell) within 0.002 deg of the dense integral."""
    brute = demo["brute"][min(STEPS_M)]
    print(
        "\nbrute (step: path, below, above)", demo["brute"], "\nmastplan (refine: path, below, above)",
        demo["refined"], "\nmastplan prediction", demo["mastplan"], "\nstudy (knife-edge)", demo["mastplan_study"],
        "\ncpu: integral", demo["cpu_s"], "heights", demo["sampling_cpu_s"],
    )  # fmt: skip
    assert demo["mastplan"][0] == pytest.approx(brute[0], abs=PATH_TOLERANCE_DEG)


def test_refined_facets_stay_within_the_tolerance(demo):
    """Facets 2 and 4 times finer: the path angle and the half-sectors within 0.002 deg of the dense integral."""
    brute = demo["brute"][min(STEPS_M)]
    for refine in REFINES[1:]:
        mastplan = demo["refined"][refine]
        assert mastplan[0] == pytest.approx(brute[0], abs=PATH_TOLERANCE_DEG)
        assert mastplan[1] == pytest.approx(brute[1], abs=HALF_SECTOR_TOLERANCE_DEG)
        assert mastplan[2] == pytest.approx(brute[2], abs=HALF_SECTOR_TOLERANCE_DEG)


def test_doubling_check_sees_where_one_facet_per_cell_is_not_enough(demo):
    """Where one facet per cell misses the dense integral by more than 0.002 deg, halving the facets moves it.

    mastplan's convergence loop refines a band while halving its facets moves its angles by more than
    ``ANGLE_TOLERANCE_DEG``; at the demo the upper half-sector is such a case (measured 0.0050 off).
    """
    brute, own, halved = demo["brute"][min(STEPS_M)], demo["refined"][1], demo["refined"][2]
    missed = [i for i in range(3) if abs(own[i] - brute[i]) > PATH_TOLERANCE_DEG]
    if not missed:
        pytest.skip("one facet per cell is within 0.002 deg everywhere: nothing for the doubling check to see")
    for i in missed:
        assert abs(halved[i] - own[i]) > sp.ANGLE_TOLERANCE_DEG
