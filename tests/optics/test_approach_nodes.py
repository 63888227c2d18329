"""The surface integral taken at nodes along the approach and read between them.

Sources of the check values: a direct sum of point scatterers' spherical waves written here (the
field the nodes must reproduce), the remainder of cubic Lagrange interpolation (Abramowitz and
Stegun 25.2.3: at most (beta h)^4 / 24 * 9 / 16 of the amplitude for a signal turning at beta),
and, on the demo, the same prediction with the integral taken at every sample (no nodes).
"""

import math

import numpy as np
import pytest
from jacksboro import jacksboro_sheet, site_text

from geo.optics import surface_prediction as sp
from geo.optics.approach_nodes import STEP_PHASE_RAD, approach_nodes, facet_points
from geo.site.site_file import load_site
from geo.study import site_study

LAM = 0.895  # glide path wavelength at 335 MHz [m]


def _approach(step_m=20.0):
    """Receivers on a 3 deg path from 10 NM to the threshold, 300 m past the mast, 120 m beside it. [m]"""
    along = np.arange(-18_520.0, 0.0 + step_m, step_m)
    u = 300.0 - along
    return along, np.column_stack([u, np.full(along.size, 120.0), 15.0 - along * math.tan(math.radians(3.0))])


def _point_field(receivers, points, amplitudes):
    """Sum of ``a exp(-j k r) / r`` over the points: written here, independent of the kernel."""
    k = 2.0 * math.pi / LAM
    r = np.linalg.norm(receivers[:, None, :] - points[None, :, :], axis=2)
    return (amplitudes[None, :] * np.exp(-1j * k * r) / r).sum(axis=1)


def test_a_field_of_ground_scatterers_is_read_between_the_nodes():
    # 400 scatterers over 1,200 m x 220 m of ground in front of the mast, random amplitudes: the field
    # at every 20 m sample from the nodes' values alone, against the direct sum at every sample.
    rng = np.random.default_rng(5)
    points = np.column_stack([rng.uniform(0, 1200, 400), rng.uniform(-60, 160, 400), rng.normal(0, 0.5, 400)])
    amplitudes = rng.normal(size=400) + 1j * rng.normal(size=400)
    along, rx = _approach()
    corners = np.array([[u, w, 0.0] for u in (0.0, 600.0, 1200.0) for w in (-60.0, 50.0, 160.0)])
    plan = approach_nodes(along, rx, np.vstack([corners, points]), LAM)
    exact = _point_field(rx, points, amplitudes)
    read = plan.spread(exact[plan.nodes][None, :])[0]
    # Relative to the local amplitude (a window of 21 samples), beside the cubic's bound at beta h = 0.25:
    # 9.2e-5 for one wave; measured 2.4e-4 here (the sum's amplitude changes along the path too), and
    # 0.053 with nodes four times farther apart (beta h = 1).
    scale = np.array([np.abs(exact[max(0, i - 10) : i + 11]).max() for i in range(exact.size)])
    bound = STEP_PHASE_RAD**4 / 24.0 * 9.0 / 16.0
    assert np.max(np.abs(read - exact) / scale) < 4.0 * bound
    # far out the nodes are far apart, near the threshold every sample is one
    spacing = np.diff(along[plan.nodes])
    assert spacing[0] >= 200.0 and spacing[-1] == pytest.approx(20.0)
    assert plan.nodes.size < along.size / 3


def test_nodes_fall_back_to_every_sample_where_the_field_turns_fast():
    # Scatterers behind the receivers as well as ahead: the rates span -1..1, every sample a node.
    along, rx = _approach()
    points = np.array([[0.0, 0.0, 0.0], [30_000.0, 0.0, 0.0]])
    plan = approach_nodes(along, rx, points, LAM)
    assert plan.nodes.size == along.size


def _both_ways(site_path):
    """The first evaluation of a study's surface path (no convergence check): DDM with the integral at the
    nodes and at every sample, and the nodes' count (computed while the study's DEM is open)."""
    captured = {}
    refined = sp._refined

    def capture(job, along_dense, check, zone_factor):
        index = np.arange(job.n_path)
        from_nodes, _, _, grid = sp._evaluate(job, index)
        options = dict(method=job.method, visibility=job.visibility, roughness_m=job.roughness_m)
        c, s = sp.surface_fields(job.model, grid, job.receivers[index], rx_index=index, **options)
        z = np.where(np.isfinite(grid.z_m), grid.z_m, 0.0)
        points = facet_points(grid.u_m, grid.w_m, z)
        plan = approach_nodes(job.along_m, job.receivers[index], points, job.model.wavelength_m)
        captured.update(nodes=from_nodes, every=sp.ddm(c, s, job.scale), count=plan.nodes.size, n=job.n_path)
        return refined(job, along_dense, False, zone_factor)

    sp._refined = capture
    try:
        site_study.run_study(load_site(site_path))
    finally:
        sp._refined = refined
    return captured


def _rough_real_site(folder):
    """Matplotlib's real sample DEM, relief x 0.1 (about 3 m RMS in the zone: the roughest of tests/jacksboro.py)."""
    sheet = jacksboro_sheet()
    original, _, lon = sheet.meridian_pair(folder, 0.1, 196, 60)
    threshold, end = sheet.runway(sheet.scaled(0.1), 36.60, lon, 180.0)
    path = folder / "rough.toml"
    path.write_text(site_text(original, "Jacksboro meridian runway", threshold, end, side="right"))
    return path


@pytest.mark.parametrize("where", ["demo", "real DEM, rough"])
def test_the_path_from_nodes_equals_the_integral_at_every_sample(where, tmp_path):
    # The DDM along the approach, integral at the nodes only against the integral at every one of
    # the 927 samples: within 1e-4 DDM (a tenth of the convergence check's 0.001), on the demo and on
    # real rough ground.
    got = _both_ways("demo_airfield/site.toml" if where == "demo" else _rough_real_site(tmp_path))
    change = float(np.max(np.abs(got["nodes"] - got["every"])))
    print(f"{where}: {got['count']} nodes of {got['n']}, largest DDM change {change:.2e}")
    assert got["count"] < got["n"] / 2  # what the nodes save: most of the samples
    assert change < 1e-4
