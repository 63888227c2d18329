"""Writers of ``mastplan building-heights``: GeoTIFFs, contours, map, PNG, summary and the table per cell.

Every writer reads a :class:`geo.optics.building_heights.HeightMap` and recomputes nothing.

- ``allowed_height_above_ground.tif`` and ``allowed_height_above_datum.tif``: one band per
  orientation and a last band with the lower of them; metres, the foot factor and the datum in the
  metadata; the grid is the mast frame's (rotated with the runway) in the runway frame's transverse
  Mercator; NaN where the footprint would stand on the mast.
- ``layers/height_contours.geojson``, ``height_contours.gpkg``, ``height_contours.kml``: contours of
  the lower allowed height above the ground.
- ``map.html`` (the contours over the hillshade, with the study's layers), ``allowed_heights.png``.
- ``summary.json``, ``cells.csv`` (per cell and orientation: allowed height, share, limiting segment).
"""

from __future__ import annotations

import csv
import math
from pathlib import Path

import numpy as np

from geo.optics.building_heights import HEIGHTS_CAUTION, HeightMap
from geo.units import M_PER_FT, with_foot_twins
from geo.version import __version__

__all__ = [
    "CONTOUR_LEVELS_M",
    "write_geotiffs",
    "contour_layer",
    "plot_heights",
    "heights_summary",
    "write_cells_csv",
    "write_heights",
]

#: Contours of allowed height above the ground. [m]
CONTOUR_LEVELS_M = (5.0, 10.0, 15.0, 20.0, 30.0, 40.0, 60.0, 80.0)


def _to_geographic(hm: HeightMap, u, w):
    mast = hm.study.mast
    sign = 1.0 if mast.side == "right" else -1.0
    return hm.study.runway.frame.to_geographic(mast.setback_m - np.asarray(u), sign * (mast.offset_m - np.asarray(w)))


def _transform(hm: HeightMap):
    """The affine of the raster (row 0 the cells farthest toward the runway) into the frame's TM. [m]"""
    from rasterio.transform import Affine

    mast = hm.study.mast
    sign = 1.0 if mast.side == "right" else -1.0
    step = hm.settings.step_m
    u0, w0 = hm.u_m[0] - step / 2, hm.w_m[-1] + step / 2  # the outer corner of pixel (0, 0)
    frame = hm.study.runway.frame

    def tm(u, w):
        e, n = frame.to_tm(mast.setback_m - u, sign * (mast.offset_m - w))
        return float(e), float(n)

    c = tm(u0, w0)
    col = tm(u0 + step, w0)
    row = tm(u0, w0 - step)
    return Affine(col[0] - c[0], row[0] - c[0], c[0], col[1] - c[1], row[1] - c[1], c[1])


def _bands(hm: HeightMap, above_datum: bool) -> tuple[np.ndarray, list[str]]:
    values = [m.height_m for m in hm.maps] + [hm.lowest_m]
    names = [f"length {m.orientation} the runway" for m in hm.maps] + ["lower of the orientations"]
    ground = hm.ground_elevation_m.ravel() if above_datum else 0.0
    bands = np.stack([hm.grid(v + ground)[::-1] for v in values]).astype("float32")  # row 0: largest w
    return bands, names


def write_geotiffs(hm: HeightMap, folder: Path) -> None:
    """The allowed heights above the ground and above the survey datum, one band per orientation (module notes)."""
    import rasterio

    crs = hm.study.runway.frame.crs.to_wkt()
    s = hm.settings
    for name, above in (("allowed_height_above_ground.tif", False), ("allowed_height_above_datum.tif", True)):
        bands, names = _bands(hm, above)
        profile = dict(driver="GTiff", width=bands.shape[2], height=bands.shape[1], count=bands.shape[0],
                       dtype="float32", crs=crs, transform=_transform(hm), nodata=float("nan"),
                       compress="deflate")  # fmt: skip
        with rasterio.open(folder / name, "w", **profile) as dst:
            dst.write(bands)
            datum = hm.study.spec.vertical_datum or "the site file's elevations (no datum named)"
            dst.update_tags(
                UNITS="metre",
                FEET_PER_UNIT=f"{1.0 / M_PER_FT:.6f}",
                HEIGHT="above the survey datum: " + datum if above else "above the ground at the cell",
                FOOTPRINT=f"{s.length_m:g} m x {s.width_m:g} m ({s.footprint_source})",
                SHARE_OF_LIMIT=f"{s.share:g}",
                AT_LEAST=f"{s.max_height_m:g} m where the value equals it (the bracket's top)",
                CAUTION=HEIGHTS_CAUTION,
            )
            for i, words in enumerate(names, start=1):
                dst.set_band_description(i, words)
                dst.update_tags(i, units="metre")


def _levels(hm: HeightMap) -> list[float]:
    return [v for v in CONTOUR_LEVELS_M if hm.settings.min_height_m <= v < hm.settings.max_height_m]


def contour_layer(hm: HeightMap) -> dict:
    """Contours of the lower allowed height above the ground, GeoJSON lines in WGS 84 (RFC 7946)."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    from geo.outputs.geojson import _coord, collection, feature

    z = np.nan_to_num(hm.grid(hm.lowest_m), nan=0.0)
    levels = _levels(hm)
    features = []
    if levels and np.nanmax(z) > min(levels) and np.nanmin(z) < max(levels):
        fig, ax = plt.subplots()
        try:
            cs = ax.contour(hm.u_m, hm.w_m, z, levels=levels)
            for level, segs in zip(cs.levels, cs.allsegs):
                for seg in segs:
                    if len(seg) < 2:
                        continue
                    lat, lon = _to_geographic(hm, seg[:, 0], seg[:, 1])
                    line = {"type": "LineString", "coordinates": [_coord(a, o) for a, o in zip(lat, lon)]}
                    props = {"allowed_height_m": float(level), "allowed_height_ft": round(float(level) / M_PER_FT, 2)}
                    features.append(feature(line, props))
        finally:
            plt.close(fig)
    return collection(features)


def plot_heights(hm: HeightMap, path: Path) -> None:
    """``allowed_heights.png``: the lower allowed height above the ground in the mast frame, with its contours."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    unit = hm.study.spec.units
    scale = 1.0 if unit == "m" else 1.0 / M_PER_FT
    z = hm.grid(hm.lowest_m) * scale
    fig, ax = plt.subplots(figsize=(8, 7), dpi=110)
    try:
        mesh = ax.pcolormesh(hm.u_m, hm.w_m, z, shading="nearest", cmap="viridis", vmin=0,
                             vmax=hm.settings.max_height_m * scale)  # fmt: skip
        levels = [v * scale for v in _levels(hm)]
        if levels and np.nanmax(z) > min(levels):
            cs = ax.contour(hm.u_m, hm.w_m, np.nan_to_num(z), levels=levels, colors="white", linewidths=0.8)
            ax.clabel(cs, fmt="%g", fontsize=7)
        fig.colorbar(mesh, ax=ax, label=f"allowed building height above the ground [{unit}]")
        ax.plot(0, 0, "r^", label="mast")
        ax.axhline(hm.study.mast.offset_m, color="k", lw=0.8, ls="--", label="runway centre line")
        ax.set_xlabel("toward the approach from the mast [m]")
        ax.set_ylabel("toward the runway from the mast [m]")
        s = hm.settings
        ax.set_title(f"Building restricted area: {s.length_m:g} m x {s.width_m:g} m footprint,\nlower of "
                     f"{' and '.join(s.orientations)}, share {s.share:g} of the limits", fontsize=9)  # fmt: skip
        ax.set_aspect("equal")
        ax.legend(loc="lower left", fontsize=7)
        fig.text(0.01, 0.01, HEIGHTS_CAUTION, fontsize=6, wrap=True)
        fig.savefig(path, metadata={"Software": None})
    finally:
        plt.close(fig)


def _orientation_summary(hm: HeightMap, m) -> dict:
    h = m.height_m
    computed = np.isfinite(h)
    return {
        "orientation": m.orientation,
        "cells": int(h.size),
        "cells_on_the_mast": int((~computed).sum()),
        "cells_at_least_max_height": int((h == hm.settings.max_height_m).sum()),
        "cells_allowed_nothing": int((h == 0.0).sum()),
        "lowest_allowed_height_m": float(np.nanmin(h)) if computed.any() else None,
        "cell_evaluations": m.evaluations,
        "evaluations_per_cell": round(m.evaluations / max(int(computed.sum()), 1), 3),
    }


def heights_summary(hm: HeightMap) -> dict:
    """``summary.json`` of ``mastplan building-heights`` (foot twins, stable key order, no timestamps)."""
    from geo.optics.buildings import SHADOW_NOTE
    from geo.radio.structure_limits import LIMITS_SOURCE

    spec, s = hm.study.spec, hm.settings
    body = {
        "site": {"name": spec.name},
        "tool": {"name": "mastplan", "version": __version__, "command": "building-heights"},
        "input": {"file": Path(spec.source).name if spec.source else "", "sha256": spec.sha256, "units": spec.units},
        "term": "building restricted area",
        "footprint": {"length_m": s.length_m, "width_m": s.width_m, "source": s.footprint_source,
                      "orientations": list(s.orientations)},  # fmt: skip
        "grid": {"extent_m": s.extent_m, "step_m": s.step_m, "cells": int(hm.u_m.size * hm.w_m.size),
                 "frame": "mast frame: u toward the approach, w toward the runway, from the mast's foot"},  # fmt: skip
        "share_of_limit": s.share,
        "share_source": s.share_source,
        "bracket": {"min_height_m": s.min_height_m, "max_height_m": s.max_height_m, "resolution_m": s.resolution_m,
                    "method": "all cells at the top, the failing ones at the bottom, then bisection; the lower end "
                              "kept"},
        "ground": "DEM" if hm.study.spec.terrain is not None else "flat ground (the reflecting plane)",
        "orientations": [_orientation_summary(hm, m) for m in hm.maps],
        "segments": [seg.name for seg in hm.segments],
        "limits_source": LIMITS_SOURCE,
        "model": SHADOW_NOTE,
        "screening": hm.screening,
        "caution": HEIGHTS_CAUTION,
    }  # fmt: skip
    return with_foot_twins(body)


def write_cells_csv(hm: HeightMap, path: Path) -> None:
    """``cells.csv``: per cell and orientation, the allowed height, the share there and the limiting segment."""
    uu, ww = np.meshgrid(hm.u_m, hm.w_m)
    u, w = uu.ravel(), ww.ravel()
    lat, lon = _to_geographic(hm, u, w)
    ground = hm.ground_elevation_m.ravel()
    names = [seg.name for seg in hm.segments]
    with path.open("w", newline="", encoding="utf-8") as fh:
        out = csv.writer(fh)
        out.writerow(["ahead_of_mast_m", "toward_runway_m", "lat", "lon", "ground_elevation_m", "orientation",
                      "allowed_height_m", "allowed_height_ft", "allowed_elevation_m", "share_of_limit",
                      "limiting_segment"])  # fmt: skip
        for m in hm.maps:
            for i in range(u.size):
                h = m.height_m[i]
                if not math.isfinite(h):
                    row = ["", "", "", "", "on the mast"]
                else:
                    seg = names[m.limiting_segment[i]] if m.limiting_segment[i] >= 0 else ""
                    row = [f"{h:.1f}", f"{h / M_PER_FT:.1f}", f"{ground[i] + h:.2f}", f"{m.share[i]:.4f}", seg]
                out.writerow([f"{u[i]:.1f}", f"{w[i]:.1f}", f"{lat[i]:.7f}", f"{lon[i]:.7f}", f"{ground[i]:.2f}",
                              m.orientation, *row])  # fmt: skip


def write_heights(hm: HeightMap, out_dir, overwrite: bool = False) -> Path:
    """Write every output of ``mastplan building-heights`` into ``out_dir``, atomically (module notes)."""
    from geo.outputs.geojson import study_layers
    from geo.outputs.gpkg import write_gpkg
    from geo.outputs.kml import write_kml
    from geo.outputs.webmap import write_map
    from geo.outputs.write import atomic_folder, write_json

    spec = hm.study.spec
    inputs = [Path(spec.source)] if spec.source else []

    def fill(folder: Path) -> None:
        contours = contour_layer(hm)
        write_json(folder / "summary.json", heights_summary(hm))
        (folder / "layers").mkdir()
        write_json(folder / "layers" / "height_contours.geojson", contours, compact=True)
        write_gpkg({"height_contours": contours}, folder / "height_contours.gpkg")
        write_kml(f"{spec.name}: allowed building heights", {"height_contours": contours},
                  folder / "height_contours.kml", spec.units)  # fmt: skip
        write_geotiffs(hm, folder)
        write_cells_csv(hm, folder / "cells.csv")
        plot_heights(hm, folder / "allowed_heights.png")
        write_map(hm.study, {**study_layers(hm.study), "height_contours": contours}, folder / "map.html")

    return atomic_folder(out_dir, overwrite, fill, inputs)
