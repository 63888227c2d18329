"""Geodesy at the edges of the world, RFC 7946 antimeridian cutting, limits users hit."""

import json

import pytest
from pyproj import Geod

from geo.errors import SiteFileError
from geo.outputs.geojson import cut_antimeridian, ring_is_ccw, study_layers
from geo.site.site_file import load_site
from geo.study.site_study import run_study

GEOD = Geod(ellps="WGS84")


def _site(site_text, lat, lon, bearing, length=3000.0):
    lon2, lat2, _ = GEOD.fwd(lon, lat, bearing, length)
    return site_text.replace("lat = -35.41, lon = 148.92", f"lat = {lat}, lon = {lon}").replace(
        "lat = -35.42, lon = 148.95", f"lat = {lat2!r}, lon = {lon2!r}"
    )


@pytest.mark.parametrize(
    "lat, lon, bearing",
    [
        (-16.5, 179.99, 95.0),
        (65.0, -179.99, 268.0),
        (85.0, 30.0, 10.0),
        (-85.0, -120.0, 190.0),
        (50.0, 5.995, 90.0),
        (-33.9, 18.6, 1.0),
    ],
)
def test_mast_and_gpip_at_the_edges_match_geodesic_constructions(write_site, site_text, lat, lon, bearing):
    # Reference: pyproj.Geod forward geodesics (GeographicLib). Requirement: within 1 cm.
    result = run_study(load_site(write_site(_site(site_text, lat, lon, bearing))))
    az, _, _ = GEOD.inv(lon, lat, result.spec.end.lon_deg, result.spec.end.lat_deg)
    lon_p, lat_p, back = GEOD.fwd(lon, lat, az, 290.0)
    lon_m, lat_m, _ = GEOD.fwd(lon_p, lat_p, back + 180.0 + 90.0, 130.0)
    assert GEOD.inv(lon_m, lat_m, result.mast.lon_deg, result.mast.lat_deg)[2] < 0.01
    lon_g, lat_g, _ = GEOD.fwd(lon, lat, az, result.gpip.along_m)
    assert GEOD.inv(lon_g, lat_g, result.gpip.lon_deg, result.gpip.lat_deg)[2] < 0.01
    assert -180.0 <= result.mast.lon_deg <= 180.0


def test_layers_across_the_antimeridian_are_cut(write_site, site_text):
    # RFC 7946 sec. 3.1.9: a geometry crossing the antimeridian is cut in two, no part crossing it.
    result = run_study(load_site(write_site(_site(site_text, -16.5, 179.99, 95.0))))
    layers = study_layers(result)
    runway = layers["runway"]["features"][0]["geometry"]
    assert runway["type"] == "MultiPolygon" and len(runway["coordinates"]) == 2
    centre = layers["centreline"]["features"][0]["geometry"]
    assert centre["type"] == "MultiLineString"
    first, second = centre["coordinates"]
    assert first[-1][0] == 180.0 and second[0][0] == -180.0 and first[-1][1] == second[0][1]
    for fc in layers.values():
        for f in fc["features"]:
            g = f["geometry"]
            polys = {"Polygon": [g["coordinates"]], "MultiPolygon": g["coordinates"]}.get(g["type"], [])
            for rings in polys:
                assert ring_is_ccw(rings[0])
                xs = [c[0] for c in rings[0]]
                assert max(xs) - min(xs) < 180.0
            lines = {"LineString": [g["coordinates"]], "MultiLineString": g["coordinates"]}.get(g["type"], [])
            for line in lines:
                assert all(abs(b[0] - a[0]) <= 180.0 for a, b in zip(line, line[1:]))
    json.dumps(layers)  # serialisable


def test_cut_keeps_the_area_of_a_polygon():
    import shapely

    ring = [[179.9, -1.0], [-179.9, -1.0], [-179.9, 1.0], [179.9, 1.0], [179.9, -1.0]]
    cut = cut_antimeridian({"type": "Polygon", "coordinates": [ring]})
    assert cut["type"] == "MultiPolygon"
    area = sum(shapely.Polygon(p[0]).area for p in cut["coordinates"])
    assert area == pytest.approx(0.2 * 2.0, rel=1e-9)


@pytest.mark.parametrize(
    "old, new, field",
    [
        ("angle_deg = 3.0", "angle_deg = 0.5", "glide_path.angle_deg"),
        ("angle_deg = 3.0", "angle_deg = 6.5", "glide_path.angle_deg"),
        ("offset = 130", "offset = 22", "mast.offset"),
        ("setback = 290", "setback = 3100", "mast.setback"),
        ("setback = 290", "setback = -20", "mast.setback"),
    ],
)
def test_limits_users_hit_are_errors_with_a_reason(write_site, site_text, old, new, field):
    with pytest.raises(SiteFileError) as info:
        run_study(load_site(write_site(site_text.replace(old, new))))
    assert info.value.field == field


def test_steep_or_shallow_angle_inside_the_hard_limits_is_a_finding(write_site, site_text):
    # PANS-OPS (Doc 8168 Vol II): 2.5-3.5 deg standard; outside needs special approval.
    result = run_study(load_site(write_site(site_text.replace("angle_deg = 3.0", "angle_deg = 3.8"))))
    assert {f.code: f for f in result.findings}["angle"].severity == "warning"
