"""Terrain studies on a real DEM: the plane solve always ends, at the answer.

The DEM is matplotlib's sample data file ``jacksboro_fault_dem.npz`` (read by tests/jacksboro.py,
which says where it comes from): 3-arc-second elevations of the Jacksboro fault area, Tennessee,
derived from USGS data, 344 x 403 cells.

The relief is scaled down about its mean (x 0.02 to x 0.2) to make airfield-like ground, and
written as GeoTIFFs in two CRSs: WGS 84 geographic (EPSG:4326, the file's own grid) and UTM 16N
(EPSG:32616, reprojected bilinearly by rasterio.warp to 80 m cells). Fictional runways are placed
at random (seeded): positions, headings, sides, array types, mast positions, relief scales, CRSs.

Checks against outside references: heights from :func:`geo.radio.arrays.antenna_heights_m` at the
reported slope (Annex 10 / FAA image-array formula), RDH from :func:`geo.airfield.path.rdh_m` at the reported
RPI (Annex 10 3.1.1 geometry), the reported samples inside the zone drawn independently as a shapely
union of the exact Fresnel ellipses (:func:`geo.ground.terrain.fit_zone`), and the sweep (prefix sums over
row intervals) against the single study (least squares on samples) at the same positions. The
setback solved for a target RDH ends too, at the target or with a finding saying how far. The site
files turn the surface prediction off: nothing here looks at it (tests/optics/test_surface_real_dem.py
runs it on this DEM).
"""

from __future__ import annotations

import math
import time

import numpy as np
import pytest
from jacksboro import NODATA, jacksboro_sheet, site_text, write_raster
from tests_support import NO_SURFACE, computed_once

from geo.airfield.path import rdh_m
from geo.errors import SiteFileError, TerrainError
from geo.ground.dem import Dem
from geo.ground.terrain import analyse_terrain, fit_zone
from geo.radio.arrays import antenna_heights_m
from geo.site.channels import wavelength_m
from geo.site.site_file import load_site
from geo.study.site_study import channel_of, run_study, runway_of
from geo.study.sweep import SweepOptions, run_sweep

SCALES = (0.02, 0.05, 0.1, 0.2)
RUNWAYS = 40
MASTS_PER_RUNWAY = 3
ARRAYS = ("null-reference", "sideband-reference", "capture-effect")
RUNWAY_M = 2500.0
#: Errors that real ground may legitimately end in: ground that cannot serve an image array.
LEGITIMATE = ("too close to the", "off the DEM or on nodata", "falls more than")


def _jacksboro_dems(tmp_path_factory):
    """The sample DEM at every relief scale, as (crs, scale) -> GeoTIFF path."""
    from rasterio.warp import Resampling, calculate_default_transform, reproject

    folder = tmp_path_factory.mktemp("jacksboro")
    sheet = jacksboro_sheet()
    rows, cols = sheet.z.shape
    assert (rows, cols) == (344, 403)
    west, south, east, top = sheet.box
    utm = "EPSG:32616"
    dst_transform, width, height = calculate_default_transform(
        "EPSG:4326", utm, cols, rows, west, south, east, top, resolution=80.0
    )
    paths = {}
    for scale in SCALES:
        scaled = sheet.scaled(scale)
        geo_path = write_raster(folder / f"jacksboro_geographic_{scale}.tif", scaled, "EPSG:4326", sheet.transform())
        projected = np.full((height, width), NODATA)
        reproject(
            scaled,
            projected,
            src_transform=sheet.transform(),
            src_crs="EPSG:4326",
            dst_transform=dst_transform,
            dst_crs=utm,
            resampling=Resampling.bilinear,
            src_nodata=NODATA,
            dst_nodata=NODATA,
        )
        utm_path = write_raster(folder / f"jacksboro_utm16n_{scale}.tif", projected, utm, dst_transform)
        paths["geographic", scale] = geo_path
        paths["projected", scale] = utm_path
    return {"paths": paths, "box": sheet.box, "folder": folder}


def _site_texts(dems) -> list[dict]:
    """Fictional runways at random (seeded) on the real DEM, three random mast positions on each."""
    import rasterio
    from pyproj import Geod, Transformer

    geod = Geod(ellps="WGS84")
    rng = np.random.default_rng(20261202)
    west, south, east, top = dems["box"]
    sites = []
    for r in range(RUNWAYS):
        crs = ("geographic", "projected")[r % 2]
        scale = SCALES[rng.integers(len(SCALES))]
        # At least ~6 km from the sheet's edges: the zones and the runway stay on the DEM.
        lon = rng.uniform(west + 0.07, east - 0.07)
        lat = rng.uniform(south + 0.06, top - 0.06)
        heading = rng.uniform(0.0, 360.0)
        end_lon, end_lat, _ = geod.fwd(lon, lat, heading, RUNWAY_M)
        path = dems["paths"][crs, scale]
        with rasterio.open(path) as ds:  # the surveyed elevations: the DEM's nearest cell
            to = Transformer.from_crs("EPSG:4326", ds.crs.to_wkt(), always_xy=True)
            z_thr, z_end = (float(v[0]) for v in ds.sample(zip(*to.transform([lon, end_lon], [lat, end_lat]))))
        # A graded runway: at most 1.5 % (Annex 14 allows 1-2 %; from memory).
        z_end = z_thr + float(np.clip(z_end - z_thr, -0.015 * RUNWAY_M, 0.015 * RUNWAY_M))
        for _ in range(MASTS_PER_RUNWAY):
            site = {
                "index": len(sites),
                "crs": crs,
                "scale": scale,
                "array": ARRAYS[rng.integers(len(ARRAYS))],
                "side": ("left", "right")[rng.integers(2)],
                "setback": round(float(rng.uniform(240.0, 390.0)), 1),
                "offset": round(float(rng.uniform(100.0, 200.0)), 1),
            }
            threshold, end = (lat, lon, z_thr), (end_lat, end_lon, z_end)
            site["text"] = site_text(
                path, f"Jacksboro fictional runway {r}", threshold, end, site["array"], site["side"],
                site["offset"], site["setback"], NO_SURFACE,
            )  # fmt: skip
            sites.append(site)
    return sites


def _full_study(site) -> bool:
    """Sites that also get a full study and a one-candidate sweep (every fifth)."""
    return site["index"] % 5 == 1


@pytest.fixture(scope="session")
def real_sites(tmp_path_factory):
    """Every site's terrain analysis (or its error), analysed once in the session (also when the tests of
    this module run in two xdist workers); every fifth also studied and swept."""
    return computed_once(tmp_path_factory, "real_terrain_sites", lambda: _analyse_sites(tmp_path_factory))


def _analyse_sites(tmp_path_factory) -> list[dict]:
    jacksboro_dems = _jacksboro_dems(tmp_path_factory)
    folder = jacksboro_dems["folder"]
    out = []
    start = time.perf_counter()
    for site in _site_texts(jacksboro_dems):
        path = folder / f"site_{site['index']}.toml"
        path.write_text(site["text"], encoding="utf-8")
        spec = load_site(path)
        lam = wavelength_m(channel_of(spec).glide_path_mhz)
        study = sweep = error = None
        try:
            if _full_study(site):
                study = run_study(spec)
                terrain = study.terrain
                options = SweepOptions((site["setback"],), (site["offset"],), (site["side"],))
                sweep = run_sweep(spec, options).columns
            else:
                runway = runway_of(spec)
                with Dem.open(spec.terrain.dem_path) as dem:
                    terrain = analyse_terrain(
                        dem, runway.frame, site["side"], site["setback"], site["offset"], site["array"], lam, 3.0
                    )
        except TerrainError as exc:
            terrain, error = None, str(exc)
        out.append(dict(site, spec=spec, terrain=terrain, error=error, wavelength_m=lam, study=study, sweep=sweep))
    print(f"\nreal terrain: {len(out)} sites analysed in {time.perf_counter() - start:.1f} s")
    return out


def test_every_site_ends_at_an_answer_or_a_legitimate_refusal(real_sites):
    assert len(real_sites) >= 100
    errors = [s["error"] for s in real_sites if s["error"] is not None]
    for message in errors:
        assert "did not settle" not in message
        assert any(key in message for key in LEGITIMATE), message
    # Ground that cannot serve is rare on airfield-like ground: at most 5 % of the sites.
    assert len(errors) <= 0.05 * len(real_sites), errors
    done = [s["terrain"] for s in real_sites if s["terrain"] is not None]
    statuses = {k: sum(t.solve_status == k for t in done) for k in ("settled", "bracket", "budget")}
    assert sum(statuses.values()) == len(done)
    spreads = [t.height_spread_mm for t in done if t.solve_status != "settled"]
    evaluations = [t.evaluations for t in done]
    print(
        f"real terrain: {len(real_sites)} sites: {len(done)} answered ({statuses}), {len(errors)} refused; "
        f"largest bracket spread {max(spreads, default=0.0):.2f} mm; evaluations median "
        f"{np.median(evaluations):.0f}, largest {max(evaluations)}"
    )


def test_heights_follow_from_the_reported_slope(real_sites):
    # Slope-corrected heights h = m lambda / (k sin(theta - slope)) (geo.radio.arrays; FAA Order 6750.16).
    for s in real_sites:
        t = s["terrain"]
        if t is None:
            continue
        expected = antenna_heights_m(s["array"], s["wavelength_m"], 3.0, t.forward_slope_deg)
        assert t.heights_m == pytest.approx(expected, abs=1e-3)
        assert t.forward_slope_deg < 3.0 - 0.5
        # The zone was taken for the heights of the zone slope; they differ from the reported heights by no
        # more than the reported spread (settled: within 0.1 mm).
        gap_mm = 1000.0 * max(abs(a - b) for a, b in zip(t.zone_heights_m, t.heights_m))
        if t.solve_status == "settled":
            assert gap_mm <= 0.1 + 1e-9
        else:
            assert gap_mm <= t.height_spread_mm + 1e-6
            low, high = sorted(t.slope_bracket_deg)
            assert low <= t.zone_slope_deg <= high


def test_reported_samples_lie_in_the_zone_drawn_independently(real_sites):
    # The zone as a shapely union of the exact ellipses (geo.radio.zones, 480 rows) at the zone's heights of the
    # antennas that set the path: the
    # samples of the fit, found row by row in closed form, lie in it (edge cells within a cell of it).
    import shapely

    for s in real_sites[::4]:
        t = s["terrain"]
        if t is None:
            continue
        gu = math.tan(math.radians(t.zone_slope_deg))
        gw = t.zone_lateral_gradient
        heights = [t.zone_heights_m[i] for i in t.fit_antennas]  # the antennas that set the path
        zone = fit_zone(heights, s["wavelength_m"], 3.0, s["setback"], s["offset"], gu, gw)
        grown = zone.polygon.buffer(t.sample_spacing_m)
        assert shapely.contains_xy(grown, t.u_m, t.w_m).all()
        inside = shapely.contains_xy(zone.polygon, t.u_m, t.w_m).mean()
        assert inside > 0.95


def test_rdh_follows_from_the_reported_rpi(real_sites):
    # RDH = RPI + setback tan(theta) - threshold (Annex 10 3.1.1 geometry; geo.airfield.path.rdh_m).
    checked = 0
    for s in real_sites:
        result = s["study"]
        if result is None:
            continue
        t = result.terrain
        thr = s["spec"].threshold.elevation_m
        assert result.rdh_m == pytest.approx(rdh_m(t.rpi_elevation_m, s["setback"], 3.0, thr), abs=1e-9)
        assert result.intercept_elevation_m == pytest.approx(t.rpi_elevation_m, abs=1e-9)
        codes = {f.code for f in result.findings}
        assert ("plane-bracket" in codes) == (t.solve_status != "settled")
        checked += 1
    assert checked >= 20


def test_sweep_candidate_equals_the_study_on_real_terrain(real_sites):
    # Independent method: the sweep's prefix sums over row intervals against the study's least squares on
    # samples. Requirement (issue): RDH within 1 cm, slopes within 0.01 deg.
    worst = {"rdh_m": 0.0, "forward_deg": 0.0, "lateral_deg": 0.0, "samples": 0}
    checked = 0
    for s in real_sites:
        c, study = s["sweep"], s["study"]
        if study is None:
            continue
        t = study.terrain
        diffs = {
            "rdh_m": abs(c["rdh_m"][0] - study.rdh_m),
            "forward_deg": abs(c["forward_slope_deg"][0] - t.forward_slope_deg),
            "lateral_deg": abs(c["lateral_slope_deg"][0] - t.lateral_slope_deg),
            "samples": abs(int(c["samples"][0]) - t.plane.samples),
        }
        worst = {k: max(worst[k], v) for k, v in diffs.items()}
        assert diffs["rdh_m"] <= 0.01
        assert diffs["forward_deg"] <= 0.01 and diffs["lateral_deg"] <= 0.01
        assert c["lower_height_m"][0] == pytest.approx(t.heights_m[0], abs=1e-3)
        assert diffs["samples"] <= max(2, 0.005 * t.plane.samples)
        checked += 1
    assert checked >= 20
    print(f"real terrain: sweep against study at {checked} sites, largest differences {worst}")


def test_setback_solved_for_the_target_rdh_always_ends(real_sites):
    # The setback for a target RDH (15.5 m) on real ground: it ends at the target within 5 mm, or says how far
    # it is (the RDH jumps with the setback where the plane changes); never "did not settle".
    import dataclasses

    from geo.site.site_file import MastSpec

    ended, refused, misses = 0, 0, []
    for s in real_sites[2::15]:
        spec = s["spec"]
        solved = dataclasses.replace(
            spec, target_rdh_m=15.5, mast=MastSpec(side=s["side"], offset_m=s["offset"], setback_m=None)
        )
        try:
            result = run_study(solved)
        except (TerrainError, SiteFileError) as exc:  # ground that cannot give the target beside the runway
            assert any(key in str(exc) for key in (*LEGITIMATE, "must stand beside the runway")), str(exc)
            refused += 1
            continue
        t = result.terrain
        thr = spec.threshold.elevation_m
        assert result.rdh_m == pytest.approx(rdh_m(t.rpi_elevation_m, result.mast.setback_m, 3.0, thr), abs=1e-9)
        codes = {f.code for f in result.findings}
        assert abs(result.rdh_m - 15.5) <= 0.005 or "rdh-target" in codes
        misses.append(abs(result.rdh_m - 15.5))
        ended += 1
    assert ended >= 6
    print(
        f"real terrain: setback solved for RDH 15.5 m at {ended + refused} sites: {ended} ended "
        f"({sum(m <= 0.005 for m in misses)} within 5 mm, largest miss {max(misses):.3f} m), {refused} refused"
    )
