"""Derived critical and sensitive areas on real ground: matplotlib's sample DEM (see tests/jacksboro.py).

A fictional runway along a meridian of the Jacksboro sheet (relief scaled by 0.05), approach from
the north, a null-reference array 120 m right of the centre line and 300 m past the threshold; the
study's plane fitted to the real ground falls toward the approach and tilts across toward the
runway. The same runway on the sheet mirrored east-west about its meridian, with the mast on the
left, is the mirror image (:meth:`Sheet.meridian_pair`). The object is a van (3 m high, 8 m long,
2.5 m wide; invented), across the runway's heading.

The real ground enters through the plane's slopes, the antenna heights solved on it and the RDH, and
the objects stand on the DEM with their ground paths reflected on its local surface
(geo.optics.object_ground). Checks against independent methods,
each named beside it: mirror symmetry, a wider grid, the full DDM with and without the object
(no linearisation), and reciprocity of the four-path field over the tilted plane.
"""

from __future__ import annotations

import dataclasses
import math
import time

import numpy as np
import pytest
from jacksboro import jacksboro_sheet, site_text, write_raster
from tests_support import NO_SURFACE

from geo.errors import MastplanError
from geo.optics.areas import array_model, bend_amplitude, derive_areas, object_fields, path_receivers
from geo.optics.object_ground import local_ground
from geo.optics.objects import heading_offsets_deg, object_facets
from geo.optics.scatter_paths import four_path_field
from geo.radio.prediction import ddm
from geo.radio.structure import segment_structure
from geo.radio.structure_limits import structure_segments
from geo.site.site_file import AreaSpec, ObjectSpec, load_site
from geo.study.site_study import run_study

SITE = (0.05, 280, 36.55)  # relief scale, sheet column of the runway's meridian, threshold latitude [deg]
#: Errors that real ground may legitimately end in (as tests/ground/test_real_terrain.py has them).
LEGITIMATE = ("too close to the", "off the DEM or on nodata", "falls more than")
VAN = ObjectSpec("van", 3.0, 8.0, 2.5, 0.0, ("across",), "invented")
#: The grid of the checks, and a wider one on the same lattice (40 m steps from the same corner).
GRID = AreaSpec(grid_m=40.0, ahead_m=800.0, behind_m=400.0, away_m=200.0, beyond_m=200.0)
WIDER = AreaSpec(grid_m=40.0, ahead_m=1000.0, behind_m=600.0, away_m=320.0, beyond_m=320.0)


#: The same object and grid as site-file tables, for the command line.
TABLES = """
[[object]]
name = "van"
height = 3.0
length = 8.0
width = 2.5
headings = ["across"]

[areas]
grid = 40
ahead = 800
behind = 400
away = 200
beyond = 200
"""


@pytest.fixture(scope="module")
def real(tmp_path_factory):
    folder = tmp_path_factory.mktemp("jacksboro_areas")
    sheet = jacksboro_sheet()
    scale, col, lat = SITE
    original, mirror, lon0 = sheet.meridian_pair(folder, scale, col, 60)
    threshold, end = sheet.runway(sheet.scaled(scale), lat, lon0, 180.0)
    out = {"lon0": lon0}
    start = time.perf_counter()
    for side, dem in (("right", original), ("left", mirror)):
        path = folder / f"site_{side}.toml"
        # The areas are derived over the plane: the surface prediction is off (it does not enter them).
        path.write_text(site_text(dem, "Jacksboro meridian runway", threshold, end, side=side, extra=NO_SURFACE))
        result = run_study(load_site(path))
        spec = dataclasses.replace(result.spec, objects=(VAN,), areas=GRID)
        out[side] = derive_areas(dataclasses.replace(result, spec=spec))
        out[side, "site"] = path
    print(f"\nareas on real ground: two studies and their areas in {time.perf_counter() - start:.1f} s")
    return out


def _by_kind(derived):
    return {a.kind: a for a in derived.areas}


def test_areas_compute_on_real_ground(real):
    import shapely

    derived = real["right"]
    plane = derived.study.terrain.plane
    # The real ground tilts the plane: the checks below are not those of flat ground.
    assert abs(plane.forward_gradient) > 1e-3 and abs(plane.lateral_gradient) > 1e-3
    d = derived.disturbances[0]
    share = d.worst_share
    assert np.isinf(share[d.at_mast]).all() and np.isfinite(share[~d.at_mast]).all()
    assert (share[~d.at_mast] >= 0.0).all()
    areas = _by_kind(derived)
    critical, sensitive = areas["critical"], areas["sensitive"]
    # By construction of the shares (0.2 < 0.5, common practice, no source): nested, both hold the mast.
    assert not critical.polygon.is_empty and sensitive.polygon.buffer(1e-6).covers(critical.polygon)
    assert sensitive.area_m2 > critical.area_m2
    assert critical.polygon.covers(shapely.Point(0.0, 0.0))
    # The grid is wide enough here: neither area reaches its edge (the precondition of the next test).
    assert not critical.reaches_grid_edge and not sensitive.reaches_grid_edge
    for a in (critical, sensitive):
        reach = a.reach_m()
        print(
            f"\nreal ground, van: {a.kind} {a.area_m2:,.0f} m2, {reach['ahead_m']:.0f} m ahead, "
            f"{reach['behind_m']:.0f} m behind, {reach['toward_runway_m']:.0f} m toward the runway, "
            f"{reach['away_m']:.0f} m away (plane slopes {plane.forward_gradient:+.4f} forward, "
            f"{plane.lateral_gradient:+.4f} across)"
        )


def test_a_wider_grid_adds_nothing_when_the_areas_stay_inside(real):
    # Independent run: the same study on a grid reaching 200 m further ahead and behind and 120 m
    # further each side, on the same lattice. The positions both grids hold get the same
    # disturbance, and the areas that did not reach the narrower grid's edge are the same: objects
    # farther out add no cell (the meaning of "reaches_grid_edge": False).
    derived = real["right"]
    spec = dataclasses.replace(derived.study.spec, areas=WIDER)
    wider = derive_areas(dataclasses.replace(derived.study, spec=spec))
    a, b = derived.disturbances[0], wider.disturbances[0]
    key_b = {(round(u), round(w)): i for i, (u, w) in enumerate(zip(b.ahead_m, b.toward_runway_m))}
    index = np.array([key_b[round(u), round(w)] for u, w in zip(a.ahead_m, a.toward_runway_m)])
    finite = np.isfinite(a.worst_share)
    assert np.array_equal(np.isfinite(b.worst_share[index]), finite)
    assert b.worst_share[index][finite] == pytest.approx(a.worst_share[finite], rel=1e-9, abs=1e-12)
    outside = np.ones(b.ahead_m.size, dtype=bool)
    outside[index] = False
    print(f"\nwider grid: largest share of the limit outside the narrower grid {b.worst_share[outside].max():.3f}")
    for kind, area in _by_kind(wider).items():
        assert area.polygon.equals(_by_kind(derived)[kind].polygon), kind
        assert not area.reaches_grid_edge


def test_mirror_site_gives_the_same_areas(real):
    # Mirror symmetry (independent construction): the left mast on the sheet mirrored about the
    # runway's meridian is the right mast on the sheet; in the mast frame (u ahead, w toward the
    # runway) every disturbance agrees, and the WGS 84 outlines mirror about the meridian (the runway
    # frame is a transverse Mercator on it, symmetric about it: Snyder 1987, ch. 8).
    from geo.outputs.areas_out import derived_areas_layer

    right, left = real["right"], real["left"]
    assert left.study.terrain.plane.lateral_gradient == pytest.approx(
        right.study.terrain.plane.lateral_gradient, abs=1e-9
    )
    a, b = right.disturbances[0].worst_share, left.disturbances[0].worst_share
    finite = np.isfinite(a)
    assert np.array_equal(np.isfinite(b), finite)
    assert b[finite] == pytest.approx(a[finite], rel=1e-6)
    for x, y in zip(right.areas, left.areas):
        assert x.polygon.equals(y.polygon)
    lon0 = real["lon0"]

    def outline(geometry):  # every exterior ring's corners, of a Polygon or a MultiPolygon
        polygons = geometry["coordinates"] if geometry["type"] == "MultiPolygon" else [geometry["coordinates"]]
        return np.vstack([np.array(p[0]) for p in polygons])

    for fa, fb in zip(derived_areas_layer(right)["features"], derived_areas_layer(left)["features"]):
        pa, pb = outline(fa["geometry"]), outline(fb["geometry"])
        pb[:, 0] = 2.0 * lon0 - pb[:, 0]
        gap = np.abs(pa[:, None, :] - pb[None, :, :]).max(axis=2)
        # GeoJSON keeps 7 decimals of a degree (1.1 cm in latitude), rounded on both outlines.
        assert gap.min(axis=1).max() < 2e-7 and gap.min(axis=0).max() < 2e-7


def test_bend_amplitude_bounds_the_full_ddm_change_over_the_real_plane(real):
    # Independent method: the full DDM with and without the van (geo.radio.prediction.ddm, no
    # linearisation) at 3,000 receivers on the designed path over the study's tilted plane, with the
    # van's field turned through 72 phases against the direct one (what the approach does as the path
    # lengths change), against the bend amplitude of geo.optics.areas. Exactly, DDM' - DDM =
    # 2 k Re[X e^(j phi) / (C + e^(j phi) dC)] with X = dS - (S / C) dC, so its largest magnitude over
    # the phases lies between 2 k |X| / (|C| + |dC|) and the bound 2 k |X| / (|C| - |dC|) (the
    # triangle inequality; the lower end within the 2.5 deg phase step, cos 2.5 deg > 0.999).
    derived = real["right"]
    result = derived.study
    model = array_model(result)
    segments = structure_segments(result.spec.category, result.rdh_m, result.spec.angle_deg)
    rc = path_receivers(result, model, segments, 3000)
    d = derived.disturbances[0]
    share = np.where(d.at_mast, -np.inf, d.worst_share)
    strong = int(np.argmax(share))  # the most disturbing position off the mast
    edge = int(np.argmin(np.abs(share - 0.5)))  # one at the critical share
    turns = np.exp(1j * np.linspace(0.0, 2.0 * math.pi, 72, endpoint=False))[:, None]
    base = ddm(rc.csb, rc.sbo, rc.sbo_scale)
    u, w = d.ahead_m, d.toward_runway_m
    ground = local_ground(result, model, (u.min() - 100.0, u.max() + 1000.0, w.min() - 100.0, w.max() + 100.0))
    first = np.full(rc.before_threshold_m.size, -1)
    for k in range(len(segments) - 1, -1, -1):
        first = np.where(segments[k].contains(rc.before_threshold_m), k, first)
    blocks = [np.flatnonzero(first == k) for k in range(len(segments))]
    offsets = heading_offsets_deg()
    picked = np.array([strong, edge])
    dcs, dss = object_fields(model, VAN, "across", u[picked], w[picked], rc.points_m, 1.0, offsets, ground, blocks)
    index = {strong: 0, edge: 1}
    for i in (strong, edge):
        dc, ds = object_fields(model, VAN, "across", d.ahead_m[i : i + 1], d.toward_runway_m[i : i + 1], rc.points_m)
        exact = np.abs(ddm(rc.csb + turns * dc[0], rc.sbo + turns * ds[0], rc.sbo_scale) - base).max(axis=0)
        bound = bend_amplitude(rc.csb, rc.sbo, dc[0], ds[0], rc.sbo_scale)
        c, dca = np.abs(rc.csb), np.abs(dc[0])
        assert (exact <= bound * (1.0 + 1e-9)).all()
        assert (exact >= 0.999 * bound * (c - dca) / (c + dca)).all()
        # The areas measure the change itself (the van's one phase) by the flight-inspection rule of
        # geo.radio.structure (checked against closed forms in tests/radio/test_structure.py), on
        # receivers 20 m apart, at the headings spread about "across", over the DEM's local surface
        # (geo.optics.object_ground), and judge the 95th percentile over the headings: here the exact
        # change at these 3,000 receivers (6 m apart) by that rule, heading by heading, gives the same
        # 95 % bends within 5 % (what the coarser sampling loses).
        measured = []
        for k in range(offsets.size):
            change = ddm(rc.csb + dcs[k, index[i]], rc.sbo + dss[k, index[i]], rc.sbo_scale) - base
            measured.append(
                [s.bend_95_ddm for s in segment_structure(segments, rc.before_threshold_m, change).segments]
            )
        assert d.segment_ddm["across"][i] == pytest.approx(np.percentile(measured, 95.0, axis=0), rel=0.05, abs=1e-5)


@pytest.mark.parametrize("ground", [(None, None), (15.0, 0.005)], ids=["conductor", "lossy"])
def test_four_path_field_is_reciprocal_over_the_real_plane(real, ground):
    # Reciprocity (Lorentz; Balanis, Advanced Engineering Electromagnetics, 1989, sec. 7.8, section
    # from memory): the field of the van at a receiver from an antenna equals the field at the
    # antenna from a source at the receiver, over the study's tilted plane, with every ground path and
    # its Fresnel coefficient: a perfect conductor, and lossy ground (relative permittivity 15,
    # 5 mS/m: medium ground, ITU-R P.527, from memory).
    result = real["right"].study
    model = array_model(result)
    feet = np.array([[150.0, 60.0], [-80.0, -30.0]])
    z = -(model.normal[0] * feet[:, 0] + model.normal[1] * feet[:, 1]) / model.normal[2]
    feet = np.column_stack([feet, z])
    receiver = np.array([2000.0, 120.0, 2000.0 * math.tan(math.radians(3.0)) + 15.0])
    for heading in VAN.headings:
        facets, groups = object_facets(VAN, heading, feet, np.full(2, 60.0), model.wavelength_m)
        centres = feet + np.array([0.0, 0.0, VAN.height_m / 2.0])
        for antenna in model.positions_m:
            forward = four_path_field(antenna, facets, groups, centres, receiver[None, :], model.wavelength_m,
                                      model.normal, *ground)[:, 0]  # fmt: skip
            backward = four_path_field(receiver, facets, groups, centres, antenna[None, :], model.wavelength_m,
                                       model.normal, *ground)[:, 0]  # fmt: skip
            assert np.abs(forward - backward).max() <= 1e-9 * np.abs(forward).max()


def test_areas_see_the_studys_array_and_path_over_the_real_plane(real):
    # Two builders of the array over the fitted plane must agree: geo.optics.areas.array_model (the areas)
    # and geo.study.array_setup.array_model (the image prediction, the below-path check and the surface). Their
    # fields at the areas' receivers agree to rounding, the receivers lie on the study's designed
    # path (a straight line: linear interpolation is exact), and the undisturbed DDM there is the
    # image prediction's on that path (within the linear interpolation between its samples, 1e-5).
    from geo.study.array_setup import array_model as study_array_model

    result = real["right"].study
    t = result.terrain
    shifts = [a.shift_toward_runway_m for a in result.antennas]
    gradients = (t.plane.forward_gradient, t.plane.lateral_gradient)
    study_model = study_array_model(result.spec, t.heights_m, shifts, result.feeds, result.wavelength_m, *gradients)
    rc = real["right"].receivers
    csb, sbo = study_model.fields(rc.points_m)
    assert np.abs(csb - rc.csb).max() <= 1e-12 * np.abs(rc.csb).max()
    assert np.abs(sbo - rc.sbo).max() <= 1e-12 * np.abs(rc.csb).max()
    p = result.prediction
    u = result.mast.setback_m - p.along_m
    order = np.argsort(u)
    assert rc.points_m[:, 2] == pytest.approx(np.interp(rc.points_m[:, 0], u[order], p.nominal_z_m[order]), abs=1e-6)
    expected = np.interp(rc.points_m[:, 0], u[order], p.ddm_nominal[order])
    assert np.abs(ddm(rc.csb, rc.sbo, rc.sbo_scale) - expected).max() <= 1e-5


def test_command_line_areas_on_real_ground(real, tmp_path):
    # The command on the real-DEM site with the same object and grid as site-file tables: exit code
    # 0, and its layer holds the areas derived above (the library's, an independent call), in WGS 84,
    # with the mast's antennas inside the critical outline (positions against the mast count in both).
    import json

    import shapely
    from click.testing import CliRunner

    from cli.main import main

    site = tmp_path / "site.toml"
    site.write_text(real["right", "site"].read_text(encoding="utf-8") + TABLES, encoding="utf-8")
    res = CliRunner().invoke(main, ["areas", str(site), "--out", str(tmp_path / "out"), "--no-plots", "-q"])
    assert res.exit_code == 0, res.output
    layer = json.loads((tmp_path / "out" / "layers" / "derived_areas.geojson").read_text(encoding="utf-8"))
    found = {f["properties"]["kind"]: f for f in layer["features"] if f["properties"]["object"] == "van"}
    expected = _by_kind(real["right"])
    assert set(found) == set(expected)
    for kind, feature in found.items():
        assert feature["properties"]["area_m2"] == pytest.approx(expected[kind].area_m2, rel=1e-6)
    outline = shapely.geometry.shape(found["critical"]["geometry"])
    for antenna in real["right"].study.antennas:
        assert outline.covers(shapely.Point(antenna.lon_deg, antenna.lat_deg))


#: The closing check's cheap settings (invented): an 80 m grid, 30 receivers on the path, the
#: largest extent 3,000 m; the antennas' generic element (25 dB front-to-back, the default: isotropic
#: elements let the large tail's sensitive area run on behind the mast).
CLOSING = "\n[areas]\ngrid = 80\nmax_extent = 3000\n"
CLOSING_SITES = 10


def _closing_sites(folder):
    """Ten runways at seeded random places and headings on the sheet (relief x 0.05), the mast on either side."""
    sheet = jacksboro_sheet()
    scale = 0.05
    dem = write_raster(folder / "jacksboro_closing.tif", sheet.scaled(scale), "EPSG:4326", sheet.transform())
    rng = np.random.default_rng(20)
    west, south, east, top = sheet.box
    out = []
    for attempt in range(3 * CLOSING_SITES):  # a runway the ground cannot serve is left out
        lat, lon = rng.uniform(south + 0.09, top - 0.09), rng.uniform(west + 0.11, east - 0.11)
        heading, side = rng.uniform(0.0, 360.0), str(rng.choice(["left", "right"]))
        threshold, end = sheet.runway(sheet.scaled(scale), lat, lon, heading)
        path = folder / f"closing_{attempt}.toml"
        path.write_text(site_text(dem, f"closing {attempt}", threshold, end, side=side, extra=NO_SURFACE + CLOSING))
        try:
            out.append(run_study(load_site(path)))
        except MastplanError as error:
            assert any(reason in str(error) for reason in LEGITIMATE), error
        if len(out) == CLOSING_SITES:
            return out
    raise AssertionError(f"only {len(out)} of {3 * CLOSING_SITES} runways could be studied")


def test_every_default_area_closes_on_ten_real_sites(tmp_path):
    # The generic objects' default areas on ten real-ground sites: the grid grows until each closes
    # (no cell of the area on the grid's edge: geo.optics.area_grid), and the check that says so
    # is independent of the grid's own bookkeeping: the cells of each area against the outer ring
    # of the positions computed, and the grid complete (every lattice point of its rectangle once).
    start = time.perf_counter()
    for result in _closing_sites(tmp_path):
        derived = derive_areas(result, receivers_count=30)
        step = derived.settings.grid_m
        for d in derived.disturbances:
            i, j = np.rint(d.ahead_m / step).astype(int), np.rint(d.toward_runway_m / step).astype(int)
            assert len(set(zip(i.tolist(), j.tolist()))) == i.size == (np.ptp(i) + 1) * (np.ptp(j) + 1)
            ring = (i == i.min()) | (i == i.max()) | (j == j.min()) | (j == j.max())
            for kind, share in (
                ("critical", derived.settings.critical_share),
                ("sensitive", derived.settings.sensitive_share),
            ):
                assert not (ring & (d.worst_share > share)).any(), (result.spec.name, d.obj.name, kind)
        assert all(not a.open_sides for a in derived.areas)
        assert not [w for w in derived.warnings if "stays open" in w]
    print(f"\nten real sites closed in {time.perf_counter() - start:.1f} s")
