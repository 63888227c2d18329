"""The site plan of the report (``site_plan.png``): the runway, the mast and its areas seen from above.

Drawn with matplotlib from the study's GeoJSON layers (:func:`geo.outputs.geojson.study_layers`, the
polygons the map shows) in the runway frame's transverse Mercator (:class:`geo.airfield.frame.RunwayFrame`),
so that one unit of the figure is one metre on the ground near the runway (scale error below 1.3e-6):
the runway, the mast, the threshold and the GPIP, the reflection zones (path zones filled, coverage
zones dashed), the site file's protected areas and the derived areas when the layers hold them, over
the DEM's hillshade when there is a DEM (warped onto the frame's grid, :meth:`geo.ground.dem.Dem.warped`,
shaded as on the map). Grid north is up; the north arrow points to true north at the mast. The
scale bar is a round length in the site file's unit, labelled in both units, that unit first
(:func:`geo.units.format_length`). The PNG carries no date or version (:func:`geo.outputs.plots._save`).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from geo.outputs.plots import _figure, _save, _title
from geo.outputs.webmap import (
    _EXAGGERATION,
    AREA_COLOURS,
    DERIVED_AREA_COLOURS,
    GPIP_COLOUR,
    MAST_COLOUR,
    RUNWAY_LAYER,
    THRESHOLD_COLOUR,
    ZONE_COLOURS,
    protected_layer_name,
    zone_layer_name,
)
from geo.study.site_study import StudyResult
from geo.units import M_PER_FT, format_length

__all__ = ["site_plan_figure", "write_site_plan", "SCALE_BAR_GID", "SCALE_LABEL_GID", "RUNWAY_GID"]

#: The ``gid`` of the scale bar's segments, of its label and of the runway's outline (tests read them).
SCALE_BAR_GID = "scale-bar"
SCALE_LABEL_GID = "scale-bar-label"
RUNWAY_GID = "runway"
#: Space left around what is drawn, as a share of its width and height.
_MARGIN = 0.08
#: Largest side of the hillshade in cells.
_SHADE_CELLS = 800


def _rings(geometry: dict) -> list:
    """The rings (or lines) of a GeoJSON geometry, each a list of [lon, lat]."""
    kind, coords = geometry["type"], geometry["coordinates"]
    if kind == "Point":
        return [[coords]]
    if kind in ("LineString",):
        return [coords]
    if kind in ("Polygon", "MultiLineString"):
        return list(coords)
    return [ring for poly in coords for ring in poly]


def _to_frame(frame, ring) -> np.ndarray:
    """[lon, lat] pairs to the frame's transverse Mercator (east, north), shape (n, 2). [m]"""
    lonlat = np.asarray(ring, dtype=float).reshape(-1, 2)
    along, cross = frame.to_plane(lonlat[:, 1], lonlat[:, 0])
    east, north = frame.to_tm(along, cross)
    return np.column_stack([np.atleast_1d(east), np.atleast_1d(north)])


def _features(layers: dict, name: str, **where) -> list[dict]:
    """The features of a layer whose properties match ``where`` (none when the layer is missing)."""
    fc = layers.get(name, {"features": []})
    return [f for f in fc["features"] if all(f["properties"].get(k) == v for k, v in where.items())]


def _draw_polygons(ax, frame, features, label: str, **style) -> list[np.ndarray]:
    """Every ring of ``features`` as a polygon (one legend entry); the rings in metres."""
    from matplotlib.patches import Polygon

    drawn = []
    for f in features:
        for ring in _rings(f["geometry"]):
            xy = _to_frame(frame, ring)
            ax.add_patch(Polygon(xy, closed=True, label=label if not drawn else "_nolegend_", **style))
            drawn.append(xy)
    return drawn


def _draw_areas(ax, result: StudyResult, layers: dict) -> list[np.ndarray]:
    """The runway, the reflection zones, the protected and derived areas; every ring drawn, in metres."""
    frame = result.runway.frame
    drawn = _draw_polygons(
        ax, frame, _features(layers, "runway"), RUNWAY_LAYER, facecolor="#868e96", edgecolor="#495057", lw=0.8, zorder=3
    )
    ax.patches[-1].set_gid(RUNWAY_GID)
    for kind, dash, fill in (("coverage", (0, (5, 3)), 0.0), ("path", "solid", 0.25)):
        for a in result.antennas:
            colour = ZONE_COLOURS[a.role]
            drawn += _draw_polygons(
                ax,
                frame,
                _features(layers, "reflection_zones", kind=kind, antenna=a.role),
                zone_layer_name(kind, a.role),
                facecolor=(colour, fill),
                edgecolor=colour,
                ls=dash,
                lw=1.2,
                zorder=4,
            )
    for kind in ("critical", "sensitive"):
        drawn += _draw_polygons(
            ax,
            frame,
            _features(layers, "protected_areas", kind=kind),
            protected_layer_name(kind),
            facecolor=(AREA_COLOURS[kind], 0.05),
            edgecolor=AREA_COLOURS[kind],
            lw=1.6,
            zorder=5,
        )
    for kind in ("sensitive", "critical"):
        drawn += _draw_polygons(
            ax,
            frame,
            _features(layers, "derived_areas", kind=kind),
            f"Derived {kind} area (mastplan areas)",
            facecolor=(DERIVED_AREA_COLOURS[kind], 0.12),
            edgecolor=DERIVED_AREA_COLOURS[kind],
            ls=(0, (2, 3)),
            lw=1.6,
            zorder=5,
        )
    drawn += _draw_polygons(ax, frame, _features(layers, "buildings"), "Buildings (site file)",
                            facecolor=("#5f3dc4", 0.35), edgecolor="#5f3dc4", lw=1.2, zorder=6)  # fmt: skip
    return drawn


def _draw_points(ax, result: StudyResult, layers: dict) -> None:
    """The extended centre line, the threshold, the GPIP and the mast."""
    frame = result.runway.frame
    for f in _features(layers, "extended_centreline") + _features(layers, "centreline"):
        for line in _rings(f["geometry"]):
            xy = _to_frame(frame, line)
            ax.plot(xy[:, 0], xy[:, 1], color="#343a40", lw=0.8, ls=(0, (4, 4)), zorder=6, label="_nolegend_")
    thr, gpip, mast = result.spec.threshold, result.gpip, result.mast
    points = (
        (thr.lat_deg, thr.lon_deg, "o", THRESHOLD_COLOUR, 6, "Threshold"),
        (gpip.lat_deg, gpip.lon_deg, "o", GPIP_COLOUR, 6, "GPIP"),
        (mast.lat_deg, mast.lon_deg, "^", MAST_COLOUR, 10, "Glide path mast"),
    )
    for lat, lon, marker, colour, size, label in points:
        xy = _to_frame(frame, [[lon, lat]])
        ax.plot(xy[:, 0], xy[:, 1], marker, color=colour, ms=size, mec="white", zorder=8, label=label)


def _draw_hillshade(ax, result: StudyResult, box) -> None:
    """The DEM's hillshade over ``box`` (west, south, east, north in degrees), on the frame's grid."""
    from geo.ground.dem import Dem
    from geo.ground.hillshade import hillshade

    frame = result.runway.frame
    with Dem.open(result.spec.terrain) as dem:
        z, (x0, y0, x1, y1), cell = dem.warped(*box, frame.crs.to_wkt(), max_size=_SHADE_CELLS)
    shade = hillshade(z * _EXAGGERATION, cell, cell)
    ax.imshow(
        shade, extent=(x0, x1, y0, y1), origin="upper", cmap="gray", vmin=-0.3, vmax=1.0, interpolation="bilinear"
    )


def _degree_box(frame, limits) -> tuple[float, float, float, float]:
    """West, south, east and north of the figure's frame (``limits``, metres east and north). [deg]"""
    (x0, x1), (y0, y1) = limits
    east, north = np.array([x0, x1, x1, x0]), np.array([y0, y0, y1, y1])
    ue, un = frame.to_tm(1.0, 0.0)  # the runway's direction in the plane: to_tm turned back
    lat, lon = frame.to_geographic(east * ue + north * un, east * un - north * ue)
    return (float(lon.min()), float(lat.min()), float(lon.max()), float(lat.max()))


def _nice_length(target: float) -> float:
    """The largest 1, 2 or 5 times a power of ten not above ``target`` (``target`` > 0)."""
    power = 10.0 ** np.floor(np.log10(target))
    return max(step * power for step in (1.0, 2.0, 5.0) if step * power <= target)


def _draw_scale_bar(ax, unit: str, limits) -> float:
    """A scale bar of a round length in ``unit`` at the lower left, in four segments; its length. [m]"""
    from matplotlib.patches import Rectangle

    (x0, x1), (y0, y1) = limits
    per_unit = 1.0 if unit == "m" else M_PER_FT
    length_m = _nice_length(0.25 * (x1 - x0) / per_unit) * per_unit
    left, bottom, height = x0 + 0.04 * (x1 - x0), y0 + 0.06 * (y1 - y0), 0.012 * (y1 - y0)
    for k in range(4):
        ax.add_patch(
            Rectangle(
                (left + k * length_m / 4, bottom),
                length_m / 4,
                height,
                facecolor="black" if k % 2 == 0 else "white",
                edgecolor="black",
                lw=0.8,
                zorder=9,
                gid=SCALE_BAR_GID,
            )
        )
    text = ax.text(left + length_m / 2, bottom - 0.5 * height, format_length(length_m, unit, 0), ha="center", va="top")
    text.set_gid(SCALE_LABEL_GID)
    text.set_bbox({"facecolor": "white", "edgecolor": "none", "alpha": 0.8, "pad": 1.5})
    text.set_zorder(9)
    return length_m


def _draw_north_arrow(ax, result: StudyResult, limits) -> None:
    """An arrow toward true north at the mast (grid north, up, differs by the meridians' convergence)."""
    frame, mast = result.runway.frame, result.mast
    base = _to_frame(frame, [[mast.lon_deg, mast.lat_deg], [mast.lon_deg, mast.lat_deg + 0.001]])
    east, north = base[1] - base[0]
    (x0, x1), (y0, y1) = limits
    size = 0.08 * (y1 - y0)
    tip = np.array([x1 - 0.06 * (x1 - x0), y1 - 0.05 * (y1 - y0)])
    tail = tip - size * np.array([east, north]) / np.hypot(east, north)
    ax.annotate("", xy=tip, xytext=tail, arrowprops={"arrowstyle": "-|>", "color": "black", "lw": 1.5}, zorder=9)
    ax.text(tail[0], tail[1] - 0.01 * (y1 - y0), "N", ha="center", va="top", fontsize=12, weight="bold", zorder=9)


def site_plan_figure(result: StudyResult, layers: dict):
    """The site plan as a matplotlib figure, its data coordinates metres east and north of the threshold.

    Parameters
    ----------
    result : StudyResult
    layers : dict
        The study's GeoJSON FeatureCollections (:func:`geo.outputs.geojson.study_layers`), with
        ``derived_areas`` when there are any.

    Returns
    -------
    matplotlib.figure.Figure
    """
    fig, (ax,) = _figure(11, 8.5)
    fig.subplots_adjust(left=0.02, right=0.98, top=0.94, bottom=0.02)
    drawn = np.vstack(_draw_areas(ax, result, layers))
    _draw_points(ax, result, layers)
    lo, hi = drawn.min(axis=0), drawn.max(axis=0)
    pad = _MARGIN * (hi - lo)
    # The box of the figure's frame: 11 by 8.5 inches less the margins, so that metres are square.
    aspect = (0.92 * 8.5) / (0.96 * 11.0)
    centre, half = (lo + hi) / 2.0, (hi - lo) / 2.0 + pad
    half = np.array([max(half[0], half[1] / aspect), max(half[1], half[0] * aspect)])
    limits = ((centre[0] - half[0], centre[0] + half[0]), (centre[1] - half[1], centre[1] + half[1]))
    if result.spec.terrain is not None:
        _draw_hillshade(ax, result, _degree_box(result.runway.frame, limits))
    ax.set_xlim(*limits[0])
    ax.set_ylim(*limits[1])
    ax.set_aspect("equal", adjustable="box")
    ax.set_xticks([])
    ax.set_yticks([])
    _draw_scale_bar(ax, result.spec.units, limits)
    _draw_north_arrow(ax, result, limits)
    shade = f"; hillshade of the DEM, heights exaggerated {_EXAGGERATION:g} times" if result.spec.terrain else ""
    _title(ax, f"{result.spec.name}: site plan (grid north up{shade})")
    ax.legend(loc="upper left", fontsize=8, framealpha=0.9)
    return fig


def write_site_plan(result: StudyResult, layers: dict, path: Path) -> None:
    """Write the site plan (``site_plan.png``) of a study; see :func:`site_plan_figure`."""
    _save(site_plan_figure(result, layers), path)
