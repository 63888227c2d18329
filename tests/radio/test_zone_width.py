"""The zone's largest half-width and the row merge against independent computations.

References: GEOS (shapely) cutting the zone by every line, as the width was measured before; a
per-row sort of the intervals in plain Python for the merge.
"""

import numpy as np
import pytest
import shapely

from geo.radio.arrays import antenna_heights_m
from geo.radio.zones import _max_half_width, _merge, _row_intervals, antenna_zone, path_receivers, reflection_zones
from geo.site.channels import wavelength_m


def _geos_every_line(polygon, lines=120):
    # Reference: GEOS cuts the polygon by each of the lines u = const, half the span of each cut.
    u0, w0, u1, w1 = polygon.bounds
    u = np.linspace(u0, u1, lines)[1:-1]
    segments = np.stack(
        [np.column_stack([u, np.full(u.size, w0 - 1.0)]), np.column_stack([u, np.full(u.size, w1 + 1.0)])], axis=1
    )
    bounds = shapely.bounds(shapely.intersection(shapely.linestrings(segments), polygon))
    spans = (bounds[:, 3] - bounds[:, 1]) / 2.0
    return float(np.nanmax(spans)) if np.isfinite(spans).any() else 0.0


def _shapes():
    rng = np.random.default_rng(3)
    yield shapely.box(0.0, -20.0, 500.0, 30.0)  # every line as wide: a plateau, every line cut
    yield shapely.box(0.0, 0.0, 100.0, 100.0).difference(shapely.box(20.0, 10.0, 60.0, 90.0))  # a hole
    yield shapely.MultiPolygon([shapely.box(0, 0, 10, 5), shapely.box(20, -30, 40, 30)])  # parts apart
    yield shapely.Polygon([(0, 0), (50, -10), (50, 10), (100, 40), (100, -60), (150, 0)]).buffer(0)  # vertical edges
    for _ in range(6):  # random star-shaped outlines
        angle = np.sort(rng.uniform(0, 2 * np.pi, 60))
        radius = rng.uniform(50.0, 400.0, 60)
        yield shapely.Polygon(np.column_stack([radius * np.cos(angle), radius * np.sin(angle)]))
    lam = wavelength_m(332.0)
    heights = antenna_heights_m("null-reference", lam, 3.0)
    for zone in reflection_zones(("lower", "upper"), heights, [0.0, 0.3], 300.0, 120.0, 3.0, lam, 0.004, -0.002):
        yield zone.shape.polygon


@pytest.mark.parametrize("polygon", list(_shapes()))
def test_largest_half_width_is_geos_cutting_every_line(polygon):
    assert _max_half_width(polygon) == _geos_every_line(polygon)  # the same figure, bit for bit


def test_merge_against_a_plain_sort_per_row():
    # Reference: per row, the finite intervals sorted by start and merged while they overlap.
    lam = wavelength_m(332.0)
    h = antenna_heights_m("null-reference", lam, 3.0)[0]
    rx = path_receivers(300.0, 120.0, 3.0, 200)
    from geo.radio.fresnel import exact_ellipses

    centres, q = exact_ellipses([0.0, 0.0, h], rx, lam)
    rows = np.linspace(-60.0, 60.0, 97)
    lo, hi = _row_intervals(centres, q, rows)
    row, start, end = _merge(lo, hi)
    expected = []
    for k in range(rows.size):
        pairs = sorted((a, b) for a, b in zip(lo[k], hi[k]) if np.isfinite(a))
        merged = []
        for a, b in pairs:
            if merged and a <= merged[-1][1]:
                merged[-1][1] = max(merged[-1][1], b)
            else:
                merged.append([a, b])
        expected += [(k, a, b) for a, b in merged]
    assert row.tolist() == [e[0] for e in expected]
    np.testing.assert_allclose(start, [e[1] for e in expected], rtol=0, atol=1e-9)
    np.testing.assert_allclose(end, [e[2] for e in expected], rtol=0, atol=1e-9)
    # Every interval's ends lie on its ellipse: (p - c)^T Q (p - c) = 1 (the ellipse's own equation).
    k, j = np.nonzero(np.isfinite(lo))
    for ends in (lo, hi):
        d = np.column_stack([ends[k, j], rows[k]]) - centres[j]
        np.testing.assert_allclose(np.einsum("ni,nij,nj->n", d, q[j], d), 1.0, rtol=1e-6)


def test_antenna_zone_width_is_geos_cutting_every_line():
    lam = wavelength_m(329.15)
    zone = antenna_zone(4.0, 0.2, path_receivers(350.0, 150.0, 2.75, 400), lam, blocks=3)
    assert zone.max_half_width_m == _geos_every_line(zone.polygon)
