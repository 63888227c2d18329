"""A printable study report (``report.html``): the key figures, findings and cautions on one page.

Every text from the site file is HTML-escaped; the plots are linked, not embedded.
"""

from __future__ import annotations

import html
from pathlib import Path

from geo.outputs.text import past_or_before, skipped_words
from geo.study.findings import CAUTIONS
from geo.study.site_study import StudyResult
from geo.units import format_area, format_length

__all__ = ["write_report"]

_STYLE = """body{font:14px/1.4 sans-serif;max-width:60em;margin:2em auto;color:#222}
table{border-collapse:collapse;margin:.5em 0 1.5em}td,th{border:1px solid #bbb;padding:.25em .6em;text-align:left}
.pass{color:#2b8a3e}.info{color:#1864ab}.warning{color:#e67700}.fail{color:#c92a2a;font-weight:bold}
.caution{border:2px solid #e67700;padding:.6em 1em;background:#fff4e6}img{max-width:100%}"""


def _lengths(unit: str):
    """``_len(value_m, decimals)`` in the site file's unit first (:func:`geo.units.format_length`)."""

    def _len(value_m: float, decimals: int = 2) -> str:
        return format_length(value_m, unit, decimals)

    return _len


def _rows(pairs) -> str:
    return "".join(f"<tr><th>{html.escape(k)}</th><td>{html.escape(v)}</td></tr>" for k, v in pairs)


def write_report(result: StudyResult, path: Path, plots: bool) -> None:
    """Write ``report.html`` next to the other outputs of the study."""
    spec = result.spec
    figures = _key_figures(result) + _prediction_figures(result)
    page = f"""<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><title>mastplan study: {html.escape(spec.name)}</title>
<style>{_STYLE}</style></head><body>
<h1>Glide path siting study: {html.escape(spec.name)}</h1>
<p>{html.escape(spec.notes)}</p>
<div class="caution">{"<br>".join(html.escape(c) for c in CAUTIONS)}</div>
<h2>Key figures</h2><table>{_rows(figures)}</table>
<h2>Antennas</h2><table><tr><th>antenna</th><th>height above the reflecting plane</th>
<th>shift toward the runway</th><th>position (WGS 84)</th></tr>{_antenna_rows(result)}</table>
<h2>Findings</h2><ul>{_finding_items(result)}</ul>
<h2>Reflection zones</h2><table><tr><th>antenna</th><th>kind</th><th>nearest</th><th>farthest</th>
<th>largest half-width</th><th>area</th></tr>{_zone_rows(result)}</table>
{_images(result, plots)}
<p>Input file {html.escape(Path(spec.source).name if spec.source else "(in code)")}, SHA-256
{html.escape(spec.sha256)}. Layers: layers/*.geojson, site.gpkg, site.kml; interactive map: map.html.</p>
</body></html>
"""
    path.write_text(page, encoding="utf-8")


def _key_figures(result: StudyResult) -> list[tuple[str, str]]:
    """The figures every study has: channel, runway, mast, RDH, path over the threshold, GPIP."""
    spec, mast, ch = result.spec, result.mast, result.channel
    _len = _lengths(spec.units)
    loc = f" (localizer {ch.localizer_mhz:.2f} MHz)" if ch.localizer_mhz else ""
    return [
        ("Glide path", f"{ch.glide_path_mhz:.2f} MHz{loc}, {spec.array}, {spec.angle_deg:g} deg"),
        ("Runway", f"true bearing {result.runway.true_bearing_deg:.4f} deg, length {_len(result.runway.length_m, 1)}"),
        (
            "Mast",
            f"{mast.side} side, setback {_len(mast.setback_m, 1)} ({mast.setback_source}), "
            f"offset {_len(mast.offset_m, 1)}",
        ),
        ("Mast position (WGS 84)", f"{mast.lat_deg:.7f}, {mast.lon_deg:.7f}"),
        ("RDH", _len(result.rdh_m)),
        ("Actual path over the threshold", _len(result.path_height_over_threshold_m)),
        ("GPIP", f"{_len(abs(result.gpip.along_m), 1)} {past_or_before(result.gpip.along_m)} the threshold"),
    ]


def _prediction_figures(result: StudyResult) -> list[tuple[str, str]]:
    """The figures a study has when it predicts them: the path, the path over the DEM surface, the plane."""
    _len = _lengths(result.spec.units)
    figures = []
    if result.prediction is not None:
        p = result.prediction
        figures.append(
            (
                "Predicted path angle",
                f"{p.path_angle_deg:.4f} deg; half-sectors "
                f"{p.half_sector_below_deg:.4f} / {p.half_sector_above_deg:.4f} deg",
            )
        )
    if result.surface is not None:
        sp = result.surface
        figures.append(
            (
                "Path over the DEM surface (physical optics)",
                f"{sp.path_angle_deg:.4f} deg; half-sectors {sp.half_sector_below_deg:.4f} / "
                f"{sp.half_sector_above_deg:.4f} deg; 95 % bends "
                + ", ".join(f"{s.segment} {s.bend_95_ddm:.4f} (limit {s.limit_ddm:.3f})" for s in sp.structure),
            )
        )
    elif result.prediction is not None:
        figures.append(("Path over the DEM surface", f"skipped: {skipped_words(result.spec)}"))
    if result.terrain is not None:
        t = result.terrain
        figures.append(
            (
                "Reflecting plane",
                f"forward slope {t.forward_slope_deg:+.3f} deg, lateral slope "
                f"{t.lateral_slope_deg:+.3f} deg, RMS {_len(t.plane.rms_residual_m, 3)}",
            )
        )
    return figures


def _antenna_rows(result: StudyResult) -> str:
    """The antennas table's rows: height, proximity shift and position."""
    _len = _lengths(result.spec.units)
    return "".join(
        f"<tr><td>{html.escape(a.role)}</td><td>{_len(a.height_m, 3)}</td><td>{_len(a.shift_toward_runway_m, 3)}</td>"
        f"<td>{a.lat_deg:.7f}, {a.lon_deg:.7f}</td></tr>"
        for a in result.antennas
    )


def _finding_items(result: StudyResult) -> str:
    """The findings as list items, classed by severity."""
    return "".join(
        f"<li class='{html.escape(f.severity)}'>[{html.escape(f.severity)}] {html.escape(f.message)}</li>"
        for f in result.findings
    )


def _zone_rows(result: StudyResult) -> str:
    """The reflection zones table's rows: near and far edge, largest half-width, area."""
    _len = _lengths(result.spec.units)
    return "".join(
        f"<tr><td>{html.escape(z.antenna)}</td><td>{html.escape(z.kind)}</td><td>{_len(z.shape.near_m, 0)}</td>"
        f"<td>{_len(z.shape.far_m, 0)}</td><td>{_len(z.shape.max_half_width_m, 0)}</td>"
        f"<td>{format_area(z.shape.area_m2, result.spec.units)}</td></tr>"
        for z in result.zones
    )


def _images(result: StudyResult, plots: bool) -> str:
    """The plots linked as images, when they are drawn (the terrain and surface plots when there are any)."""
    if not plots:
        return ""
    names = ["path.png", "ddm.png"] + (["profile.png", "residuals.png"] if result.profile is not None else [])
    names += ["surface.png"] if result.surface is not None else []
    return "".join(f"<p><img src='{n}' alt='{n}'></p>" for n in names)
