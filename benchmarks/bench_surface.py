"""Speed of the surface prediction: receiver-facet pairs per second, and what it adds to the demo.

1. The one optics kernel (``geo.optics.kernel._pair_fields``) on 20,000 random ground facets and 400
   receivers (two antennas): through ``ground_fields`` (single precision), spherical and far
   (plane-wave) receivers, with one worker thread and with two; through ``scattered_field``
   (double precision, one antenna at a time). A pair is one facet and one receiver for one
   antenna. Then the time the demo study spends in ``ground_fields`` (every call it makes).
2. The demo study (demo_airfield) with and without the surface prediction, wall and CPU time
   of this process (the machine may be shared: CPU time is the steadier figure).

3. The surface prediction's CPU time by phase on the demo: the first evaluation (every approach
   sample and the far-field windows), the convergence checks and refinements, the sector without
   shadowing, and the DDM below the path.

Prints figures; never fails by timing. Requirements for reference: issue 11, the surface
prediction adds at most 3 s to the demo on a 2-core machine; issue 19, the demo's full run
(every output, converged) within 7 times the import floor (benchmarks/bench_run.py).
"""

from __future__ import annotations

import os
import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from geo.optics.kernel import Facets, _pair_fields, scattered_field  # noqa: E402

LAM = 0.895


def _facets(n: int) -> Facets:
    rng = np.random.default_rng(1)
    c = np.column_stack([rng.random(n) * 1000, rng.random(n) * 100 - 50, rng.random(n) * 2])
    a = np.column_stack([np.full(n, 3.0), np.zeros(n), rng.normal(0, 0.1, n)])
    b = np.column_stack([np.zeros(n), np.full(n, 3.0), rng.normal(0, 0.1, n)])
    return Facets(c, a, b, False, rng.random(n))


def _timed(func):
    t0, c0 = time.perf_counter(), time.process_time()
    out = func()
    return out, time.perf_counter() - t0, time.process_time() - c0


def kernel_figures() -> None:
    n, r = 20_000, 400
    f = _facets(n)
    rx = np.column_stack([np.linspace(300, 18000, r), np.full(r, 120.0), np.linspace(15, 1000, r)])
    sources = np.array([[0.0, 0.0, 4.47], [0.0, 0.25, 8.95]])
    pairs = n * r * len(sources)
    e = np.radians(np.linspace(2.0, 4.0, r))
    d = np.column_stack([np.cos(e), 0 * e, np.sin(e)])
    for name, receivers, far in (("spherical", rx, False), ("far", d, True)):
        for threads in (1, 2):
            options = dict(far=far, threads=threads)
            _, wall, cpu = _timed(lambda q=receivers, o=options: _pair_fields(sources, f, q, LAM, **o))
            print(
                f"ground_fields, {name + ',':10} {threads} thread{'s' if threads > 1 else ' '}: "
                f"{pairs / cpu / 1e6:.1f} M pairs/s (CPU), {pairs / wall / 1e6:.1f} (wall)"
            )
    small = f.subset(np.arange(4000))
    _, wall, cpu = _timed(lambda: [scattered_field(s, small, rx, LAM) for s in sources])
    pairs = 4000 * r * len(sources)
    print(f"scattered_field, double:   {pairs / cpu / 1e6:.1f} M pairs/s (CPU), {pairs / wall / 1e6:.1f} (wall)")


def demo_kernel_figures() -> None:
    """Time spent in ``ground_fields`` during the demo study (every call the surface prediction makes)."""
    import geo.optics.surface_prediction as surface_prediction
    import geo.study.site_study as study
    from geo.site.site_file import load_site

    spec = load_site(ROOT / "demo_airfield" / "site.toml")
    study.run_study(spec)  # warm caches (transformers, imports)
    inner = surface_prediction.ground_fields
    spent = {"calls": 0, "pairs": 0, "wall": 0.0, "cpu": 0.0}

    def timed(sources, facets, receivers, *args, **kwargs):
        out, wall, cpu = _timed(lambda: inner(sources, facets, receivers, *args, **kwargs))
        spent["calls"] += 1
        spent["pairs"] += len(np.atleast_2d(sources)) * len(facets) * len(np.atleast_2d(receivers))
        spent["wall"] += wall
        spent["cpu"] += cpu
        return out

    surface_prediction.ground_fields = timed
    try:
        study.run_study(spec)
    finally:
        surface_prediction.ground_fields = inner
    print(
        f"demo study, ground_fields: {spent['calls']} calls, {spent['wall']:.2f} s wall / {spent['cpu']:.2f} s CPU "
        f"({spent['pairs'] / 1e6:.0f} M pairs before pair weights and shadowing)"
    )


def demo_figures() -> None:
    from dataclasses import replace

    import geo.study.site_study as study
    from geo.site.site_file import load_site

    spec = load_site(ROOT / "demo_airfield" / "site.toml")
    study.run_study(spec)  # warm caches (transformers, imports)
    result, wall, cpu = _timed(lambda: study.run_study(spec))
    without = replace(spec, prediction=replace(spec.prediction, surface=False))
    _, wall0, cpu0 = _timed(lambda: study.run_study(without))
    sp = result.surface
    print(
        f"demo study: {wall:.2f} s wall / {cpu:.2f} s CPU with the surface prediction, "
        f"{wall0:.2f} / {cpu0:.2f} without: adds {wall - wall0:.2f} s wall, {cpu - cpu0:.2f} s CPU "
        f"({sp.facets} facets; convergence check included)"
    )
    print(f"  surface path angle {sp.path_angle_deg:.4f} deg, converged: {sp.converged.get('converged')}")


def demo_phase_figures() -> None:
    """CPU time of each phase of the demo's surface prediction (this process; threads included)."""
    import geo.optics.surface_prediction as sp
    import geo.study.site_study as study
    import geo.study.surface as surface_study
    from geo.site.site_file import load_site

    spec = load_site(ROOT / "demo_airfield" / "site.toml")
    study.run_study(spec)  # warm caches
    phases: dict[str, float] = {}
    evaluate, far_ddm = sp._evaluate, surface_study.surface_far_ddm
    calls = {"n": 0}

    def timed_evaluate(job, index, refine=1.0, zone_factor=sp.ZONE_FACTOR, visibility=None):
        t = time.process_time()
        out = evaluate(job, index, refine, zone_factor, visibility)
        name = "first evaluation (every receiver)" if calls["n"] == 0 else "checks and refinements"
        if visibility is False:
            name = "sector without shadowing"
        calls["n"] += 1
        phases[name] = phases.get(name, 0.0) + time.process_time() - t
        return out

    def timed_far(*args, **kwargs):
        t = time.process_time()
        out = far_ddm(*args, **kwargs)
        phases["DDM below the path"] = time.process_time() - t
        return out

    sp._evaluate, surface_study.surface_far_ddm = timed_evaluate, timed_far
    try:
        t = time.process_time()
        result = study.run_study(spec)
        total = time.process_time() - t
    finally:
        sp._evaluate, surface_study.surface_far_ddm = evaluate, far_ddm
    conv = result.surface.converged
    print(f"demo study CPU {total:.2f} s; surface prediction by phase (CPU):")
    for name, value in phases.items():
        print(f"  {name}: {value:.2f} s")
    print(f"  converged {conv['converged']}, finest sampling 1/{conv['refine']:g} of the DEM cell")


if __name__ == "__main__":
    os.environ.setdefault("OMP_NUM_THREADS", "1")
    kernel_figures()
    demo_kernel_figures()
    demo_figures()
    demo_phase_figures()
