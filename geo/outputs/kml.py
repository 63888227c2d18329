"""KML of the study layers (``site.kml``), for planners who use a globe viewer.

Written directly as XML from the GeoJSON FeatureCollections: one folder per layer (named as the
layer), every text escaped. Placemarks are named in words (``Upper antenna, 8.93 m (29.29 ft) above
the ground``). The antennas and the top of the mast stand at their heights above the ground at the
mast, ``altitudeMode`` ``relativeToGround``, with a line down to the ground (``extrude``): heights
above the ground, not elevations, because a globe viewer's terrain is in its own vertical datum,
which need not be the survey's. Everything else lies on the ground (``clampToGround``).

References
----------
.. [1] OGC 07-147r2, OGC KML 2.2 (colours aabbggrr, Placemark, ExtendedData).
"""

from __future__ import annotations

from pathlib import Path
from xml.sax.saxutils import escape, quoteattr

from geo.units import format_length

__all__ = ["write_kml", "placemark_name", "HEIGHT_KEYS"]

#: The property holding the height above the ground of a layer's points, where they stand in the air.
HEIGHT_KEYS = {"antennas": "height_above_ground_m", "mast": "top_height_above_ground_m"}

#: Placemark names of the layers with one feature, in words.
_TITLES = {
    "centreline": "Runway centre line",
    "threshold": "Threshold",
    "extended_centreline": "Extended centre line, 10 NM before the threshold",
    "gpip": "Glide path intercept point (GPIP)",
}

#: Line and fill colours (aabbggrr [1]_) by layer name prefix.
_STYLES = {
    "runway": ("ff575049", "99968e86"),
    "reflection_zones": ("ff2a2ac9", "402a2ac9"),
    "protected_areas": ("ff3e8a2b", "203e8a2b"),
    "default": ("ffab6418", "40ab6418"),
}


def _coords(ring) -> str:
    return " ".join(f"{lon:.7f},{lat:.7f},0" for lon, lat in ring)


def _geometry(geom: dict, height_m: float | None = None) -> str:
    kind, c = geom["type"], geom["coordinates"]
    if kind == "Point" and height_m is not None:
        return (
            "<Point><extrude>1</extrude><altitudeMode>relativeToGround</altitudeMode>"
            f"<coordinates>{c[0]:.7f},{c[1]:.7f},{height_m:.3f}</coordinates></Point>"
        )
    if kind == "Point":
        return f"<Point><coordinates>{c[0]:.7f},{c[1]:.7f},0</coordinates></Point>"
    if kind == "LineString":
        return f"<LineString><tessellate>1</tessellate><coordinates>{_coords(c)}</coordinates></LineString>"
    if kind == "Polygon":
        inner = "".join(
            f"<innerBoundaryIs><LinearRing><coordinates>{_coords(r)}</coordinates></LinearRing></innerBoundaryIs>"
            for r in c[1:]
        )
        return (
            f"<Polygon><tessellate>1</tessellate><outerBoundaryIs><LinearRing><coordinates>{_coords(c[0])}"
            f"</coordinates></LinearRing></outerBoundaryIs>{inner}</Polygon>"
        )
    if kind == "MultiLineString":
        return (
            "<MultiGeometry>"
            + "".join(_geometry({"type": "LineString", "coordinates": p}) for p in c)
            + "</MultiGeometry>"
        )
    if kind == "MultiPolygon":
        return (
            "<MultiGeometry>"
            + "".join(_geometry({"type": "Polygon", "coordinates": p}) for p in c)
            + "</MultiGeometry>"
        )
    raise ValueError(f"no KML for {kind}")


def placemark_name(layer: str, props: dict, units: str = "m") -> str:
    """A placemark's name in words, with its height above the ground where it stands in the air.

    Parameters
    ----------
    layer : str
        The layer's name (``antennas``, ``reflection_zones``, ...).
    props : dict
        The feature's properties (metre keys).
    units : {"m", "ft"}
        The site file's length unit, shown first.

    Returns
    -------
    str
    """
    height = props.get(HEIGHT_KEYS.get(layer, ""))
    above = "" if height is None else f", {format_length(height, units)} above the ground"
    if layer == "antennas":
        return f"{str(props['role']).capitalize()} antenna{above}"
    if layer == "mast":
        return f"Top of the glide path mast{above}"
    if layer == "runway":
        return f"Runway: {props['name']}"
    if layer == "reflection_zones":
        antennas = "all antennas" if props["antenna"] == "all" else f"{props['antenna']} antenna"
        return f"Reflection zone of the {props['kind']}, {antennas}"
    if layer == "protected_areas":
        return f"Protected area: {props['name']} ({props['kind']})"
    if layer == "derived_areas":
        return f"Derived {props['kind']} area of {props['object']}"
    return _TITLES.get(layer, layer.replace("_", " ").capitalize())


def _placemark(layer: str, feature: dict, units: str) -> str:
    props = feature["properties"]
    data = "".join(f"<Data name={quoteattr(str(k))}><value>{escape(str(v))}</value></Data>" for k, v in props.items())
    height = props.get(HEIGHT_KEYS.get(layer, ""))
    return (
        f"<Placemark><name>{escape(placemark_name(layer, props, units))}</name>"
        f"<styleUrl>#{layer if layer in _STYLES else 'default'}</styleUrl>"
        f"<ExtendedData>{data}</ExtendedData>{_geometry(feature['geometry'], height)}</Placemark>"
    )


def write_kml(title: str, layers: dict[str, dict], path: Path, units: str = "m") -> None:
    """Write every layer into one KML document.

    Parameters
    ----------
    title : str
        Document name (the site name; escaped).
    layers : dict
        GeoJSON FeatureCollections by layer name.
    path : Path
    units : {"m", "ft"}
        The site file's length unit, shown first in the placemarks' names.
    """
    styles = "".join(
        f"<Style id={quoteattr(name)}><LineStyle><color>{line}</color><width>2</width></LineStyle>"
        f"<PolyStyle><color>{fill}</color></PolyStyle></Style>"
        for name, (line, fill) in _STYLES.items()
    )
    folders = "".join(
        f"<Folder><name>{escape(name)}</name>"
        + "".join(_placemark(name, f, units) for f in fc["features"])
        + "</Folder>"
        for name, fc in layers.items()
    )
    text = (
        '<?xml version="1.0" encoding="UTF-8"?>\n<kml xmlns="http://www.opengis.net/kml/2.2"><Document>'
        f"<name>{escape(title)}</name><description>mastplan study. A planning aid: flight inspection and the "
        "local authority decide. Antennas and the top of the mast stand at their heights above the ground "
        f"(relativeToGround); everything else lies on the ground.</description>{styles}{folders}</Document></kml>\n"
    )
    path.write_text(text, encoding="utf-8")
