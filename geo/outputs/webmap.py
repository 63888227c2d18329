"""The interactive map (``map.html``): folium, with Leaflet inlined so it works offline.

Leaflet's JS and CSS come from the vendored npm package (``vendor/leaflet``, BSD 2-Clause, its
licence beside it); the images its CSS uses become data URIs. No CDN link is written: folium's
default script and style links are cleared on the map. An online base map is offered as a
layer that is off until the user switches it on. Every text from the site file is HTML-escaped.
"""

from __future__ import annotations

import base64
import html
import os
import re
from functools import cache
from pathlib import Path

from geo.outputs.text import past_or_before
from geo.study.site_study import StudyResult
from geo.units import format_area, format_length

__all__ = ["write_map", "ZONE_COLOURS"]

VENDOR = Path(__file__).with_name("vendor") / "leaflet"
ZONE_COLOURS = {"lower": "#c92a2a", "middle": "#e67700", "upper": "#5f3dc4", "all": "#495057"}
AREA_COLOURS = {"critical": "#2b8a3e", "sensitive": "#74b816"}
#: Derived areas (``mastplan areas``): on the map and on the disturbance plots.
DERIVED_AREA_COLOURS = {"critical": "#c2255c", "sensitive": "#f08c00"}
MAST_COLOUR = "#1864ab"
#: Vertical exaggeration of the hillshade, so that gentle airfield slopes show.
_EXAGGERATION = 10.0


def _popup(html_text: str, max_width: int = 320):
    """A popup bound with Leaflet itself (folium's own popups need jQuery, which is not bundled)."""
    popup = _bound_popup_class()()
    popup.html, popup.width = html_text, max_width
    return popup


@cache
def _bound_popup_class():
    """The popup element class, made once a process (its template compiled once, not for every popup)."""
    from branca.element import MacroElement
    from jinja2 import Template

    class _BoundPopup(MacroElement):
        _template = Template(
            "{% macro script(this, kwargs) %}"
            "{{ this._parent.get_name() }}.bindPopup({{ this.html|tojson }}, {maxWidth: {{ this.width }}});"
            "{% endmacro %}"
        )

        def __init__(self):
            super().__init__()
            self._name = "BoundPopup"

    return _BoundPopup


class _Inlined:
    """Long texts put into the rendered page at the end, in place of short tokens.

    folium compiles the text of every element as a jinja2 template when the map is built and
    rendered, the hillshade's data URI and the inlined Leaflet library (half a megabyte) among
    them; a short token in their place is compiled instead, and replaced by the text the template
    would have rendered. Only texts without template syntax are put in this way (others go in
    whole), so the page is the same.
    """

    def __init__(self) -> None:
        self._texts: dict[str, str] = {}

    def element_text(self, text: str) -> str:
        """A token standing for ``text`` as the content of a ``folium.Element``, or ``text`` itself."""
        if any(mark in text for mark in ("{{", "{%", "{#")):
            return text
        token = f"<!--mastplan-inline-{os.urandom(16).hex()}-->"
        # What jinja2 renders of plain text: newlines made "\n", one trailing newline dropped.
        lines = re.split(r"\r\n|\r|\n", text)
        if lines[-1] == "":
            del lines[-1]
        self._texts[token] = "\n".join(lines)
        return token

    def data_uri(self, uri: str) -> str:
        """A token standing for a base64 data URI where folium writes it as JSON, or ``uri`` itself."""
        if not re.fullmatch(r"data:image/png;base64,[A-Za-z0-9+/=]*", uri):
            return uri
        token = f"data:mastplan-inline-{os.urandom(16).hex()}"
        self._texts[token] = uri  # JSON and jinja2's tojson leave these characters as they are
        return token

    def fill(self, page: str) -> str:
        """The page with every token replaced by its text."""
        for token, text in self._texts.items():
            if page.count(token) != 1:
                raise RuntimeError(f"map.html: the placeholder {token} is not in the page exactly once")
            page = page.replace(token, text)
        return page


def _leaflet_inline() -> str:
    css = (VENDOR / "leaflet.css").read_text(encoding="utf-8")

    def data_uri(match: re.Match) -> str:
        image = VENDOR / match.group(1)
        return "url(data:image/png;base64," + base64.b64encode(image.read_bytes()).decode("ascii") + ")"

    css = re.sub(r"url\((images/[^)]+\.png)\)", data_uri, css)
    js = (VENDOR / "leaflet.js").read_text(encoding="utf-8").replace("</script", "<\\/script")
    return f"<style>\n{css}\n</style>\n<script>\n{js}\n</script>"


def _escaped(fc: dict) -> dict:
    """A copy of a FeatureCollection whose text properties are HTML-escaped (popups are HTML)."""
    return {
        "type": "FeatureCollection",
        "features": [
            {**f, "properties": {k: html.escape(v) if isinstance(v, str) else v for k, v in f["properties"].items()}}
            for f in fc["features"]
        ],
    }


def _lengths(unit: str):
    """``_len(value_m, decimals)`` in the site file's unit first (:func:`geo.units.format_length`)."""

    def _len(value_m: float, decimals: int = 2) -> str:
        return format_length(value_m, unit, decimals)

    return _len


#: The label of each value a tooltip shows.
TOOLTIP_LABELS = {
    "antenna": "Antenna",
    "kind": "Kind",
    "near_m": "Near edge (from the mast, along the course)",
    "far_m": "Far edge (from the mast, along the course)",
    "max_half_width_m": "Largest half-width",
    "area_m2": "Area",
    "name": "Name",
    "length_m": "Length",
    "width_m": "Width",
    "true_bearing_deg": "True bearing",
    "object": "Object",
    "reach_ahead_m": "Ahead of the mast",
    "reach_behind_m": "Behind the mast",
    "reach_toward_runway_m": "Toward the runway",
    "reach_away_m": "Away from the runway",
}


def _tooltip_value(key: str, value, unit: str = "m") -> str:
    """One tooltip value as text: rounded, the site file's unit first (one formatting call per value)."""
    if value is None or isinstance(value, str):
        return "" if value is None else value
    if key == "area_m2":
        return format_area(value, unit)
    if key == "true_bearing_deg":
        return f"{value:.2f} deg"
    if key in ("length_m", "width_m"):
        return format_length(value, unit, 1)
    return format_length(value, unit, 0)


def _tooltip_values(fc: dict, fields, unit: str = "m") -> dict:
    """A copy of a FeatureCollection whose tooltip fields hold their text (the other properties stay)."""
    return {
        "type": "FeatureCollection",
        "features": [
            {
                **f,
                "properties": {
                    **f["properties"],
                    **{k: _tooltip_value(k, f["properties"].get(k), unit) for k in fields},
                },
            }
            for f in fc["features"]
        ],
    }


def _mast_popup(result: StudyResult) -> str:
    _len = _lengths(result.spec.units)
    mast = result.mast
    rows = "".join(
        f"<tr><td>{html.escape(a.role)}</td><td>{_len(a.height_m, 3)}</td><td>{_len(a.shift_toward_runway_m, 3)}</td>"
        f"<td>{a.lat_deg:.7f}, {a.lon_deg:.7f}</td></tr>"
        for a in result.antennas
    )
    return (
        f"<b>Glide path mast</b> ({html.escape(result.spec.array)}, {result.channel.glide_path_mhz:.2f} MHz)<br>"
        f"{html.escape(mast.side)} side, setback {_len(mast.setback_m, 1)}, offset {_len(mast.offset_m, 1)}<br>"
        f"ground {_len(mast.base_elevation_m)}<br>"
        "<table class='mastplan-antennas'><tr><th>antenna</th><th>height</th><th>shift toward runway</th>"
        f"<th>lat, lon</th></tr>{rows}</table>"
        f"RDH {_len(result.rdh_m)}; GPIP {_len(abs(result.gpip.along_m), 1)} {past_or_before(result.gpip.along_m)} "
        "the threshold"
    )


#: Names of the map's layers, as the layer control and the legend show them.
RUNWAY_LAYER = "Runway"
CENTRELINE_LAYER = "Centre line"
EXTENDED_LAYER = "Extended centre line (10 NM)"
POINTS_LAYER = "Threshold and GPIP"
MAST_LAYER = "Mast and antennas"
HILLSHADE_LAYER = "DEM hillshade"
THRESHOLD_COLOUR = "#000000"
GPIP_COLOUR = "#1864ab"


def zone_layer_name(kind: str, antenna: str) -> str:
    """The layer (and legend) name of one antenna's zone of one kind (``path``, ``coverage``)."""
    return f"{kind.capitalize()} zone, {antenna} antenna"


def protected_layer_name(kind: str) -> str:
    """The layer (and legend) name of the protected areas of one kind."""
    return f"Protected areas ({kind})"


#: How the centre lines are drawn; their legend swatches use the same colour, weight and dashes.
CENTRELINE_STYLE = {"color": "#ffffff", "weight": 1.5, "dashArray": "8 6"}
EXTENDED_STYLE = {"color": "#343a40", "weight": 1, "dashArray": "4 6"}
RUNWAY_STYLE = {"color": "#495057", "fillColor": "#868e96", "weight": 1, "fillOpacity": 0.6}
#: The mast's marker: a triangle (the GPIP and the threshold are dots). SVG path in an 18 px box.
MAST_TRIANGLE = "M9 1 L17 16 L1 16 Z"


def _swatch(colour: str, shape: str = "box", dash: str | None = None, ground: str | None = None) -> str:
    """A legend symbol as inline SVG, drawn as the map draws the layer.

    Parameters
    ----------
    colour : str
        Stroke (and fill) colour.
    shape : {"box", "dashed", "line", "dot", "triangle"}
        A filled area, an area with a dashed outline, a line, a dot, the mast's triangle.
    dash : str, optional
        SVG dash array of a line.
    ground : str, optional
        Background behind a line (a white line drawn on the runway's grey).
    """
    if shape == "line":
        back = f"<rect width='24' height='12' fill='{ground}'/>" if ground else ""
        dashes = f" stroke-dasharray='{dash}'" if dash else ""
        body = f"{back}<line x1='0' y1='6' x2='24' y2='6' stroke='{colour}' stroke-width='2'{dashes}/>"
        width = 24
    elif shape == "dot":
        body, width = f"<circle cx='6' cy='6' r='5' fill='{colour}'/>", 12
    elif shape == "triangle":
        body = f"<path d='{MAST_TRIANGLE}' transform='scale(0.667)' fill='{colour}' stroke='#ffffff'/>"
        width = 12
    elif shape == "dashed":
        body = f"<rect x='1' y='1' width='10' height='10' fill='none' stroke='{colour}' stroke-dasharray='3 2'/>"
        width = 12
    else:
        body, width = f"<rect width='12' height='12' fill='{colour}'/>", 12
    return (
        f"<svg class='mastplan-swatch mastplan-swatch-{shape}' width='{width}' height='12' "
        f"style='margin-right:6px;vertical-align:middle'>{body}</svg>"
    )


def legend_items(result: StudyResult) -> list[tuple[str, str, str]]:
    """``(swatch HTML, layer name, note)`` for every layer of the map but the online base map."""
    items = [(_swatch(RUNWAY_STYLE["fillColor"]), RUNWAY_LAYER, "")]
    items += [
        (_swatch(CENTRELINE_STYLE["color"], "line", "4 3", RUNWAY_STYLE["fillColor"]), CENTRELINE_LAYER, ""),
        (_swatch(EXTENDED_STYLE["color"], "line", "2 3"), EXTENDED_LAYER, ""),
    ]
    points = _swatch(THRESHOLD_COLOUR, "dot") + _swatch(GPIP_COLOUR, "dot")
    items.append((points, POINTS_LAYER, "dots; black: threshold, blue: GPIP"))
    items.append((_swatch(MAST_COLOUR, "triangle"), MAST_LAYER, "triangle"))
    for kind, shape in (("path", "box"), ("coverage", "dashed")):
        items += [(_swatch(ZONE_COLOURS[a.role], shape), zone_layer_name(kind, a.role), "") for a in result.antennas]
    items += [
        (_swatch(AREA_COLOURS[k]), protected_layer_name(k), "")
        for k in sorted({a.kind for a in result.spec.protected_areas})
    ]
    if result.spec.terrain is not None:
        items.append((_swatch("#adb5bd"), HILLSHADE_LAYER, f"exaggerated {_EXAGGERATION:g} times"))
    return items


def _legend(result: StudyResult, extra=()) -> str:
    rows = "".join(
        f"<div class='mastplan-legend-item'>{swatch}<span class='mastplan-legend-name'>{html.escape(name)}</span>"
        + (f"<span style='color:#555'> ({html.escape(note)})</span>" if note else "")
        + "</div>"
        for swatch, name, note in [*legend_items(result), *extra]
    )
    return (
        "<div class='mastplan-legend' style='position:fixed;bottom:28px;right:10px;z-index:1000;background:#fff;"
        "padding:8px 10px;border:1px solid #999;border-radius:4px;font:12px sans-serif'>"
        f"<b>{html.escape(result.spec.name)}</b><br>{rows}"
        "<div style='margin-top:4px;color:#555'>Path zones solid, coverage zones dashed.<br>"
        "A planning aid: flight inspection and the local authority decide.</div></div>"
    )


def _png_data_uri(rgba) -> str:
    """An RGBA uint8 array as a PNG data URI (zlib level 6; folium's own encoder is much slower).

    References: W3C, Portable Network Graphics (PNG) Specification, 2nd ed. (2003).
    """
    import struct
    import zlib

    import numpy as np

    rows, cols = rgba.shape[:2]
    raw = np.concatenate([np.zeros((rows, 1), dtype=np.uint8), rgba.reshape(rows, cols * 4)], axis=1).tobytes()

    def chunk(kind: bytes, data: bytes) -> bytes:
        return struct.pack(">I", len(data)) + kind + data + struct.pack(">I", zlib.crc32(kind + data))

    png = (
        b"\x89PNG\r\n\x1a\n"
        + chunk(b"IHDR", struct.pack(">IIBBBBB", cols, rows, 8, 6, 0, 0, 0))
        + chunk(b"IDAT", zlib.compress(raw, 6))
        + chunk(b"IEND", b"")
    )
    return "data:image/png;base64," + base64.b64encode(png).decode("ascii")


def _hillshade_overlay(result: StudyResult, path_bounds, inlined: _Inlined):
    import folium
    import numpy as np

    from geo.ground.dem import Dem
    from geo.ground.hillshade import hillshade

    t = result.spec.terrain
    west, south, east, north = path_bounds
    with Dem.open(t) as dem:
        z, (x0, y0, x1, y1), cell = dem.warped(west, south, east, north, "EPSG:3857", max_size=900)
    # Web Mercator cells are stretched by 1 / cos(lat) on the ground.
    scale = np.cos(np.radians((south + north) / 2.0))
    shade = hillshade(z * _EXAGGERATION, cell * scale, cell * scale)
    rgba = np.zeros(z.shape + (4,), dtype=np.uint8)
    grey = (60 + 195 * np.nan_to_num(shade)).astype(np.uint8)
    rgba[..., 0] = rgba[..., 1] = rgba[..., 2] = grey
    rgba[..., 3] = np.where(np.isfinite(z), 150, 0).astype(np.uint8)
    from pyproj import Transformer

    back = Transformer.from_crs("EPSG:3857", "EPSG:4326", always_xy=True)
    lon0, lat0 = back.transform(x0, y0)
    lon1, lat1 = back.transform(x1, y1)
    return folium.raster_layers.ImageOverlay(
        inlined.data_uri(_png_data_uri(rgba)),
        bounds=[[lat0, lon0], [lat1, lon1]],
        name=HILLSHADE_LAYER,
        mercator_project=False,
        overlay=True,
        show=True,
    )


#: The map's name of the layer of ``mastplan building-heights``' contours.
CONTOURS_LAYER = "Allowed building height, contours (building restricted area)"


def height_contours_group(fc: dict, unit: str):
    """The map's layer of the contours, each with its height in a tooltip."""
    import folium

    group = folium.FeatureGroup(name=CONTOURS_LAYER)
    for f in fc["features"]:
        words = (
            f"Allowed building height {format_length(f['properties']['allowed_height_m'], unit, 0)} above the ground"
        )
        style = {"color": "#c92a2a", "weight": 2}
        folium.GeoJson(f, style_function=lambda _f, s=style: s, tooltip=words).add_to(group)
    return group


#: Per object, the colours of its critical and sensitive layers (the union of the objects last, grey).
DERIVED_LAYER_COLOURS = (
    ("#a61e4d", "#f783ac"),
    ("#1864ab", "#74c0fc"),
    ("#2b8a3e", "#8ce99a"),
    ("#d9480f", "#ffa94d"),
    ("#5f3dc4", "#b197fc"),
    ("#0b7285", "#66d9e8"),
)
UNION_COLOURS = ("#212529", "#868e96")
#: The tooltip of a derived area's layer (lengths and areas in the site file's unit first).
DERIVED_FIELDS = (
    "object",
    "kind",
    "area_m2",
    "reach_ahead_m",
    "reach_behind_m",
    "reach_toward_runway_m",
    "reach_away_m",
)


def derived_layers(fc: dict) -> list[tuple[str, str, str, list]]:
    """``(layer name, colour, kind, features)`` per object and kind of the derived areas, the union last."""
    names = list(dict.fromkeys(f["properties"]["object"] for f in fc["features"]))
    union = [n for n in names if n == "all objects"]
    out = []
    for k, name in enumerate([n for n in names if n not in union] + union):
        colours = UNION_COLOURS if name in union else DERIVED_LAYER_COLOURS[k % len(DERIVED_LAYER_COLOURS)]
        for kind, colour in zip(("critical", "sensitive"), colours):
            features = [
                f for f in fc["features"] if f["properties"]["object"] == name and f["properties"]["kind"] == kind
            ]
            if features:
                out.append((f"Derived {kind} area: {name}", colour, kind, features))
    return out


#: The taxiways' layers of ``mastplan areas``: (layer key, name, colour, legend shape).
TAXIWAY_LAYERS = (
    ("taxiways", "Taxiways", "#495057", "line"),
    ("taxiway_critical_stretches", "Taxiway stretches in the critical area", "#e03131", "line"),
    ("holding_positions", "Holding positions (proposed, checked)", "#000000", "dot"),
)


def derived_legend_items(layers: dict) -> list[tuple[str, str, str]]:
    """Legend rows of the derived areas (one per object and kind, in its layer's colour) and the taxiways."""
    if "derived_areas" not in layers:
        return []
    items = [(_swatch(c), name, "cells; outline dashed") for name, c, _, _ in derived_layers(layers["derived_areas"])]
    items += [
        (_swatch(c, shape), name, "") for key, name, c, shape in TAXIWAY_LAYERS if layers.get(key, {}).get("features")
    ]
    return items


def _add_taxiway_layers(fmap, layers: dict) -> None:
    """The taxiways, their stretches in the critical area and the holding positions, each a layer."""
    import folium

    for key, name, colour, shape in TAXIWAY_LAYERS:
        fc = layers.get(key)
        if not fc or not fc["features"]:
            continue
        group = folium.FeatureGroup(name=name)
        if shape == "line":
            style = {"color": colour, "weight": 4 if key != "taxiways" else 2}
            folium.GeoJson(_escaped(fc), style_function=lambda _f, s=style: s,
                           tooltip=folium.GeoJsonTooltip(fields=["name", "code"])).add_to(group)  # fmt: skip
        else:
            for f in fc["features"]:
                lon, lat = f["geometry"]["coordinates"]
                p = f["properties"]
                fill = {"proposed": "#000000", "pass": "#2b8a3e", "fail": "#e03131"}[p["kind"]]
                tip = html.escape(f"{p['name']}: {p['kind']}")
                folium.CircleMarker([lat, lon], radius=6, color="#ffffff", weight=1, fill=True, fill_color=fill,
                                    fill_opacity=1.0, tooltip=tip).add_to(group)  # fmt: skip
        group.add_to(fmap)


def add_derived_layers(fmap, unit: str, layers: dict) -> None:
    """One layer per object and kind: the cell union filled, its planner's outline dashed, in one colour."""
    import folium

    outlines = layers.get("derived_outlines", {"features": []})["features"]
    for name, colour, kind, features in derived_layers(layers["derived_areas"]):
        group = folium.FeatureGroup(name=name, show=kind == "critical" and not name.endswith(": all objects"))
        fc = _tooltip_values({"type": "FeatureCollection", "features": features}, DERIVED_FIELDS, unit)
        folium.GeoJson(
            _escaped(fc),
            style_function=lambda _f, c=colour: {"color": c, "weight": 2, "fillOpacity": 0.25},
            tooltip=folium.GeoJsonTooltip(
                fields=list(DERIVED_FIELDS), aliases=[TOOLTIP_LABELS[k] for k in DERIVED_FIELDS]
            ),
        ).add_to(group)
        mine = [f for f in outlines if f["properties"]["object"] == features[0]["properties"]["object"]
                and f["properties"]["kind"] == kind]  # fmt: skip
        if mine:
            folium.GeoJson(
                _escaped({"type": "FeatureCollection", "features": mine}),
                style_function=lambda _f, c=colour: {"color": c, "weight": 1.5, "fill": False, "dashArray": "6 4"},
            ).add_to(group)
        group.add_to(fmap)


def write_map(result: StudyResult, layers: dict[str, dict], path: Path) -> None:
    """Write ``map.html`` for a study.

    Parameters
    ----------
    result : StudyResult
    layers : dict
        The study's GeoJSON FeatureCollections (:func:`geo.outputs.geojson.study_layers`).
    path : Path
    """
    from geo.outputs.imports import import_without_dataframes

    folium = import_without_dataframes("folium")  # folium takes pandas only to accept data frames
    inlined = _Inlined()
    fmap = _base_map(result, inlined, derived_legend_items(layers))
    zones = layers["reflection_zones"]
    if result.spec.terrain is not None:
        _hillshade_overlay(result, _padded_bounds(zones), inlined).add_to(fmap)
    _add_zone_layers(fmap, result, zones)
    if "protected_areas" in layers:
        _add_protected_layers(fmap, result.spec.units, layers["protected_areas"])
    _add_runway_layers(fmap, result.spec.units, layers)
    _points_group(result).add_to(fmap)
    _mast_group(result).add_to(fmap)
    if "candidates" in layers:
        _candidates(layers["candidates"], result.spec.units).add_to(fmap)
        fmap.get_root().html.add_child(folium.Element(_candidates_legend()))
    if "derived_areas" in layers:
        add_derived_layers(fmap, result.spec.units, layers)
        _add_taxiway_layers(fmap, layers)
    if "buildings" in layers:
        from geo.outputs.buildings_out import buildings_group

        buildings_group(layers["buildings"], result.spec.units).add_to(fmap)
    if "height_contours" in layers:
        height_contours_group(layers["height_contours"], result.spec.units).add_to(fmap)
    _fit_to_opening_box(fmap, result, layers)
    folium.LayerControl(collapsed=True).add_to(fmap)
    path.write_text(_stable_ids(inlined.fill(fmap.get_root().render())), encoding="utf-8")


def _base_map(result: StudyResult, inlined: _Inlined, extra_legend=()):
    """The map centred on the mast: Leaflet inlined, the legend, and the online base map (off at first)."""
    import folium

    mast = result.mast
    fmap = folium.Map(location=[mast.lat_deg, mast.lon_deg], zoom_start=15, tiles=None, control_scale=True)
    fmap.default_js = []
    fmap.default_css = []
    fmap.get_root().header.add_child(folium.Element(inlined.element_text(_leaflet_inline())), name="leaflet_inline")
    fmap.get_root().html.add_child(folium.Element(_legend(result, extra_legend)))
    folium.TileLayer(
        "OpenStreetMap", name="Online base map (OpenStreetMap, needs internet)", overlay=True, show=False
    ).add_to(fmap)
    return fmap


def _padded_bounds(zones: dict) -> tuple[float, float, float, float]:
    """West, south, east and north of the reflection zones, with a margin. [deg]"""
    lons = [c[0] for f in zones["features"] for ring in _rings(f["geometry"]) for c in ring]
    lats = [c[1] for f in zones["features"] for ring in _rings(f["geometry"]) for c in ring]
    pad = 0.002
    return (min(lons) - pad, min(lats) - pad, max(lons) + pad, max(lats) + pad)


def _add_layer(fmap, unit: str, name: str, fc: dict, style: dict, fields=(), show: bool = True) -> None:
    """One FeatureCollection as a layer of its own, with a tooltip of ``fields`` when given."""
    import folium

    group = folium.FeatureGroup(name=name, show=show)
    tooltip = None
    if fields:
        fc = _tooltip_values(fc, fields, unit)
        tooltip = folium.GeoJsonTooltip(fields=list(fields), aliases=[TOOLTIP_LABELS[k] for k in fields])
    folium.GeoJson(_escaped(fc), style_function=lambda _f, s=style: s, tooltip=tooltip).add_to(group)
    group.add_to(fmap)


def _add_zone_layers(fmap, result: StudyResult, zones: dict) -> None:
    """A layer per kind of reflection zone and antenna: coverage zones (hidden at first), then path zones."""
    for kind, dash, fill in (("coverage", "6 4", 0.08), ("path", None, 0.25)):
        for antenna in [a.role for a in result.antennas]:
            fc = {
                "type": "FeatureCollection",
                "features": [
                    f
                    for f in zones["features"]
                    if f["properties"]["kind"] == kind and f["properties"]["antenna"] == antenna
                ],
            }
            _add_layer(
                fmap,
                result.spec.units,
                zone_layer_name(kind, antenna),
                fc,
                {"color": ZONE_COLOURS[antenna], "weight": 1.5, "fillOpacity": fill, "dashArray": dash},
                ("kind", "antenna", "near_m", "far_m", "max_half_width_m", "area_m2"),
                show=kind == "path",
            )


def _add_protected_layers(fmap, unit: str, protected: dict) -> None:
    """A layer per kind of the site file's protected areas that has any."""
    for kind in ("critical", "sensitive"):
        fc = {
            "type": "FeatureCollection",
            "features": [f for f in protected["features"] if f["properties"]["kind"] == kind],
        }
        if fc["features"]:
            _add_layer(
                fmap,
                unit,
                protected_layer_name(kind),
                fc,
                {"color": AREA_COLOURS[kind], "weight": 2, "fillOpacity": 0.05},
                ("name", "kind", "area_m2"),
            )


def _add_runway_layers(fmap, unit: str, layers: dict[str, dict]) -> None:
    """The runway, its centre line and the extended centre line."""
    _add_layer(
        fmap,
        unit,
        RUNWAY_LAYER,
        layers["runway"],
        RUNWAY_STYLE,
        ("name", "length_m", "width_m", "true_bearing_deg"),
    )
    _add_layer(fmap, unit, CENTRELINE_LAYER, layers["centreline"], CENTRELINE_STYLE)
    _add_layer(fmap, unit, EXTENDED_LAYER, layers["extended_centreline"], EXTENDED_STYLE)


def _points_group(result: StudyResult):
    """The threshold and the GPIP as dots with their popups."""
    import folium

    _len = _lengths(result.spec.units)
    points = folium.FeatureGroup(name=POINTS_LAYER)
    thr = result.spec.threshold
    marker = folium.CircleMarker(
        [thr.lat_deg, thr.lon_deg],
        radius=5,
        color=THRESHOLD_COLOUR,
        fill=True,
        fill_opacity=1,
        class_name="mastplan-threshold",
    )
    marker.add_child(_popup(f"<b>Threshold</b><br>elevation {_len(thr.elevation_m)}<br>RDH {_len(result.rdh_m)}"))
    marker.add_to(points)
    marker = folium.CircleMarker(
        [result.gpip.lat_deg, result.gpip.lon_deg], radius=5, color=GPIP_COLOUR, fill=True, class_name="mastplan-gpip"
    )
    gpip = result.gpip.along_m
    marker.add_child(_popup(f"<b>GPIP</b><br>{_len(abs(gpip), 1)} {past_or_before(gpip)} the threshold"))
    marker.add_to(points)
    return points


def _mast_group(result: StudyResult):
    """The mast as a triangle (the threshold and the GPIP are dots) whose popup lists the antennas."""
    import folium

    mast = result.mast
    mast_group = folium.FeatureGroup(name=MAST_LAYER)
    icon = folium.DivIcon(
        html=(
            "<svg width='18' height='18' style='display:block'>"
            f"<path class='mastplan-mast' d='{MAST_TRIANGLE}' fill='{MAST_COLOUR}' fill-opacity='0.9' "
            "stroke='#ffffff' stroke-width='1.5'/></svg>"
        ),
        icon_size=(18, 18),
        icon_anchor=(9, 11),
        class_name="mastplan-mast-icon",
    )
    marker = folium.Marker([mast.lat_deg, mast.lon_deg], icon=icon, tooltip="glide path mast")
    marker.add_child(_popup(_mast_popup(result), 520))
    marker.add_to(mast_group)
    return mast_group


def opening_box(result: StudyResult, layers: dict[str, dict]) -> tuple[float, float, float, float]:
    """What the map opens on: the runway, the mast, the path zones and the protected areas.

    Not the coverage zones (hidden at first, kilometres long) nor the hillshade.

    Parameters
    ----------
    result : StudyResult
    layers : dict
        The study's GeoJSON FeatureCollections.

    Returns
    -------
    tuple of float
        West, south, east, north. [deg]
    """
    features = [f for f in layers["reflection_zones"]["features"] if f["properties"]["kind"] == "path"]
    features += layers["runway"]["features"] + layers.get("protected_areas", {"features": []})["features"]
    points = [c for f in features for ring in _rings(f["geometry"]) for c in ring]
    points += [(result.mast.lon_deg, result.mast.lat_deg), (result.gpip.lon_deg, result.gpip.lat_deg)]
    points += [(result.spec.threshold.lon_deg, result.spec.threshold.lat_deg)]
    lons, lats = [p[0] for p in points], [p[1] for p in points]
    return (min(lons), min(lats), max(lons), max(lats))


def _fit_to_opening_box(fmap, result: StudyResult, layers: dict[str, dict]) -> None:
    """Open on the runway, the mast and the zones (:func:`opening_box`)."""
    west, south, east, north = opening_box(result, layers)
    fmap.fit_bounds([[south, west], [north, east]], padding=(30, 30))


def _stable_ids(page: str) -> str:
    """Replace folium's random element ids with numbers in order of appearance (same input, same file)."""
    seen: dict[str, str] = {}

    def number(match: re.Match) -> str:
        return seen.setdefault(match.group(0), f"{len(seen):032d}")

    return re.sub(r"(?<=_)[0-9a-f]{32}(?![0-9a-f])", number, page)


#: matplotlib's viridis colour map (perceptually uniform, readable with colour-blindness) at 17
#: even steps from 0 to 1; scores between two steps are interpolated.
VIRIDIS = (
    "#440154", "#48186a", "#472d7b", "#424086", "#3b528b", "#33638d", "#2c728e", "#26828e", "#21918c",
    "#1fa088", "#28ae80", "#3fbc73", "#5ec962", "#84d44b", "#addc30", "#d8e219", "#fde725",
)  # fmt: skip
#: The colour of candidates without a score (infeasible).
NO_SCORE_COLOUR = "#adb5bd"


def _score_colour(score) -> str:
    """The viridis colour of a score from 0 (dark purple) to 100 (yellow); grey without a score."""
    if score is None:
        return NO_SCORE_COLOUR
    t = max(0.0, min(1.0, score / 100.0)) * (len(VIRIDIS) - 1)
    i = min(int(t), len(VIRIDIS) - 2)
    low, high = (tuple(int(c[k : k + 2], 16) for k in (1, 3, 5)) for c in VIRIDIS[i : i + 2])
    rgb = (round(a + (b - a) * (t - i)) for a, b in zip(low, high))
    return "#" + "".join(f"{v:02x}" for v in rgb)


def _candidates(fc: dict, unit: str = "m"):
    import folium

    group = folium.FeatureGroup(name="Sweep candidates (coloured by score)")
    for f in fc["features"]:
        p = f["properties"]
        lon, lat = f["geometry"]["coordinates"]
        score = "none" if p["score"] is None else f"{p['score']:.1f}"
        rank = f"rank {p['rank']}; " if p.get("rank") is not None else ""
        text = (
            f"{rank}{html.escape(str(p['side']))} side, setback {format_length(p['setback_m'], unit, 1)}, "
            f"offset {format_length(p['offset_m'], unit, 1)}; RDH {format_length(p['rdh_m'], unit)}; "
            f"score {score}; {html.escape(p['reasons'] or 'feasible')}"
        )
        folium.CircleMarker(
            [lat, lon],
            radius=6 if p.get("best") else 3,
            color=_score_colour(p["score"]),
            fill=True,
            fill_opacity=0.9,
            weight=2 if p.get("best") else 0,
            tooltip=text,
            class_name="mastplan-candidate",
        ).add_to(group)
    return group


def _rings(geometry: dict):
    if geometry["type"] == "Polygon":
        return geometry["coordinates"]
    return [ring for poly in geometry["coordinates"] for ring in poly]


def _candidates_legend() -> str:
    """The score ramp of the sweep's candidate dots, beside the map's legend."""
    steps = "".join(
        f"<span style='display:inline-block;width:14px;height:10px;background:{_score_colour(v)}'></span>"
        for v in (0, 20, 40, 60, 80, 100)
    )
    return (
        "<div class='mastplan-score-legend' style='position:fixed;bottom:48px;left:10px;z-index:1000;"
        "background:#fff;padding:6px 8px;border:1px solid #999;border-radius:4px;font:12px sans-serif'>"
        f"<b>Sweep candidates: score (viridis)</b><br>0 {steps} 100<br>"
        f"<span style='display:inline-block;width:10px;height:10px;border-radius:5px;background:{_score_colour(None)}'>"
        "</span> infeasible; large dot: best</div>"
    )
