"""GeoJSON layers of a study (RFC 7946).

Coordinates are WGS 84 longitude, latitude with 7 decimals (about 1 cm);
there is no ``crs`` member; exterior rings run counter-clockwise. Heights are
attributes, never a third coordinate, and say their datum in their name.

References
----------
.. [1] IETF RFC 7946, The GeoJSON Format (2016), sections 3.1.6 (polygon
       winding), 4 (coordinate reference system) and 11.2 (precision).
"""

from __future__ import annotations

import numpy as np

from geo.study.site_study import StudyResult
from geo.units import with_foot_twins

__all__ = ["study_layers", "feature", "collection", "ring_is_ccw", "cut_antimeridian"]

#: Length of the extended centre line drawn before the threshold: 10 NM. [m]
EXTENDED_CENTRELINE_M = 10 * 1852.0
_VERTEX_SPACING_M = 500.0
_DECIMALS = 7


def _coord(lat, lon) -> list[float]:
    return [round(float(lon), _DECIMALS), round(float(lat), _DECIMALS)]


def ring_is_ccw(ring: list[list[float]]) -> bool:
    """True when a closed lon/lat ring runs counter-clockwise (shoelace sum > 0)."""
    x = np.array([p[0] for p in ring])
    y = np.array([p[1] for p in ring])
    return float(np.sum(x[:-1] * y[1:] - x[1:] * y[:-1])) > 0.0


def feature(geometry: dict, properties: dict) -> dict:
    """A GeoJSON Feature with foot twins added to its properties (cut at the antimeridian)."""
    return {"type": "Feature", "properties": with_foot_twins(properties), "geometry": cut_antimeridian(geometry)}


def _split_line(coords: list) -> list[list]:
    parts, part = [], [coords[0]]
    for (x1, y1), (x2, y2) in zip(coords, coords[1:]):
        if abs(x2 - x1) > 180.0:
            edge = 180.0 if x1 > 0 else -180.0
            x2u = x2 + 360.0 if x1 > 0 else x2 - 360.0
            t = (edge - x1) / (x2u - x1)
            y = round(y1 + t * (y2 - y1), _DECIMALS)
            part.append([edge, y])
            parts.append(part)
            part = [[-edge, y]]
        part.append([x2, y2])
    parts.append(part)
    return parts


def _crosses(ring: list) -> bool:
    return any(abs(b[0] - a[0]) > 180.0 for a, b in zip(ring, ring[1:]))


def _cut_polygon(rings: list) -> list:
    """Parts of a polygon that crosses the antimeridian, each within [-180, 180]."""
    import shapely
    import shapely.affinity
    from shapely.geometry.polygon import orient

    unwrapped = []
    for ring in rings:
        xs = np.unwrap(np.radians([p[0] for p in ring]))
        unwrapped.append(np.column_stack([np.degrees(xs), [p[1] for p in ring]]))
    poly = shapely.Polygon(unwrapped[0], unwrapped[1:])
    parts = []
    for shift in (-360.0, 0.0, 360.0):
        piece = shapely.intersection(poly, shapely.box(-180.0 - shift, -90.0, 180.0 - shift, 90.0))
        piece = shapely.affinity.translate(piece, xoff=shift) if shift else piece
        for geom in getattr(piece, "geoms", [piece]):
            if geom.geom_type == "Polygon" and not geom.is_empty:
                geom = orient(geom, 1.0)
                parts.append(
                    [[_round_pair(c) for c in geom.exterior.coords]]
                    + [[_round_pair(c) for c in i.coords] for i in geom.interiors]
                )
    return parts


def _round_pair(c) -> list[float]:
    return [round(float(c[0]), _DECIMALS), round(float(c[1]), _DECIMALS)]


def cut_antimeridian(geometry: dict) -> dict:
    """Cut a geometry that crosses the antimeridian in two, as RFC 7946 sec. 3.1.9 asks.

    LineStrings become MultiLineStrings and Polygons MultiPolygons whose parts meet at +/-180 deg;
    other geometries are returned as they are.
    """
    kind, coords = geometry["type"], geometry.get("coordinates")
    if kind == "LineString" and _crosses(coords):
        return {"type": "MultiLineString", "coordinates": _split_line(coords)}
    if kind == "Polygon" and any(_crosses(r) for r in coords):
        return {"type": "MultiPolygon", "coordinates": _cut_polygon(coords)}
    if kind == "MultiPolygon" and any(_crosses(r) for p in coords for r in p):
        return {"type": "MultiPolygon", "coordinates": [q for p in coords for q in _cut_polygon(p)]}
    return geometry


def collection(features: list[dict]) -> dict:
    """A GeoJSON FeatureCollection."""
    return {"type": "FeatureCollection", "features": features}


def _point(lat, lon) -> dict:
    return {"type": "Point", "coordinates": _coord(lat, lon)}


def _line(frame, along_m, cross_m) -> dict:
    lat, lon = frame.to_geographic(along_m, cross_m)
    return {"type": "LineString", "coordinates": [_coord(a, o) for a, o in zip(lat, lon)]}


def _polygon(frame, along_m, cross_m) -> dict:
    lat, lon = frame.to_geographic(along_m, cross_m)
    ring = [_coord(a, o) for a, o in zip(lat, lon)]
    ring.append(ring[0])
    if not ring_is_ccw(ring):
        ring.reverse()
    return {"type": "Polygon", "coordinates": [ring]}


def _mast_plane_polygon(result: StudyResult, polygon) -> dict:
    """A polygon in mast plane coordinates (u toward the approach, w toward the runway) as GeoJSON."""
    mast, frame = result.mast, result.runway.frame
    sign = 1.0 if mast.side == "right" else -1.0
    parts = list(polygon.geoms) if polygon.geom_type == "MultiPolygon" else [polygon]
    rings_per_part = []
    for part in parts:
        rings = []
        for k, ring in enumerate([part.exterior, *part.interiors]):
            uw = np.asarray(ring.coords)
            lat, lon = frame.to_geographic(mast.setback_m - uw[:, 0], sign * (mast.offset_m - uw[:, 1]))
            coords = [_coord(a, o) for a, o in zip(lat, lon)]
            if ring_is_ccw(coords) != (k == 0):  # exterior counter-clockwise, holes clockwise
                coords.reverse()
            rings.append(coords)
        rings_per_part.append(rings)
    if len(rings_per_part) == 1:
        return {"type": "Polygon", "coordinates": rings_per_part[0]}
    return {"type": "MultiPolygon", "coordinates": rings_per_part}


def _densified(start_m: float, stop_m: float) -> np.ndarray:
    count = max(2, int(np.ceil(abs(stop_m - start_m) / _VERTEX_SPACING_M)) + 1)
    return np.linspace(start_m, stop_m, count)


def study_layers(result: StudyResult) -> dict[str, dict]:
    """Every vector layer of a study, by layer name.

    Returns
    -------
    dict of str to dict
        FeatureCollections: ``runway``, ``centreline``, ``threshold``,
        ``extended_centreline``, ``mast``, ``antennas``, ``gpip``.
    """
    layers = {
        **_runway_layers(result),
        "threshold": _threshold_layer(result),
        "extended_centreline": _extended_centreline_layer(result),
        "mast": _mast_layer(result),
        "antennas": _antennas_layer(result),
        "gpip": _gpip_layer(result),
    }
    layers["reflection_zones"] = _zones_layer(result)
    if result.spec.protected_areas:
        layers["protected_areas"] = _protected_areas_layer(result)
    if result.spec.buildings:
        layers["buildings"] = _buildings_layer(result)
    return layers


def _runway_layers(result: StudyResult) -> dict[str, dict]:
    """The ``runway`` outline and its ``centreline``, from threshold to end."""
    runway = result.runway
    frame = runway.frame
    half = runway.width_m / 2.0
    length = runway.length_m
    along = _densified(0.0, length)
    outline_along = np.concatenate([along, along[::-1]])
    outline_cross = np.concatenate([np.full(along.size, -half), np.full(along.size, half)])
    return {
        "runway": collection(
            [
                feature(
                    _polygon(frame, outline_along, outline_cross),
                    {
                        "name": result.spec.name,
                        "length_m": length,
                        "width_m": runway.width_m,
                        "true_bearing_deg": runway.true_bearing_deg,
                    },
                )
            ]
        ),
        "centreline": collection(
            [
                feature(
                    _line(frame, along, np.zeros(along.size)),
                    {"length_m": length, "true_bearing_deg": runway.true_bearing_deg},
                )
            ]
        ),
    }


def _threshold_layer(result: StudyResult) -> dict:
    """The threshold with the RDH and the actual path over it."""
    threshold = result.spec.threshold
    return collection(
        [
            feature(
                _point(threshold.lat_deg, threshold.lon_deg),
                {
                    "elevation_m": threshold.elevation_m,
                    "rdh_m": result.rdh_m,
                    "path_height_over_threshold_m": result.path_height_over_threshold_m,
                },
            )
        ]
    )


def _extended_centreline_layer(result: StudyResult) -> dict:
    """The centre line extended 10 NM before the threshold."""
    approach = _densified(-EXTENDED_CENTRELINE_M, 0.0)
    return collection(
        [
            feature(
                _line(result.runway.frame, approach, np.zeros(approach.size)),
                {"length_m": EXTENDED_CENTRELINE_M},
            )
        ]
    )


def _mast_layer(result: StudyResult) -> dict:
    """The mast with its placement, the height of its top (upper antenna and allowance), array and frequency."""
    mast = result.mast
    return collection(
        [
            feature(
                _point(mast.lat_deg, mast.lon_deg),
                {
                    "side": mast.side,
                    "setback_m": mast.setback_m,
                    "offset_m": mast.offset_m,
                    "base_elevation_m": mast.base_elevation_m,
                    "top_height_above_ground_m": result.antennas[-1].elevation_m
                    + result.spec.surfaces.mast_allowance_m
                    - mast.base_elevation_m,
                    "array": result.spec.array,
                    "frequency_mhz": result.channel.glide_path_mhz,
                },
            )
        ]
    )


def _antennas_layer(result: StudyResult) -> dict:
    """Every antenna, lowest first, with its height and proximity shift."""
    return collection(
        [
            feature(
                _point(a.lat_deg, a.lon_deg),
                {
                    "role": a.role,
                    "height_m": a.height_m,
                    "shift_toward_runway_m": a.shift_toward_runway_m,
                    "offset_m": a.offset_m,
                    "elevation_m": a.elevation_m,
                    "height_above_ground_m": a.elevation_m - result.mast.base_elevation_m,
                },
            )
            for a in result.antennas
        ]
    )


def _gpip_layer(result: StudyResult) -> dict:
    """The GPIP on the centre line."""
    gpip = result.gpip
    return collection(
        [
            feature(
                _point(gpip.lat_deg, gpip.lon_deg),
                {"along_m": gpip.along_m, "elevation_m": gpip.elevation_m},
            )
        ]
    )


def _zones_layer(result: StudyResult) -> dict:
    """The reflection zones with their figures, on the reflecting plane at the mast."""
    from geo.outputs.summary import zone_figures

    return collection([feature(_mast_plane_polygon(result, z.shape.polygon), zone_figures(z)) for z in result.zones])


def _protected_areas_layer(result: StudyResult) -> dict:
    """The site file's protected areas with their areas."""
    from geo.airfield.protected import area_polygon

    return collection(
        [
            feature(
                _mast_plane_polygon(result, area_polygon(a)),
                {"name": a.name, "kind": a.kind, "area_m2": area_polygon(a).area},
            )
            for a in result.spec.protected_areas
        ]
    )


def _buildings_layer(result: StudyResult) -> dict:
    """The site file's buildings: footprint, height, cladding and, once computed, their effect on the path."""
    import shapely

    from geo.study.buildings import building_shapes

    found = result.buildings
    shapes = [e.shape for e in found.effects] if found is not None else building_shapes(result)
    effects = found.effects if found is not None else [None] * len(shapes)
    out = []
    for b, shape, e in zip(result.spec.buildings, shapes, effects):
        props = {"name": b.name, "height_above_ground_m": b.height_m, "cladding": b.cladding}
        if e is not None:
            props["largest_share_of_limit"] = round(e.worst_share, 4)
            props["path_angle_shift_deg"] = round(e.angle_shift_deg, 5)
        out.append(feature(_mast_plane_polygon(result, shapely.Polygon(shape.outline_m)), props))
    return collection(out)
