"""Does a compiled kernel (numba) pay for its install weight? The ground integral measured both ways.

``geo.optics.kernel.ground_fields`` (float32 numpy in chunks) against a numba version of the same
physics (the module notes of ``geo.optics.kernel``): the same source-side preparation in numpy, then one
loop per receiver over the facets, every pair computed in float64 (sines, cosines and arc sines
in float64 or, as in ground_fields, float32: both measured) with the same formulas (the
coupling ``F_p``, the two sinc factors, the spherical or plane wave, the lossy Fresnel coefficient
linearly interpolated from the same 2,049-angle table, the masks ``source_visible`` and
``horizon_tan``). ``pair_weight`` is taken as the same callable as ``ground_fields`` (called once
per chunk of the same size, in Python; its receivers and weights go to the kernel). Pairs that are
not seen, not lit or of weight 0 are skipped, not zeroed. Three kernels, ``@njit(cache=True)``:
serial; ``parallel=True`` with ``prange`` over receivers (each receiver owns its sums); and
``parallel=True`` with ``prange`` over one block of facets per thread (per-thread sums, added
after the last chunk: the better fit when a call has few receivers). 2 threads (2 cores).

Prints:

1. agreement with ``ground_fields`` (largest difference over the largest field; float32 noise
   is about 1e-5) on the facets of ``bench_surface.py``, spherical and far receivers, perfect
   conductor and lossy ground, with the masks and a pair-weight callable;
2. pairs/s of numpy and the three numba kernels (CPU and wall), 20,000 facets x 400 receivers x
   2 antennas, ``fastmath`` off and on, trigonometry in float64 and float32 (four variants, each
   in its own process and cache folder; ``quick`` on the command line: the first and last only);
3. ``import numba`` in a fresh process, the first call with an empty cache (JIT compile) and the
   first call with a warm on-disk cache (``NUMBA_CACHE_DIR`` in a temporary folder);
4. the demo study: the calls of ``ground_fields`` made by the surface prediction and their time,
   with numpy and with the numba kernels swapped in.

Measured on 2 Dec 2026 (2 cores shared with other work, load average 4 to 6, so wall times
wander; CPU time is the steadier figure), numba 0.68.1, llvmlite 0.50.0, numpy 2.4.6:

- install weight: wheels 3.7 MiB (numba) + 56.9 MiB (llvmlite); on disk 34.8 MiB + 172.2 MiB
  (1,629 files; ``libllvmlite.so`` alone 170 MiB), +24 % on the project's 874 MiB of packages;
- agreement with ``ground_fields`` 1.5e-7 to 5.2e-7 of the largest field in every case, except
  far receivers whose elevation lies within float32 rounding of a facet's horizon (one facet's
  field, 3.9e-4), which agree to 2.4e-7 once those horizons are moved 3e-5 off them;
- pairs/s (CPU): numpy 17 to 29 M (conductor), 9 to 14 M (lossy); numba serial 8 to 23 M and
  5 to 12 M: never clearly faster than the float32 numpy kernel, whose sines and cosines are
  SIMD; float32 trigonometry helps numba a little, fastmath changes nothing measurable; the
  parallel kernels gain no wall time on this loaded machine;
- ``import numba`` 0.5 to 1.2 s in a fresh process (numpy 0.2 to 0.4 s); first call with an
  empty cache 5.6 to 27 s (JIT compile, per kernel); first call with a warm on-disk cache 0.8 to
  2.0 s (the first kernel of a process; later kernels 0.02 to 0.2 s);
- demo study: 14 calls of ``ground_fields``, 2.3 to 2.8 s CPU with numpy, 2.0 to 3.0 s with
  the serial kernel (from 0.19 s lost to 0.76 s saved, same process, six runs), while numba
  costs 1.1 to 2.8 s per process (import beyond numpy's, and the first call from the cache;
  a batch pays it in every worker) and 5.6 to 27 s after each install or change
  (compile); the parallel kernels spent 3.6 to 4.4 s CPU and 5.4 to 8.8 s wall (the demo's
  calls have 6 to 160 receivers, chunked by their pair weights: many short parallel regions).

So numba does not pay for its weight here: keep the numpy kernel, and no numba dependency.

Never fails by timing. Without numba installed (the project does not depend on it) it prints one
line and stops. Run: ``python -m venv .venv-numba && .venv-numba/bin/pip install -e '.[test]'
numba && .venv-numba/bin/python benchmarks/bench_numba_kernel.py``.
"""

from __future__ import annotations

import importlib.util
import math
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from geo.optics.kernel import _GAMMA_TABLE_RAD, _PAIRS_PER_CHUNK, Facets, ground_fields  # noqa: E402
from geo.radio.reflection import reflection_coefficient_h  # noqa: E402

HAVE_NUMBA = importlib.util.find_spec("numba") is not None
#: fastmath of the kernels, set per process by the driver (the cache does not key on it).
FASTMATH = os.environ.get("MASTPLAN_BENCH_FASTMATH", "0") == "1"
#: Sines, cosines and arc sines in float32 (as ground_fields) instead of float64; set like FASTMATH.
TRIG32 = os.environ.get("MASTPLAN_BENCH_TRIG32", "0") == "1"
_trig = np.float32 if TRIG32 else np.float64
LAM = 0.895
EPS, SIGMA_S_M = 15.0, 0.005  # lossy ground of the brief: eps_r 15, sigma 0.005 S/m
PARALLEL = (None, "receivers", "facets")

if HAVE_NUMBA:
    import numba

    @numba.njit(cache=True, fastmath=FASTMATH)
    def _sin_over(x):
        ax = _trig(abs(x) + 1e-30)  # as geo.optics.kernel._sin_over: sin(x) / x, 1 at 0, no test for 0
        return math.sin(ax) / ax

    @numba.njit(cache=True, fastmath=FASTMATH)
    def _receiver_sum(j, cols, weights, first, lo, hi, centres, normals, a_k, b_k, rx, far, cycles_per_m, horizon,
                      sx, sy, ns1, h1, ne, s1a, s1b, graze_src, amp_re, amp_im, lit_any,
                      table_re, table_im, lossy, out_re, out_im):  # fmt: skip
        """Field sums of receiver ``cols[j]`` over facets ``lo:hi`` (``weights`` row 0 is facet ``first``)."""
        r = cols[j]
        n_src = sx.shape[0]
        weighted = weights.shape[0] > 0
        use_horizon = horizon.shape[0] > 0
        last = table_re.shape[0] - 1
        per_step = last / (0.5 * math.pi)
        acc_re = np.zeros(n_src)
        acc_im = np.zeros(n_src)
        rx0, rx1, rx2 = rx[r, 0], rx[r, 1], rx[r, 2]
        for p in range(lo, hi):
            if not lit_any[p]:
                continue
            w = weights[p - first, j] if weighted else 1.0
            if w == 0.0:
                continue
            if far:
                x, y, z = rx0, rx1, rx2
                turns = -(centres[p, 0] * x + centres[p, 1] * y + centres[p, 2] * z) * cycles_per_m
                inv_r2 = 1.0
            else:
                dx, dy, dz = rx0 - centres[p, 0], rx1 - centres[p, 1], rx2 - centres[p, 2]
                r2 = math.sqrt(dx * dx + dy * dy + dz * dz)
                turns = r2 * cycles_per_m
                inv_r2 = 1.0 / r2
                x, y, z = dx * inv_r2, dy * inv_r2, dz * inv_r2
            h2 = math.sqrt(x * x + y * y)
            nr2 = normals[p, 0] * x + normals[p, 1] * y + normals[p, 2] * z
            if nr2 <= 0.0:  # a ground facet radiates only upward
                continue
            if use_horizon and not z > horizon[p] * h2:
                continue
            phase = 2.0 * math.pi * (turns - math.floor(turns + 0.5))
            wave_re = math.cos(_trig(phase)) * inv_r2 * w
            wave_im = -math.sin(_trig(phase)) * inv_r2 * w
            ne_rx = normals[p, 1] * x - normals[p, 0] * y  # h2 (n . e_r)
            ra = a_k[p, 0] * x + a_k[p, 1] * y + a_k[p, 2] * z
            rb = b_k[p, 0] * x + b_k[p, 1] * y + b_k[p, 2] * z
            graze_rx = math.asin(_trig(min(nr2, 1.0))) if lossy else 0.0
            for s in range(n_src):
                ar, ai = amp_re[s, p], amp_im[s, p]
                if ar == 0.0 and ai == 0.0:
                    continue
                cross = sx[s, p] * y - sy[s, p] * x
                dot = sx[s, p] * x + sy[s, p] * y
                h1s = h1[s, p]
                c = (dot * (nr2 - ns1[s, p]) - cross * (h1s * ne[s, p] + ne_rx)) / (h1s * h2)
                c *= _sin_over(s1a[s, p] - ra) * _sin_over(s1b[s, p] - rb)
                if lossy:
                    t = 0.5 * (graze_src[s, p] + graze_rx) * per_step
                    i = min(int(t), last - 1)
                    f = t - i
                    g_re = table_re[i] + f * (table_re[i + 1] - table_re[i])
                    g_im = table_im[i] + f * (table_im[i + 1] - table_im[i])
                    m_re = c * (g_re * wave_re - g_im * wave_im)
                    m_im = c * (g_re * wave_im + g_im * wave_re)
                else:
                    m_re = c * wave_re
                    m_im = c * wave_im
                acc_re[s] += ar * m_re - ai * m_im
                acc_im[s] += ar * m_im + ai * m_re
        for s in range(n_src):
            out_re[s, r] += acc_re[s]
            out_im[s, r] += acc_im[s]

    @numba.njit(cache=True, fastmath=FASTMATH)
    def _sums_serial(cols, weights, lo, hi, centres, normals, a_k, b_k, rx, far, cycles_per_m, horizon,
                     sx, sy, ns1, h1, ne, s1a, s1b, graze_src, amp_re, amp_im, lit_any,
                     table_re, table_im, lossy, out_re, out_im):  # fmt: skip
        for j in range(cols.shape[0]):
            _receiver_sum(j, cols, weights, lo, lo, hi, centres, normals, a_k, b_k, rx, far, cycles_per_m, horizon,
                          sx, sy, ns1, h1, ne, s1a, s1b, graze_src, amp_re, amp_im, lit_any,
                          table_re, table_im, lossy, out_re, out_im)  # fmt: skip

    @numba.njit(cache=True, fastmath=FASTMATH, parallel=True)
    def _sums_parallel_receivers(cols, weights, lo, hi, centres, normals, a_k, b_k, rx, far, cycles_per_m, horizon,
                       sx, sy, ns1, h1, ne, s1a, s1b, graze_src, amp_re, amp_im, lit_any,
                       table_re, table_im, lossy, out_re, out_im):  # fmt: skip
        for j in numba.prange(cols.shape[0]):
            _receiver_sum(j, cols, weights, lo, lo, hi, centres, normals, a_k, b_k, rx, far, cycles_per_m, horizon,
                          sx, sy, ns1, h1, ne, s1a, s1b, graze_src, amp_re, amp_im, lit_any,
                          table_re, table_im, lossy, out_re, out_im)  # fmt: skip

    @numba.njit(cache=True, fastmath=FASTMATH, parallel=True)
    def _sums_parallel_facets(cols, weights, lo, hi, centres, normals, a_k, b_k, rx, far, cycles_per_m, horizon,
                              sx, sy, ns1, h1, ne, s1a, s1b, graze_src, amp_re, amp_im, lit_any,
                              table_re, table_im, lossy, part_re, part_im):  # fmt: skip
        # One block of facets per thread, each adding into its own sums ``part[t]`` (summed by the
        # caller after the last chunk). No allocation and no array expression here: with
        # parallel=True each would be one more parallel region (a first version lost 5x by it).
        blocks = part_re.shape[0]
        size = (hi - lo + blocks - 1) // blocks
        for t in numba.prange(blocks):
            b_lo = lo + t * size
            b_hi = min(hi, b_lo + size)
            for j in range(cols.shape[0]):
                _receiver_sum(j, cols, weights, lo, b_lo, b_hi, centres, normals, a_k, b_k, rx, far, cycles_per_m,
                              horizon, sx, sy, ns1, h1, ne, s1a, s1b, graze_src, amp_re, amp_im, lit_any,
                              table_re, table_im, lossy, part_re[t], part_im[t])  # fmt: skip


def numba_ground_fields(
    sources_m,
    facets: Facets,
    receivers_m,
    wavelength_m: float,
    relative_permittivity: float | None = None,
    conductivity_s_m: float | None = None,
    source_visible=None,
    horizon_tan=None,
    pair_weight=None,
    far: bool = False,
    parallel: str | None = None,
) -> np.ndarray:
    """``geo.optics.kernel.ground_fields`` with the pair loop compiled by numba (same arguments, same result).

    ``parallel``: None (serial), "receivers" (prange over receivers) or "facets" (prange over one
    block of facets per thread).
    """
    if facets.two_sided:
        raise ValueError("ground_fields takes one-sided ground facets")
    k = 2.0 * math.pi / wavelength_m
    src = np.atleast_2d(np.asarray(sources_m, dtype=float))
    rx = np.ascontiguousarray(np.atleast_2d(np.asarray(receivers_m, dtype=float)))
    n_rx = rx.shape[0]
    if len(facets) == 0:
        return np.zeros((src.shape[0], n_rx), dtype=complex)
    lossy = relative_permittivity is not None
    if lossy:
        table = -reflection_coefficient_h(_GAMMA_TABLE_RAD, relative_permittivity, conductivity_s_m, wavelength_m)
    else:
        table = np.zeros(2, dtype=complex)
    n = np.ascontiguousarray(facets.normals)
    weight = facets.areas_m2 * (1.0 if facets.weights is None else facets.weights)
    # Source side, per source and facet: as in ground_fields.
    d1 = facets.centres_m[None, :, :] - src[:, None, :]
    r1 = np.linalg.norm(d1, axis=2)
    s1 = d1 / r1[..., None]
    ns1 = np.einsum("pj,spj->sp", n, s1)
    h1 = np.hypot(s1[..., 0], s1[..., 1])
    ne = (n[None, :, 1] * s1[..., 0] - n[None, :, 0] * s1[..., 1]) / h1
    lit = ns1 < 0.0
    if source_visible is not None:
        lit &= np.asarray(source_visible, dtype=bool)
    amp = np.where(lit, weight[None, :] * np.exp(-1j * k * r1) / r1, 0.0)
    s1a = 0.5 * k * np.einsum("spj,pj->sp", s1, facets.edge_a_m)
    s1b = 0.5 * k * np.einsum("spj,pj->sp", s1, facets.edge_b_m)
    graze_src = np.arcsin(np.clip(-ns1, 0.0, 1.0))
    c = np.ascontiguousarray(facets.centres_m, dtype=float)
    a_k = np.ascontiguousarray(0.5 * k * facets.edge_a_m)
    b_k = np.ascontiguousarray(0.5 * k * facets.edge_b_m)
    horizon = np.empty(0) if horizon_tan is None else np.ascontiguousarray(horizon_tan, dtype=float)
    lit_any = np.ascontiguousarray(np.any(amp != 0.0, axis=0))
    per_source = [
        np.ascontiguousarray(v) for v in (s1[..., 0], s1[..., 1], ns1, h1, ne, s1a, s1b, graze_src, amp.real, amp.imag)
    ]
    out_re = np.zeros((src.shape[0], n_rx))
    out_im = np.zeros((src.shape[0], n_rx))
    sums = {None: _sums_serial, "receivers": _sums_parallel_receivers, "facets": _sums_parallel_facets}[parallel]
    if parallel == "facets":  # sums per thread, added at the end
        out_re = np.zeros((numba.get_num_threads(), *out_re.shape))
        out_im = np.zeros(out_re.shape)

    tail = (c, n, a_k, b_k, rx, bool(far), 1.0 / wavelength_m, horizon, *per_source, lit_any)
    tail = (*tail, np.ascontiguousarray(table.real), np.ascontiguousarray(table.imag), lossy, out_re, out_im)
    if pair_weight is None:
        sums(np.arange(n_rx, dtype=np.int64), np.empty((0, 0)), 0, len(facets), *tail)
    else:
        chunk = max(1, _PAIRS_PER_CHUNK // max(n_rx, 1))  # the chunks of ground_fields
        for start in range(0, len(facets), chunk):
            sl = slice(start, start + chunk)
            if not np.any(lit_any[sl]):
                continue
            cols, pair = pair_weight(sl)
            if len(cols) == 0:
                continue
            cols = np.ascontiguousarray(cols, dtype=np.int64)
            pair = np.ascontiguousarray(pair, dtype=float)
            sums(cols, pair, start, min(start + chunk, len(facets)), *tail)
    if parallel == "facets":
        out_re, out_im = out_re.sum(axis=0), out_im.sum(axis=0)
    return -1j * k / (4.0 * math.pi) * (out_re + 1j * out_im)


# ---------------------------------------------------------------------------------------------
# Figures


def _bench_facets(n: int) -> Facets:
    spec = importlib.util.spec_from_file_location("bench_surface", Path(__file__).with_name("bench_surface.py"))
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module._facets(n)  # the facets of bench_surface.py


def _case(n_facets: int = 20_000, n_rx: int = 400):
    f = _bench_facets(n_facets)
    rx = np.column_stack([np.linspace(300, 18000, n_rx), np.full(n_rx, 120.0), np.linspace(15, 1000, n_rx)])
    e = np.radians(np.linspace(2.0, 4.0, n_rx))
    d = np.column_stack([np.cos(e), 0 * e, np.sin(e)])
    sources = np.array([[0.0, 0.0, 4.47], [0.0, 0.25, 8.95]])  # as bench_surface.py
    return f, rx, d, sources


def _timed(func, repeat: int = 2):
    """Best wall time of ``repeat`` calls, with the CPU time of that call (all threads)."""
    best = None
    for _ in range(repeat):
        t0, c0 = time.perf_counter(), time.process_time()
        out = func()
        wall, cpu = time.perf_counter() - t0, time.process_time() - c0
        if best is None or wall < best[1]:
            best = (out, wall, cpu)
    return best


def _rel(a, b) -> float:
    return float(np.max(np.abs(a - b)) / np.max(np.abs(b)))


def agreement() -> None:
    f, rx, d, sources = _case()
    rng = np.random.default_rng(7)
    visible = rng.random((2, len(f))) > 0.2
    horizon = np.tan(np.radians(rng.uniform(-1.0, 6.0, len(f))))

    def pair_weight(sl):  # receivers near each chunk's facets, with a taper: like the surface prediction's
        u = f.centres_m[sl, 0]
        cols = np.flatnonzero(np.abs(np.linspace(0, 1000, rx.shape[0]) - u.mean()) < 400.0)
        return cols, (0.5 + 0.5 * np.cos(rng.random((u.size, cols.size)))).astype(np.float32)

    # Far receivers share their elevation with every facet: a facet whose horizon lies within float32
    # rounding of a receiver's elevation is decided differently by the float32 numpy kernel and the
    # float64 numba one (one facet's whole field, ~4e-4 of the total here). The third case moves
    # those horizons 3e-5 (relative) up, out of the rounding, to show the rest agrees.
    tan_e = d[:, 2] / np.hypot(d[:, 0], d[:, 1])
    near = np.min(np.abs(horizon[:, None] - tan_e[None, :]), axis=1) < 1e-5 * np.abs(horizon)
    masks = {"source_visible": visible, "horizon_tan": horizon}
    apart = {"source_visible": visible, "horizon_tan": np.where(near, horizon * (1.0 + 3e-5), horizon)}
    worst = {}
    for far, points in ((False, rx), (True, d)):
        for consts in ((None, None), (EPS, SIGMA_S_M)):
            extras = [("no masks", {}), ("masks", masks)]
            if far:
                extras.append((f"masks, {np.count_nonzero(near)} horizons moved off the receivers'", apart))
            for label, extra in extras:
                ref = ground_fields(sources, f, points, LAM, *consts, far=far, **extra)
                case = max(
                    _rel(numba_ground_fields(sources, f, points, LAM, *consts, far=far, parallel=p, **extra), ref)
                    for p in PARALLEL
                )
                worst[extra is masks and far] = max(worst.get(extra is masks and far, 0.0), case)
                print(
                    f"  agreement {'far' if far else 'spherical':9s} {'lossy' if consts[0] else 'conductor':9s} "
                    f"{label}: max |numba - numpy| / max |numpy| = {case:.2e}"
                )
    sub = f.subset(np.arange(4000))
    drawn = {}  # the same random weights for the three kernels: one draw per chunk, kept

    def replay(sl):
        if sl.start not in drawn:
            drawn[sl.start] = pair_weight(sl)
        return drawn[sl.start]

    ref = ground_fields(sources, sub, rx, LAM, EPS, SIGMA_S_M, pair_weight=replay)
    case = max(
        _rel(numba_ground_fields(sources, sub, rx, LAM, EPS, SIGMA_S_M, pair_weight=replay, parallel=p), ref)
        for p in PARALLEL
    )
    worst[False] = max(worst[False], case)
    print(
        f"  agreement spherical lossy pair weights: {case:.2e}; worst of all cases {worst[False]:.2e} "
        f"(far with horizons within float32 rounding of a receiver's elevation: {worst[True]:.2e})"
    )


def speed() -> None:
    f, rx, d, sources = _case()
    pairs = len(f) * rx.shape[0] * len(sources)
    print(f"  {len(f):,} facets x {rx.shape[0]} receivers x {len(sources)} antennas = {pairs / 1e6:.0f} M pairs")
    for far, points in ((False, rx), (True, d)):
        for consts in ((None, None), (EPS, SIGMA_S_M)):
            label = f"{'far' if far else 'spherical'}, {'lossy' if consts[0] else 'conductor'}"
            line = []
            args = (sources, f, points, LAM, *consts)
            for name, run in (
                ("numpy", lambda a=args, far=far: ground_fields(*a, far=far)),
                ("serial", lambda a=args, far=far: numba_ground_fields(*a, far=far)),
                ("par. rx", lambda a=args, far=far: numba_ground_fields(*a, far=far, parallel="receivers")),
                ("par. facets", lambda a=args, far=far: numba_ground_fields(*a, far=far, parallel="facets")),
            ):
                _, wall, cpu = _timed(run)
                line.append(f"{name} {pairs / cpu / 1e6:5.1f} CPU / {pairs / wall / 1e6:5.1f} wall")
            print(f"  {label:20s} M pairs/s: " + "; ".join(line))


def first_calls() -> None:
    """First calls of this process (the cache folder's state is the caller's)."""
    f, rx, _, sources = _case(200, 20)
    for parallel in PARALLEL:
        t0 = time.perf_counter()
        numba_ground_fields(sources, f, rx, LAM, EPS, SIGMA_S_M, parallel=parallel)
        first = time.perf_counter() - t0
        t0 = time.perf_counter()
        numba_ground_fields(sources, f, rx, LAM, EPS, SIGMA_S_M, parallel=parallel)
        print(f"    first call {parallel or 'serial'}: {first:.3f} s (second call {time.perf_counter() - t0:.4f} s)")


def demo() -> None:
    import geo.optics.surface_prediction as sp
    import geo.study.site_study as study
    from geo.site.site_file import load_site

    spec = load_site(ROOT / "demo_airfield" / "site.toml")
    original = sp.ground_fields
    record = []

    def wrapped(kernel):
        def call(*args, **kwargs):
            t0, c0 = time.perf_counter(), time.process_time()
            out = kernel(*args, **kwargs)
            f, rx = args[1], np.atleast_2d(args[2])
            record.append((time.perf_counter() - t0, time.process_time() - c0, len(f), rx.shape[0], len(args[0])))
            return out

        return call

    kernels = (
        ("numpy", original),
        ("numba serial", numba_ground_fields),
        ("numba par. rx", lambda *a, **k: numba_ground_fields(*a, parallel="receivers", **k)),
        ("numba par. facets", lambda *a, **k: numba_ground_fields(*a, parallel="facets", **k)),
    )
    angles = {}
    try:
        for name, kernel in kernels:
            sp.ground_fields = wrapped(kernel)
            study.run_study(spec)  # warm (imports, caches, compilation)
            record.clear()
            result, wall, cpu = _timed(lambda: study.run_study(spec), repeat=1)
            angles[name] = result.surface.path_angle_deg
            calls_wall = sum(r[0] for r in record)
            calls_cpu = sum(r[1] for r in record)
            print(
                f"  demo, {name:17s}: {len(record)} calls of ground_fields, {calls_wall:.2f} s wall / "
                f"{calls_cpu:.2f} s CPU in them; study {wall:.2f} s wall / {cpu:.2f} s CPU; "
                f"surface path angle {result.surface.path_angle_deg:.5f} deg"
            )
            if name == "numpy":
                shapes = sorted({(r[2], r[3], r[4]) for r in record})
                print(f"    call shapes (facets, receivers, antennas): {shapes}")
    finally:
        sp.ground_fields = original
    spread = max(angles.values()) - min(angles.values())
    print(f"  surface path angle spread over the kernels: {spread:.2e} deg")


def _worker(part: str) -> None:
    if part == "speed":
        print(f"{_variant()}, numba {numba.__version__}, numpy {np.__version__}, load {os.getloadavg()}")
        speed()
        print(f"  threading layer {numba.threading_layer()}, {numba.config.NUMBA_NUM_THREADS} threads")
    elif part == "agreement":
        print(f"{_variant()}:")
        agreement()
    elif part == "first":
        first_calls()
    elif part == "demo":
        print(f"{_variant()}, load {os.getloadavg()}")
        demo()


def _variant(fastmath: bool = FASTMATH, trig32: bool = TRIG32) -> str:
    return f"fastmath={fastmath}, trig in {'float32' if trig32 else 'float64'}"


def _run(part: str, cache_dir: str, fastmath: bool, trig32: bool) -> None:
    env = dict(os.environ, NUMBA_CACHE_DIR=cache_dir)
    env.update(MASTPLAN_BENCH_FASTMATH="1" if fastmath else "0", MASTPLAN_BENCH_TRIG32="1" if trig32 else "0")
    env.setdefault("OMP_NUM_THREADS", "1")
    sys.stdout.flush()
    subprocess.run([sys.executable, __file__, "--worker", part], env=env, check=True)


def _import_seconds(module: str) -> float:
    code = f"import time; t = time.perf_counter(); import {module}; print(time.perf_counter() - t)"
    times = [
        float(subprocess.run([sys.executable, "-c", code], capture_output=True, text=True).stdout) for _ in range(3)
    ]
    return min(times)


def main() -> None:
    if not HAVE_NUMBA:
        print("bench_numba_kernel: numba is not installed (the project does not depend on it); skipped.")
        return
    import llvmlite
    import numba

    print(f"numba {numba.__version__}, llvmlite {llvmlite.__version__}, numpy {np.__version__}")
    numpy_s, numba_s = _import_seconds("numpy"), _import_seconds("numba")
    print(f"import in a fresh process (best of 3): numpy {numpy_s:.3f} s, numba {numba_s:.3f} s (numpy included)")
    parts = sys.argv[1:] or ["first", "agreement", "speed", "demo"]
    variants = ((False, False), (True, False), (False, True), (True, True))
    if "quick" in parts:  # the first and the last variant only
        variants = variants[::3]
    for fastmath, trig32 in variants:
        with tempfile.TemporaryDirectory() as cache:  # a cache per variant: numba's does not key on globals
            if "first" in parts:
                print(f"{_variant(fastmath, trig32)}, empty cache (JIT compile), fresh process:")
                _run("first", cache, fastmath, trig32)
                print(f"{_variant(fastmath, trig32)}, warm on-disk cache, fresh process:")
                _run("first", cache, fastmath, trig32)
            for part in ("agreement", "speed", "demo"):
                if part in parts:
                    _run(part, cache, fastmath, trig32)


if __name__ == "__main__":
    if sys.argv[1:2] == ["--worker"]:
        _worker(sys.argv[2])
    else:
        main()
