"""A printable study report (``report.html``): what an engineer files with the study.

A title block (from the site file's ``[report]`` table, never the clock), the verdict with the count of
findings by severity, the key figures, the ground the study stood on (DEM, CRS, cell size, vertical
datums and the shift applied), the site plan (``site_plan.png``, :mod:`geo.outputs.site_plan`), the
findings worst first, the reflection zones, the plots, and the standards and textbooks the findings
cite, each once. Every text from the site file is HTML-escaped; the plots are linked, not embedded.
``report.pdf`` is this page printed (:mod:`geo.outputs.pdf`).
"""

from __future__ import annotations

import html
from pathlib import Path

from geo.outputs.references import CitedSource, cited_sources, marked_segments
from geo.outputs.summary import datum_conversion_dict
from geo.outputs.text import TCH_WORDS, past_or_before, skipped_words
from geo.study.findings import CAUTIONS, SEVERITIES
from geo.study.site_study import StudyResult
from geo.units import format_area, format_length
from geo.version import __version__

__all__ = ["write_report", "sorted_findings", "severity_counts"]

_STYLE = """body{font:14px/1.4 sans-serif;max-width:60em;margin:2em auto;color:#222}
table{border-collapse:collapse;margin:.5em 0 1.5em}td,th{border:1px solid #bbb;padding:.25em .6em;text-align:left}
.pass{color:#2b8a3e}.info{color:#1864ab}.warning{color:#e67700}.fail{color:#c92a2a;font-weight:bold}
.verdict{font-size:1.15em;border:2px solid #444;padding:.5em 1em}.verdict span{margin-right:.8em}
.title td,.title th{min-width:10em}tr,li{break-inside:avoid}
.caution{border:2px solid #e67700;padding:.6em 1em;background:#fff4e6}img{max-width:100%}
@media print{body{max-width:none;margin:0;font-size:11px}}"""

#: Findings in the report: the worst first.
_WORST_FIRST = tuple(reversed(SEVERITIES))

#: The verdict in words, by the worst severity among the findings.
_VERDICT = {
    "fail": "a standard is not met",
    "warning": "no standard failed; recommendations not met or values to confirm",
    "info": "every check passed, with notes",
    "pass": "every check passed",
}


def _lengths(unit: str):
    """``_len(value_m, decimals)`` in the site file's unit first (:func:`geo.units.format_length`)."""

    def _len(value_m: float, decimals: int = 2) -> str:
        return format_length(value_m, unit, decimals)

    return _len


def _rows(pairs) -> str:
    return "".join(f"<tr><th>{html.escape(k)}</th><td>{html.escape(v)}</td></tr>" for k, v in pairs)


def sorted_findings(findings) -> list:
    """The findings worst first (fail, warning, info, pass), in their order within a severity."""
    return sorted(findings, key=lambda f: _WORST_FIRST.index(f.severity))


def severity_counts(findings) -> dict[str, int]:
    """How many findings of each severity, worst first (every severity, zero included)."""
    return {sev: sum(1 for f in findings if f.severity == sev) for sev in _WORST_FIRST}


def write_report(result: StudyResult, path: Path, plots: bool, site_plan: bool = False) -> None:
    """Write ``report.html`` next to the other outputs of the study.

    Parameters
    ----------
    result : StudyResult
    path : Path
        The file to write.
    plots : bool
        The plots are drawn: the report links them.
    site_plan : bool
        ``site_plan.png`` is drawn beside the report (:mod:`geo.outputs.site_plan`): the report shows it.
    """
    spec = result.spec
    figures = _key_figures(result) + _prediction_figures(result)
    cited = cited_sources(f.message for f in result.findings)
    page = f"""<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><title>mastplan study: {html.escape(spec.name)}</title>
<style>{_STYLE}
@page{{size:{spec.report.page};margin:15mm}}</style></head><body>
<h1>Glide path siting study: {html.escape(spec.name)}</h1>
{_title_block(result)}
{_verdict(result)}
<p>{html.escape(spec.notes)}</p>
<div class="caution">{"<br>".join(html.escape(c) for c in CAUTIONS)}</div>
<h2>Key figures</h2><table>{_rows(figures)}</table>
{_site_plan(site_plan)}
<h2>Ground</h2><table>{_rows(_ground_rows(result))}</table>
<h2>Antennas</h2><table><tr><th>antenna</th><th>height above the reflecting plane</th>
<th>shift toward the runway</th><th>position (WGS 84)</th></tr>{_antenna_rows(result)}</table>
<h2>Findings</h2>{_memory_note(cited)}<ul>{_finding_items(result, cited)}</ul>
{_buildings_section(result)}
<h2>Reflection zones</h2><table><tr><th>antenna</th><th>kind</th><th>nearest</th><th>farthest</th>
<th>largest half-width</th><th>area</th></tr>{_zone_rows(result)}</table>
{_images(result, plots)}
{_references(cited)}
<p>Layers: layers/*.geojson, site.gpkg, site.kml; interactive map: map.html.</p>
</body></html>
"""
    path.write_text(page, encoding="utf-8")


def _buildings_section(result: StudyResult) -> str:
    from geo.outputs.buildings_out import buildings_report

    return buildings_report(result)


def _title_block(result: StudyResult) -> str:
    """The title block: who prepared and checked the study, its revision and date (``[report]``), the input."""
    spec, rep = result.spec, result.spec.report
    given = [("Prepared by", rep.prepared_by), ("Checked by", rep.checked_by), ("Revision", rep.revision)]
    given.append(("Date", rep.date))
    rows = [(k, v if v else "(not given in the site file)") for k, v in given]
    rows += [
        ("Input file", f"{Path(spec.source).name if spec.source else '(in code)'}, SHA-256 {spec.sha256}"),
        ("Tool", f"mastplan {__version__}"),
    ]
    return f"<table class='title'>{_rows(rows)}</table>"


def _verdict(result: StudyResult) -> str:
    """The verdict line: the worst severity in words and the count of findings by severity."""
    counts = severity_counts(result.findings)
    worst = next((sev for sev in _WORST_FIRST if counts[sev]), "pass")
    spans = "".join(
        f"<span class='count {sev}' data-severity='{sev}' data-count='{n}'>{n} {sev}</span>"
        for sev, n in counts.items()
    )
    return f"<p class='verdict {worst}'><b>Verdict: {html.escape(_VERDICT[worst])}.</b> Findings: {spans}</p>"


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
        (f"Actual path over the threshold, {TCH_WORDS}", _len(result.path_height_over_threshold_m)),
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


def _finding_items(result: StudyResult, cited: list[CitedSource]) -> str:
    """The findings as list items, worst first, classed by severity; "from memory" caveats as marks."""
    return "".join(
        f"<li class='{html.escape(f.severity)}' data-code='{html.escape(f.code)}'>[{html.escape(f.severity)}] "
        f"{_marked(f.message, cited)}</li>"
        for f in sorted_findings(result.findings)
    )


def _marked(message: str, cited: list[CitedSource]) -> str:
    """A finding's text, escaped, each "from memory: confirm the edition in force" a mark to its reference."""
    return "".join(
        html.escape(text)
        if source is None
        else f" <sup><a href='#ref-{source.source.key}' title='values from memory, "
        f"see References'>[{source.number}]</a></sup>"
        for text, source in marked_segments(message, cited)
    )


def _memory_note(cited: list[CitedSource]) -> str:
    """What a mark in the findings means, when there is one."""
    if not any(c.from_memory for c in cited):
        return ""
    return (
        "<p>A mark such as <sup>[1]</sup> stands for: values from memory, confirm against the edition in force; "
        "the source is listed under <a href='#references'>References</a>.</p>"
    )


def _references(cited: list[CitedSource]) -> str:
    """The references: every document the findings cite, once, with its edition and what is from memory."""
    if not cited:
        return ""
    items = []
    for c in cited:
        parts = [f"{c.source.title}. Edition: {c.source.edition}."]
        if c.paragraphs:
            parts.append(f"Cited: {', '.join(c.paragraphs)}.")
        memory = [p for p in c.from_memory if p]
        if c.from_memory:
            where = f" ({', '.join(memory)})" if memory else ""
            parts.append(f"Values from memory{where}: confirm against the edition in force.")
        elif c.source.memory:
            parts.append(f"Values: {c.source.memory}.")
        else:
            parts.append("Values not marked as from memory in the findings.")
        items.append(f"<li id='ref-{c.source.key}'>{html.escape(' '.join(parts))}</li>")
    return f"<h2 id='references'>References</h2><ol>{''.join(items)}</ol>"


def _ground_rows(result: StudyResult) -> list[tuple[str, str]]:
    """What the ground was: the DEM files, CRS, cell size, vertical datums and the shift applied."""
    spec, src, t = result.spec, result.terrain_source, result.terrain
    _len = _lengths(spec.units)
    if src is None or t is None:
        return [("Ground", f"no DEM: flat at the mast's ground {_len(result.mast.base_elevation_m)} (site file)")]
    conversion = datum_conversion_dict(src)
    return [
        ("DEM files", src.dem_name),
        ("CRS", src.crs or "not stated"),
        ("Cell size", f"{_len(t.cell_size_m, 2)} (near the threshold); sampled every {_len(t.sample_spacing_m, 2)}"),
        ("Vertical unit", src.vertical_unit_source),
        ("DEM vertical datum", src.vertical_datum or "not stated by the DEM"),
        ("Site file's vertical datum", spec.vertical_datum or "not stated (runway.vertical_datum)"),
        ("Datum conversion", conversion["description"]),
        ("Shift applied at the mast", _len(conversion["shift_at_mast_m"], 3)),
        ("Vertical offset (terrain.vertical_offset)", _len(src.vertical_offset_m, 3)),
    ]


def _zone_rows(result: StudyResult) -> str:
    """The reflection zones table's rows: near and far edge, largest half-width, area."""
    _len = _lengths(result.spec.units)
    return "".join(
        f"<tr><td>{html.escape(z.antenna)}</td><td>{html.escape(z.kind)}</td><td>{_len(z.shape.near_m, 0)}</td>"
        f"<td>{_len(z.shape.far_m, 0)}</td><td>{_len(z.shape.max_half_width_m, 0)}</td>"
        f"<td>{format_area(z.shape.area_m2, result.spec.units)}</td></tr>"
        for z in result.zones
    )


def _site_plan(drawn: bool) -> str:
    """The site plan (``site_plan.png``), when it is drawn: runway, mast, zones and areas from above."""
    if not drawn:
        return ""
    return (
        "<h2>Site plan</h2><p><img src='site_plan.png' alt='site plan: runway, mast, reflection zones and "
        "protected areas from above, with a north arrow and a scale bar'></p>"
    )


def _images(result: StudyResult, plots: bool) -> str:
    """The plots linked as images, when they are drawn (the terrain and surface plots when there are any)."""
    if not plots:
        return ""
    names = ["path.png", "ddm.png"] + (["profile.png", "residuals.png"] if result.profile is not None else [])
    names += ["surface.png"] if result.surface is not None else []
    return "".join(f"<p><img src='{n}' alt='{n}'></p>" for n in names)
