"""``mastplan building-heights``: a map of allowed building heights around the mast (building restricted area)."""

from __future__ import annotations

import sys
from pathlib import Path

import click

from cli.common import EXIT_CODES_TEXT, bad_option, out_option, overwrite_option, quiet_option, reports_errors


def _length(value, name: str, scale: float, low: float, high: float):
    if value is None:
        return None
    metres = value * scale
    if not low <= metres <= high:
        bad_option(name, f"must be {low:g} to {high:g} m in the site file's unit (got {value:g})")
    return metres


def _settings(spec, extent, step, length, width, orientations, share, max_height):
    from dataclasses import replace

    from geo.optics.building_heights import HeightSettings
    from geo.units import LENGTH_UNITS

    scale = LENGTH_UNITS[spec.units]
    s = HeightSettings(share=spec.areas.critical_share)
    given = {
        "extent_m": _length(extent, "--extent", scale, 100.0, 10_000.0),
        "step_m": _length(step, "--step", scale, 1.0, 1000.0),
        "length_m": _length(length, "--length", scale, 1.0, 1000.0),
        "width_m": _length(width, "--width", scale, 1.0, 1000.0),
        "max_height_m": _length(max_height, "--max-height", scale, 5.0, 500.0),
    }
    s = replace(s, **{k: v for k, v in given.items() if v is not None})
    if length is not None or width is not None:
        s = replace(s, footprint_source="command line")
    if share is not None:
        if not 0.0 < share <= 1.0:
            bad_option("--share", f"must be above 0 and at most 1 (got {share:g})")
        s = replace(s, share=share, share_source="command line")
    if s.step_m > s.extent_m:
        bad_option("--step", "must be smaller than --extent")
    return replace(s, orientations=tuple(orientations) if orientations else s.orientations)


@click.command("building-heights", epilog=EXIT_CODES_TEXT)
@click.argument("site", type=click.Path(dir_okay=False, path_type=Path))
@out_option
@overwrite_option
@click.option("--extent", type=float, help="Grid half-side around the mast, each way (default 2,000 m).")
@click.option("--step", type=float, help="Cell size (default 20 m).")
@click.option("--length", type=float, help="Footprint length (default 80 m, a large hangar).")
@click.option("--width", type=float, help="Footprint width (default 60 m).")
@click.option("--orientation", "orientations", multiple=True, type=click.Choice(["along", "across"]),
              help="Length along or across the runway (repeatable; default both).")  # fmt: skip
@click.option(
    "--share",
    type=float,
    help="Share of the structure limits a building may take (default [areas] critical_share, 0.5).",
)
@click.option("--max-height", type=float, help="Top of the bracket: cells allowed at least this (default 100 m).")
@quiet_option
@reports_errors
def building_heights(site: Path, out_dir: str, overwrite: bool, extent, step, length, width, orientations, share,
                     max_height, quiet: bool) -> None:  # fmt: skip
    """Map allowed building heights around the mast of SITE (the building restricted area).

    For a grid around the mast and a footprint in both orientations, the tallest building whose
    disturbance of the glide path stays under a share of the Annex 10 structure limits; writes
    GeoTIFFs (above the ground and above the survey datum), contours (GeoJSON, GeoPackage, KML), a
    map, a PNG, summary.json and cells.csv, and screens the site file's [[building]] tables. Lengths
    are in the site file's unit. A screening aid: the authority's assessment and flight inspection
    decide, and the Annex 14 obstacle surfaces apply on top.

    Example: mastplan building-heights site.toml --out heights/ --step 50
    """
    from dataclasses import replace

    from geo.optics.building_heights import HEIGHTS_CAUTION
    from geo.optics.building_heights import building_heights as compute
    from geo.outputs.heights_out import write_heights
    from geo.outputs.write import check_target
    from geo.site.site_file import load_site
    from geo.study.building_screening import screen_buildings, screening_findings
    from geo.study.buildings import study_receivers
    from geo.study.site_study import run_study

    spec = load_site(site)
    settings = _settings(spec, extent, step, length, width, orientations, share, max_height)
    check_target(out_dir, overwrite, [Path(spec.source)] if spec.source else [])
    result = run_study(replace(spec, prediction=replace(spec.prediction, surface=False), buildings=()))
    hm = compute(result, settings, receivers=study_receivers(result))
    if spec.buildings:
        hm = replace(hm, screening=screen_buildings(hm, replace(result, spec=spec)))
    folder = write_heights(hm, out_dir, overwrite=overwrite)
    if not quiet:
        for m in hm.maps:
            click.echo(f"{m.orientation}: lowest allowed height {m.height_m[m.height_m == m.height_m].min():.1f} m, "
                       f"{m.evaluations:,} cell evaluations")  # fmt: skip
        for f in screening_findings(hm.screening, settings.share, spec.units):
            click.echo(f"  [{f.severity}] {f.message}")
        click.echo(HEIGHTS_CAUTION)
        click.echo(f"Results written to {folder}")
    if not sys.stdout.isatty():
        sys.stdout.flush()
