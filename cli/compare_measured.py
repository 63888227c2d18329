"""``mastplan compare-measured``: measured results against the prediction, and the antenna moves.

Flight inspection or a ground check measures the path; the command compares it with the
prediction and proposes the moves that bring the path back to the design.
"""

from __future__ import annotations

from pathlib import Path

import click

from cli.common import (
    EXIT_CODES_TEXT,
    bad_option,
    out_option,
    overwrite_option,
    plots_option,
    quiet_option,
    reports_errors,
)


@click.command("compare-measured", epilog=EXIT_CODES_TEXT)
@click.argument("site", type=click.Path(dir_okay=False, path_type=Path))
@click.argument("measured", type=click.Path(dir_okay=False, path_type=Path))
@out_option
@overwrite_option
@click.option(
    "--step-mm",
    type=float,
    default=5.0,
    show_default=True,
    help="Round the antenna height moves to this step, in millimetres.",
)
@click.option(
    "--surface/--no-surface",
    default=True,
    show_default=True,
    help="With a DEM and the surface prediction on: take the surface's sensitivities into the fit "
    "(a few surface predictions more).",
)
@plots_option
@quiet_option
@reports_errors
def compare_measured(
    site: Path, measured: Path, out_dir: str, overwrite: bool, step_mm: float, surface: bool, plots: bool, quiet: bool
) -> None:
    """Take measured results of the glide path of SITE and propose antenna moves.

    MEASURED holds the measured results: a TOML file of the figures ([measured] path_angle_deg,
    half_sector_below_deg, half_sector_above_deg, rdh; optional [conditions]) or a CSV of the DDM or
    the angle along the approach (columns distance_m|distance_ft|distance_km|distance_nm, ddm|angle_deg,
    optional run and height_m|height_ft). Compared with the prediction (image theory, and over the
    surface with a DEM), judged against the Annex 10 tolerances and structure limits, and the antenna
    height (and feed) moves fitted, rounded to --step-mm, with the path predicted after them.
    Proposals only: flight inspection confirms, the authority's procedures apply.

    Example: mastplan compare-measured site.toml measured.csv --out measured/
    """
    from geo.outputs.measured_out import measured_text, write_measured
    from geo.outputs.write import check_target
    from geo.site.measured_file import load_measured
    from geo.site.site_file import load_site
    from geo.study.adjustment import adjust, surface_correction
    from geo.study.measured import compare
    from geo.study.site_study import run_study

    if not 0.1 <= step_mm <= 100.0:
        bad_option("--step-mm", f"must be from 0.1 to 100 mm (got {step_mm:g})")
    spec = load_site(site)
    found = load_measured(measured)
    check_target(out_dir, overwrite, [Path(spec.source), Path(found.source)])
    result = run_study(spec)
    comparison = compare(result, found)
    use_surface = surface and result.surface is not None and not found.conditions
    correction = surface_correction(result) if use_surface else None
    adj = adjust(result, found, step_m=step_mm / 1000.0, correction=correction)
    folder = write_measured(result, found, comparison, adj, out_dir, overwrite=overwrite, plots=plots)
    if not quiet:
        click.echo(measured_text(result, comparison, adj))
        click.echo(f"Results written to {folder}")
