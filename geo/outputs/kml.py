"""KML of the study layers (``site.kml``), for planners who use a globe viewer.

Written directly as XML from the GeoJSON FeatureCollections: one folder per layer, every text
escaped, coordinates ``lon,lat`` on the ground (``clampToGround``).

References
----------
.. [1] OGC 07-147r2, OGC KML 2.2 (colours aabbggrr, Placemark, ExtendedData).
"""

from __future__ import annotations

from pathlib import Path
from xml.sax.saxutils import escape, quoteattr

__all__ = ["write_kml"]

#: Line and fill colours (aabbggrr [1]_) by layer name prefix.
_STYLES = {
    "runway": ("ff575049", "99968e86"),
    "reflection_zones": ("ff2a2ac9", "402a2ac9"),
    "protected_areas": ("ff3e8a2b", "203e8a2b"),
    "default": ("ffab6418", "40ab6418"),
}


def _coords(ring) -> str:
    return " ".join(f"{lon:.7f},{lat:.7f},0" for lon, lat in ring)


def _geometry(geom: dict) -> str:
    kind, c = geom["type"], geom["coordinates"]
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


def _placemark(layer: str, index: int, feature: dict) -> str:
    props = feature["properties"]
    label = props.get("name") or " ".join(str(props[k]) for k in ("antenna", "kind", "role") if k in props) or layer
    data = "".join(f"<Data name={quoteattr(str(k))}><value>{escape(str(v))}</value></Data>" for k, v in props.items())
    return (
        f"<Placemark><name>{escape(f'{layer} {index + 1}: {label}')}</name>"
        f"<styleUrl>#{layer if layer in _STYLES else 'default'}</styleUrl>"
        f"<ExtendedData>{data}</ExtendedData>{_geometry(feature['geometry'])}</Placemark>"
    )


def write_kml(title: str, layers: dict[str, dict], path: Path) -> None:
    """Write every layer into one KML document.

    Parameters
    ----------
    title : str
        Document name (the site name; escaped).
    layers : dict
        GeoJSON FeatureCollections by layer name.
    path : Path
    """
    styles = "".join(
        f"<Style id={quoteattr(name)}><LineStyle><color>{line}</color><width>2</width></LineStyle>"
        f"<PolyStyle><color>{fill}</color></PolyStyle></Style>"
        for name, (line, fill) in _STYLES.items()
    )
    folders = "".join(
        f"<Folder><name>{escape(name)}</name>"
        + "".join(_placemark(name, i, f) for i, f in enumerate(fc["features"]))
        + "</Folder>"
        for name, fc in layers.items()
    )
    text = (
        '<?xml version="1.0" encoding="UTF-8"?>\n<kml xmlns="http://www.opengis.net/kml/2.2"><Document>'
        f"<name>{escape(title)}</name><description>mastplan study. A planning aid: flight inspection and the "
        f"local authority decide.</description>{styles}{folders}</Document></kml>\n"
    )
    path.write_text(text, encoding="utf-8")
