"""Derived areas: speed, the plate and reciprocity figures, and the demo's flat-ground areas.

1. A large tail fin through the plate builder against the closed-form plate (Knott, Shaeffer and
   Tuley, Radar Cross Section, ch. 5): the largest dB error over the main lobe.
2. Reciprocity of the four ground paths (swap antenna and receiver): the relative error.
3. 2,000 object positions x 2 headings x 300 receivers on the designed path: the demo site on flat
   ground (its DEM left out), one large aircraft tail, the grid sized to 2,000 positions.
   Requirement for reference: within 60 s on 2 cores.
4. The demo's derived areas on flat ground, default shares, the generic objects, a grid wide
   enough to hold most of them, with isotropic elements and with the generic element pattern
   (``--no-demo`` skips it; it takes minutes).
5. ``--closed``: the demo as ``mastplan areas`` runs it (its DEM's plane, default ``[areas]``, the
   generic objects), the grid growing until every area closes: the time on this machine's cores
   (the issue's goal: 30 s on 2 cores), the estimate printed before, positions, each area and its
   outline, and where the grid stopped. ``--codes`` takes the design aircraft A-F and the three
   vehicles (``[[object]] code``) instead; ``--grid=20`` another spacing.

Prints figures; never fails by timing.
"""

from __future__ import annotations

import dataclasses
import math
import os
import sys
import time
from pathlib import Path

import numpy as np

from geo.optics.areas import derive_areas
from geo.optics.kernel import scattered_field
from geo.optics.objects import GENERIC_OBJECTS, object_facets
from geo.optics.scatter_paths import four_path_field
from geo.site.site_file import AreaSpec, ObjectSpec, load_site
from geo.study.site_study import run_study

SITE = Path(__file__).resolve().parents[1] / "demo_airfield" / "site.toml"
LAM = 0.9


def plate_figures() -> None:
    fin = ObjectSpec("plate", 11.0, 12.0, 0.0, 0.0)  # a rectangle (on a base it would be a tapered fin)
    k = 2.0 * math.pi / LAM
    sigma0 = 4.0 * math.pi * (12.0 * 11.0) ** 2 / LAM**2
    first_null = math.asin(math.pi / (k * 12.0))
    for range_m in (1e6, 40.0):
        facets, groups = object_facets(fin, "along", np.zeros((1, 3)), np.array([range_m]), LAM)
        worst = 0.0
        for phi in np.linspace(0.0, 0.95 * first_null, 39):
            x = k * 12.0 * math.sin(phi)
            closed = sigma0 * (math.sin(x) / x if x else 1.0) ** 2 * math.cos(phi) ** 2
            point = np.array([0.0, 0.0, 5.5]) + 1e6 * np.array([math.sin(phi), math.cos(phi), 0.0])
            e = scattered_field(point, facets, point[None, :], LAM, groups=groups)[0, 0]
            got = 4.0 * math.pi * 1e24 * abs(e) ** 2
            worst = max(worst, abs(10 * math.log10(got / closed)))
        print(f"Plate RCS, {len(facets)} facet(s), main lobe: largest error {worst:.1e} dB (against the closed form)")
    tail = GENERIC_OBJECTS[0]
    feet = np.array([[150.0, -30.0, 0.0], [260.0, 40.0, 0.0]])
    facets, groups = object_facets(tail, "across", feet, np.array([60.0, 60.0]), LAM)
    centres = feet + [0.0, 0.0, 13.5]
    normal = np.array([-0.004, 0.01, 1.0]) / np.linalg.norm([-0.004, 0.01, 1.0])
    a, b = np.array([0.0, 0.0, 8.6]), np.array([1800.0, 120.0, 95.0])
    ab = four_path_field(a, facets, groups, centres, b[None, :], LAM, normal, 15.0, 0.005)
    ba = four_path_field(b, facets, groups, centres, a[None, :], LAM, normal, 15.0, 0.005)
    print(
        "Reciprocity of the four ground paths (lossy ground): relative error "
        f"{np.abs(ab - ba).max() / np.abs(ab).max():.1e}"
    )


def speed() -> None:
    spec = load_site(SITE)
    # 50 x 40 positions at 10 m: 0-490 m ahead of the mast, 170 m beyond it to 100 m past the centre line.
    grid = AreaSpec(grid_m=10.0, ahead_m=490.0, behind_m=0.0, away_m=170.0, beyond_m=100.0)
    spec = dataclasses.replace(spec, terrain=None, objects=(GENERIC_OBJECTS[0],), areas=grid)
    result = run_study(spec)
    start, cpu = time.perf_counter(), time.process_time()
    areas = derive_areas(result, receivers_count=300)
    took, cpu = time.perf_counter() - start, time.process_time() - cpu
    d = areas.disturbances[0]
    positions = d.ahead_m.size
    computed = int((~d.at_mast).sum())
    print(
        f"Derived areas, {positions:,} positions ({computed:,} computed, the rest against the mast) x "
        f"{len(d.share)} headings x {areas.receivers.points_m.shape[0]} receivers, {os.cpu_count()} cores: "
        f"{took:.1f} s wall, {cpu:.1f} s CPU ({positions * len(d.share) / took:,.0f} position-headings/s)"
    )


def demo_areas(element: str) -> None:
    spec = load_site(SITE)
    grid = AreaSpec(grid_m=20.0, ahead_m=1200.0, behind_m=400.0, away_m=400.0, beyond_m=300.0)
    prediction = dataclasses.replace(spec.prediction, element=element)
    spec = dataclasses.replace(spec, terrain=None, areas=grid, prediction=prediction)
    result = run_study(spec)
    start = time.perf_counter()
    areas = derive_areas(result)
    print(
        f"Demo on flat ground, generic objects, default shares, 20 m grid, {element} element "
        f"({time.perf_counter() - start:.0f} s):"
    )
    for a in areas.areas:
        r = a.reach_m()
        print(
            f"  {a.object_name}, {a.kind} (> {a.share:g} of the limit): {a.area_m2:,.0f} m2; reach "
            f"{r['ahead_m']:.0f} m ahead, {r['behind_m']:.0f} m behind, {r['toward_runway_m']:.0f} m toward the "
            f"runway, {r['away_m']:.0f} m away{' (grid edge)' if a.reaches_grid_edge else ''}"
        )
        if a.kind == "critical":
            # The part of the critical area within 300 m ahead, between the mast's far side and the runway.
            import shapely

            strip = a.polygon.intersection(shapely.box(-50.0, -50.0, 300.0, result.mast.offset_m))
            print(
                f"    of which {strip.area:,.0f} m2 in the strip 50 m behind to 300 m ahead, "
                "50 m beyond the mast to the centre line"
            )


def closed_demo(codes: bool, grid_m: float | None = None) -> None:
    from geo.optics.taxiways import object_for_code
    from geo.site.design_objects import DESIGN_OBJECTS

    spec = load_site(SITE)
    spec = dataclasses.replace(spec, prediction=dataclasses.replace(spec.prediction, surface=False))
    if codes:
        spec = dataclasses.replace(spec, objects=tuple(object_for_code(c) for c in DESIGN_OBJECTS))
    if grid_m is not None:
        spec = dataclasses.replace(spec, areas=dataclasses.replace(spec.areas, grid_m=grid_m))
    result = run_study(spec)
    plans = []
    start, cpu = time.perf_counter(), time.process_time()
    areas = derive_areas(result, plan=lambda n, s: plans.append((n, s, time.perf_counter() - start)))
    took, cpu = time.perf_counter() - start, time.process_time() - cpu
    positions = sum(d.ahead_m.size * len(d.share) for d in areas.disturbances)
    n, estimate, at = plans[0]
    print(
        f"Demo, default [areas], {'design objects A-F and vehicles' if codes else 'generic objects'}, grid growing "
        f"until closed: {took:.1f} s wall, {cpu:.1f} s CPU on {os.cpu_count()} cores; {positions:,} position-headings "
        f"computed; estimate {estimate:.0f} s for the first {n:,} (printed after {at:.1f} s)"
    )
    for d in areas.disturbances:
        e = d.extent_m
        print(
            f"  {d.obj.name}: grid {e['ahead']:.0f} m ahead, {e['behind']:.0f} behind, {e['toward_runway']:.0f} "
            f"toward the runway, {e['away']:.0f} away after {d.growth_rounds} block(s)"
        )
    for a in [*areas.areas, *areas.unions]:
        r = a.reach_m()
        print(
            f"  {a.object_name}, {a.kind}: {a.area_m2:,.0f} m2; outline {r['ahead_m']:.0f} m ahead, "
            f"{r['behind_m']:.0f} behind, {r['toward_runway_m']:.0f} toward the runway, {r['away_m']:.0f} away "
            f"({a.outline.area:,.0f} m2)" + (f"; open {', '.join(a.open_sides)}" if a.open_sides else "")
        )
    for w in areas.warnings:
        print(f"  warning: {w}")


def main() -> None:
    if "--closed" in sys.argv:
        grid = [float(a.split("=")[1]) for a in sys.argv if a.startswith("--grid=")]
        closed_demo("--codes" in sys.argv, grid[0] if grid else None)
        return
    plate_figures()
    speed()
    if "--no-demo" not in sys.argv:
        demo_areas("isotropic")  # point sources
        demo_areas("generic")  # the generic element (geo.radio.element: 25 dB front-to-back, from memory)


if __name__ == "__main__":
    main()
