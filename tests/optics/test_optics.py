"""The physical-optics core against closed forms (each check names its source)."""

import math

import numpy as np
import pytest
from optics_reference import reference_fields

from geo.optics.kernel import Facets, _pair_fields, direct_field, ground_fields, mirror_points, scattered_field

LAM = 0.9  # a glide path wavelength, 333 MHz [m]


def plate(centre, along, up, length_m, height_m, n=1):
    """A rectangular plate cut into n x n facets: sides ``along`` (length) and ``up`` (height)."""
    along, up = np.asarray(along, float), np.asarray(up, float)
    a, b = along * length_m / n, up * height_m / n
    idx = (np.arange(n) + 0.5) / n - 0.5
    ia, ib = np.meshgrid(idx, idx)
    c = np.asarray(centre, float) + ia.ravel()[:, None] * along * length_m + ib.ravel()[:, None] * up * height_m
    return Facets(c, np.tile(a, (c.shape[0], 1)), np.tile(b, (c.shape[0], 1)), two_sided=True)


def monostatic_rcs_m2(facets, direction, distance_m=1e6):
    """RCS ``4 pi r^2 |E_s|^2 / |E_i|^2`` seen from far along ``direction`` (from the plate)."""
    d = np.asarray(direction, float) / np.linalg.norm(direction)
    point = d * distance_m
    e_s = scattered_field(point, facets, point[None, :], LAM)[0]
    e_i = 1.0 / distance_m
    return 4.0 * math.pi * distance_m**2 * abs(e_s) ** 2 / e_i**2


@pytest.mark.parametrize("n", [1, 8])
def test_plate_peak_rcs_at_normal_incidence(n):
    # Knott, Shaeffer and Tuley, Radar Cross Section, ch. 5: sigma = 4 pi A^2 / lambda^2.
    f = plate([0, 0, 10], [1, 0, 0], [0, 0, 1], 6.0, 4.0, n)
    expected = 4.0 * math.pi * (6.0 * 4.0) ** 2 / LAM**2
    assert monostatic_rcs_m2(f, [0, 1, 0]) == pytest.approx(expected, rel=1e-3)
    assert monostatic_rcs_m2(f, [0, -1, 0]) == pytest.approx(expected, rel=1e-3)  # two-sided


def test_plate_pattern_is_sinc_squared_in_a_principal_plane():
    # Knott et al., ch. 5: in the plane of side a, sigma(phi) = sigma0 (sin(k a sin phi) / (k a sin phi))^2
    # (cos^2 phi from the projected current for this polarisation: E horizontal, in the plane of incidence).
    a, b = 6.0, 4.0
    f = plate([0, 0, 0], [1, 0, 0], [0, 0, 1], a, b, 12)
    k = 2.0 * math.pi / LAM
    sigma0 = 4.0 * math.pi * (a * b) ** 2 / LAM**2
    for phi_deg in (0.0, 2.0, 4.0, 6.5, 9.0):
        phi = math.radians(phi_deg)
        x = k * a * math.sin(phi)
        closed = sigma0 * (math.sin(x) / x if x else 1.0) ** 2 * math.cos(phi) ** 2
        got = monostatic_rcs_m2(f, [math.sin(phi), math.cos(phi), 0.0])
        if closed > 1e-2 * sigma0:  # main lobe and first side lobes: within 0.5 dB
            assert 10 * math.log10(got / closed) == pytest.approx(0.0, abs=0.5)


def test_reciprocity_of_a_bistatic_plate():
    # Reciprocity (Balanis, Advanced Engineering Electromagnetics, sec. 7.8): swapping transmitter
    # and receiver leaves the coupling unchanged for equal polarisations.
    f = plate([40, 5, 8], [0.8, 0.6, 0], [0, 0, 1], 10.0, 6.0, 10)
    a = np.array([0.0, 0.0, 6.0])
    r = np.array([900.0, 30.0, 50.0])
    ab = scattered_field(a, f, r[None, :], LAM)[0]
    ba = scattered_field(r, f, a[None, :], LAM)[0]
    assert abs(ab - ba) <= 1e-6 * abs(ab)


def test_facet_is_exact_for_a_plane_wave_direction():
    # A facet integrates the linearised phase exactly: splitting it into 4 x 4 changes a far-field
    # result only by the quadratic phase, which vanishes at long range (independent construction).
    one = plate([0, 0, 0], [1, 0, 0], [0, 1, 0], 3.0, 2.0, 1)
    many = plate([0, 0, 0], [1, 0, 0], [0, 1, 0], 3.0, 2.0, 4)
    s = np.array([-1e6, 2e5, 3e5])
    r = np.array([[1e6, -1e5, 4e5]])
    e1 = scattered_field(s, one, r, LAM)[0]
    e4 = scattered_field(s, many, r, LAM)[0]
    assert abs(e1 - e4) <= 1e-4 * abs(e1)


def test_flat_ground_gives_the_image_wave():
    # Stationary phase (Born and Wolf, app. III; Beckmann and Spizzichino, ch. 3): over a flat
    # perfectly conducting plane the integral tends to the image wave -exp(-j k R') / R'.
    # Quadrature: facets of 0.25 m within 30 m of the mast's foot, 1 m beyond; smooth edges.
    h = 4.3
    src = np.array([0.0, 0.0, h])
    rx = np.array([[2000.0, 0.0, 110.0]])
    ref = -direct_field(mirror_points(src, np.array([0.0, 0.0, 1.0])), rx, LAM)[0]
    sin_psi = (h + rx[0, 2]) / math.hypot(rx[0, 0], h + rx[0, 2])
    q = math.sqrt(LAM * h * sin_psi + LAM**2 / 4)
    centre = (h * sin_psi + LAM / 2) / sin_psi**2
    x1, y = centre + 5 * q / sin_psi**2, 5 * q / sin_psi

    def ramp(t):
        return np.where(t >= 1, 1.0, 0.5 - 0.5 * np.cos(np.pi * np.clip(t, 0, 1)))

    parts = []
    for x0, xe, d in ((-30.0, 30.0, 0.25), (30.0, x1, 1.0)):
        xs, ys = np.meshgrid(np.arange(x0 + d / 2, xe, d), np.arange(-y + d / 2, y, d))
        c = np.column_stack([xs.ravel(), ys.ravel(), np.zeros(xs.size)])
        w = ramp((c[:, 0] + 30) / 20) * ramp((x1 - c[:, 0]) / (x1 / 4)) * ramp((y - np.abs(c[:, 1])) / (y / 2))
        parts.append(Facets(c, np.tile([d, 0, 0], (c.shape[0], 1)), np.tile([0, d, 0], (c.shape[0], 1)), False, w))
    f = Facets(*(np.vstack([getattr(p, n) for p in parts]) for n in ("centres_m", "edge_a_m", "edge_b_m")),
               False, np.concatenate([p.weights for p in parts]))  # fmt: skip
    got = scattered_field(src, f, rx, LAM)[0]
    assert abs(got / ref) == pytest.approx(1.0, abs=0.04)  # tolerance: quadrature, first cut
    assert abs(math.degrees(np.angle(got / ref))) < 2.0


@pytest.mark.parametrize("side_m", [30.0, 60.0, 120.0])
def test_plate_shadow_matches_fresnel_diffraction(side_m):
    # Fresnel diffraction by a square obstacle (Born and Wolf, Principles of Optics, sec. 8.7,
    # with Babinet's principle, sec. 8.3): on the axis behind it, U / U0 = 1 - 2j (C(v) - j S(v))^2,
    # v = (side / 2) sqrt(2 (d1 + d2) / (lambda d1 d2)); C, S from scipy.special.fresnel.
    # Physical optics forms the shadow by forward scatter; paraxial geometry (d1 = d2 = 2 km).
    from scipy.special import fresnel

    d1 = d2 = 2000.0
    src = np.array([0.0, 0.0, 0.0])
    rx = np.array([[d1 + d2, 0.0, 0.0]])
    screen = plate([d1, 0.0, 0.0], [0, 1, 0], [0, 0, 1], side_m, side_m, int(2 * side_m))
    direct = direct_field(src, rx, LAM)[0]
    got = (direct + scattered_field(src, screen, rx, LAM)[0]) / direct
    v = side_m / 2 * math.sqrt(2 * (d1 + d2) / (LAM * d1 * d2))
    s, c = fresnel(v)
    assert abs(got - (1 - 2j * (c - 1j * s) ** 2)) < 2e-3


def test_lossy_ground_uses_the_fresnel_coefficient():
    # Balanis sec. 5.3 via geo.radio.reflection: at grazing incidence the Kirchhoff integral over a flat
    # lossy plane tends to Gamma(psi) times the image wave; here against the conductor result.
    from geo.radio.reflection import reflection_coefficient_h

    src = np.array([0.0, 0.0, 4.3])
    rx = np.array([[2000.0, 0.0, 110.0]])
    xs, ys = np.meshgrid(np.arange(20.0, 600.0, 1.0), np.arange(-60.0, 60.0, 1.0))
    c = np.column_stack([xs.ravel(), ys.ravel(), np.zeros(xs.size)])
    f = Facets(c, np.tile([1.0, 0, 0], (c.shape[0], 1)), np.tile([0, 1.0, 0], (c.shape[0], 1)))
    pec = scattered_field(src, f, rx, LAM)
    lossy = scattered_field(src, f, rx, LAM, relative_permittivity=15.0, conductivity_s_m=0.005)
    psi = math.atan2(114.3, 2000.0)  # specular grazing angle
    gamma = reflection_coefficient_h(psi, 15.0, 0.005, LAM)
    assert abs(lossy[0] / pec[0] - (-gamma)) < 0.02 * abs(gamma)


def _plates(count, seed):
    rng = np.random.default_rng(seed)
    c = rng.normal(size=(count, 3)) * 10.0 + [40.0, 5.0, 8.0]
    return Facets(c, rng.normal(size=(count, 3)), rng.normal(size=(count, 3)), two_sided=True)


@pytest.mark.parametrize("ground", [(None, None), (15.0, 0.005)])
def test_plates_agree_with_the_formula_pair_by_pair(ground):
    # Independent construction: tests/optics_reference.py evaluates the module notes' sum facet by
    # facet with the vector products as written (Knott et al. 1993 ch. 5: normal turned toward the
    # source, t = -1 behind the plate), Gamma from geo.radio.reflection per pair; here plates tilted every way,
    # receivers in front of and behind them, grouped. Requirement: 1e-10 of the largest for the
    # conductor (double precision), 1e-5 with the tabulated Fresnel coefficient (its error < 1e-6).
    f = _plates(60, seed=5)
    groups = np.repeat(np.arange(3), 20)
    src = np.array([0.0, 0.0, 6.0])
    rx = np.array([[900.0, 30.0, 50.0], [-100.0, 20.0, 3.0], [50.0, -300.0, -20.0], [60.0, 10.0, 8.0]])
    got = scattered_field(src, f, rx, LAM, *ground, groups=groups)
    for g in range(3):
        ref = reference_fields(src, f.subset(groups == g), rx, LAM, *ground)[0]
        tolerance = 1e-10 if ground[0] is None else 1e-5
        assert np.max(np.abs(got[g] - ref)) <= tolerance * np.max(np.abs(ref))


def test_receiver_visible_removes_pairs():
    # Independent construction: hiding pairs by the callable equals weighting them by 0 in the
    # pair-by-pair sum of tests/optics_reference.py.
    f = _plates(40, seed=6)
    src = np.array([0.0, 0.0, 6.0])
    rx = np.array([[900.0, 30.0, 50.0], [-100.0, 20.0, 3.0], [60.0, 10.0, 8.0]])
    hidden = np.random.default_rng(7).random((len(f), len(rx))) > 0.5

    def receiver_visible(facet_index, receiver_index):
        return ~hidden[np.ix_(facet_index, receiver_index)]

    got = scattered_field(src, f, rx, LAM, receiver_visible=receiver_visible)
    ref = reference_fields(src, f, rx, LAM, weights=(~hidden).astype(float))[0]
    assert np.max(np.abs(got - ref)) <= 1e-10 * np.max(np.abs(ref))


def test_groups_across_chunks_sum_like_separate_calls():
    # Independent construction: groups of 150 facets, so that chunks (2**16 pairs: 163 facets for
    # 400 receivers) cut through groups; each group against a call on its facets alone.
    f = _plates(600, seed=8)
    groups = np.repeat(np.arange(4), 150)
    src = np.array([0.0, 0.0, 6.0])
    t = np.linspace(0.0, 1.0, 400)
    rx = np.column_stack([300.0 + 5000.0 * t, 40.0 * np.sin(9.0 * t), 10.0 + 200.0 * t])
    grouped = scattered_field(src, f, rx, LAM, groups=groups)
    for g in range(4):
        alone = scattered_field(src, f.subset(groups == g), rx, LAM)
        assert np.max(np.abs(grouped[g] - alone)) <= 1e-12 * np.max(np.abs(alone))


def test_the_result_does_not_depend_on_the_threads():
    # Each chunk's sum is added in chunk order: one thread or two give the same bits
    # (independent construction: the same sum computed serially).
    rng = np.random.default_rng(9)
    n = 3000
    c = np.column_stack([rng.random(n) * 600, rng.random(n) * 80 - 40, rng.random(n) * 1.5])
    a = np.column_stack([np.full(n, 2.0), np.zeros(n), rng.normal(0, 0.05, n)])
    b = np.column_stack([np.zeros(n), np.full(n, 2.0), rng.normal(0, 0.05, n)])
    f = Facets(c, a, b, False, rng.random(n))
    t = np.linspace(0.0, 1.0, 300)
    rx = np.column_stack([300.0 + 17000.0 * t, np.full(300, 120.0), 15.0 + 1000.0 * t])
    src = np.array([[0.0, 0.0, 4.47], [0.0, 0.25, 8.95]])
    ground = dict(relative_permittivity=15.0, conductivity_s_m=0.005)
    one = _pair_fields(src, f, rx, LAM, threads=1, **ground)
    two = _pair_fields(src, f, rx, LAM, threads=2, **ground)
    assert np.array_equal(one, two)
    assert np.array_equal(ground_fields(src, f, rx, LAM, 15.0, 0.005), one[:, 0, :])


def test_a_thread_limit_keeps_the_kernel_on_the_calling_thread():
    # geo.optics.kernel.thread_limit: within it, a call runs its chunks where the limit says (here on the
    # calling thread alone: every pair-weight callback, called once per chunk, comes from it), and
    # without it on two threads; the result is the same bits either way.
    import threading

    from geo.optics.kernel import set_thread_limit, thread_limit

    rng = np.random.default_rng(4)
    n = 4000
    c = np.column_stack([rng.random(n) * 600, rng.random(n) * 80 - 40, rng.random(n) * 1.5])
    a = np.column_stack([np.full(n, 2.0), np.zeros(n), np.zeros(n)])
    b = np.column_stack([np.zeros(n), np.full(n, 2.0), np.zeros(n)])
    f = Facets(c, a, b, False)
    rx = np.column_stack([np.linspace(300.0, 9000.0, 200), np.full(200, 120.0), np.linspace(15.0, 500.0, 200)])
    src = np.array([[0.0, 0.0, 4.47], [0.0, 0.25, 8.95]])
    seen = []

    def pair_weight(sl):
        seen.append(threading.get_ident())
        return np.arange(rx.shape[0]), np.ones((sl.stop - sl.start, rx.shape[0]))

    with thread_limit(lambda: 1):
        limited = ground_fields(src, f, rx, LAM, pair_weight=pair_weight)
    assert len(seen) > 1 and set(seen) == {threading.get_ident()}
    seen.clear()
    set_thread_limit(1)  # the same for the rest of a process (a batch's), until taken back
    try:
        with thread_limit(lambda: 2):  # a block's limit does not lift the process's
            assert np.array_equal(ground_fields(src, f, rx, LAM, pair_weight=pair_weight), limited)
        assert set(seen) == {threading.get_ident()}
    finally:
        set_thread_limit(None)
    seen.clear()
    free = ground_fields(src, f, rx, LAM, pair_weight=pair_weight)
    assert len(set(seen)) == 2 and threading.get_ident() not in seen
    assert np.array_equal(limited, free)
