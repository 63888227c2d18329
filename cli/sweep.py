"""``mastplan sweep``: evaluate many candidate mast positions beside the runway."""

from __future__ import annotations

from pathlib import Path

import click

from cli.common import (
    EXIT_CODES_TEXT,
    EXIT_FAILED,
    check_fail_on,
    fail,
    fail_on_option,
    out_option,
    overwrite_option,
    plots_option,
    progress_bar,
    quiet_option,
    reports_errors,
)

#: Default grids in the site file's unit: FROM, TO, STEP (the FAA AIM 1-1-9 typical ranges,
#: 750-1,250 ft down the runway and 250-650 ft from the centre line, in round steps of each unit).
DEFAULT_SETBACKS = {"m": (230.0, 380.0, 10.0), "ft": (750.0, 1250.0, 25.0)}
DEFAULT_OFFSETS = {"m": (75.0, 200.0, 25.0), "ft": (250.0, 650.0, 50.0)}


def _range(values, name: str, unit: str) -> tuple[float, ...]:
    """FROM TO STEP in the site file's unit -> metres."""
    from geo.errors import SiteFileError
    from geo.units import format_number, from_unit

    start, stop, step = values
    if not (step > 0 and stop >= start > 0):
        shown = " ".join(format_number(v, 1) for v in values)
        raise SiteFileError(name, f"give FROM TO STEP in {unit} with FROM > 0, TO >= FROM and STEP > 0 (got {shown})")
    count = int((stop - start) / step + 1e-9) + 1
    if count > 5000:
        raise SiteFileError(name, f"{count:,} values; use a larger STEP (at most 5,000 values)")
    return tuple(from_unit(start + i * step, unit) for i in range(count))


def _band(values, unit: str) -> tuple[float, float]:
    """``--rdh-band LOW HIGH`` in the site file's unit -> metres (raises SiteFileError naming the option)."""
    from geo.errors import SiteFileError
    from geo.units import format_number, from_unit

    low, high = values
    if not 0 < low < high:
        shown = " ".join(format_number(v, 1) for v in values)
        raise SiteFileError(
            "--rdh-band", f"give LOW HIGH in {unit} with 0 < LOW < HIGH, the lower bound first (got {shown})"
        )
    return from_unit(low, unit), from_unit(high, unit)


def _surveyed_side(spec) -> str:
    """The side of a surveyed mast position (``"both"`` without one)."""
    if spec.mast.position is None:
        return "both"
    from geo.study.site_study import runway_of

    _, cross = runway_of(spec).frame.to_plane(spec.mast.position.lat_deg, spec.mast.position.lon_deg)
    return "right" if cross > 0 else "left"


@click.command("sweep", epilog=EXIT_CODES_TEXT)
@click.argument("site", type=click.Path(dir_okay=False, path_type=Path))
@out_option
@click.option(
    "--setback",
    nargs=3,
    type=float,
    default=None,
    metavar="FROM TO STEP",
    help="Setbacks to try, in the site file's unit. [default: 230-380 m in 10 m steps, or 750-1,250 ft in 25 ft "
    "steps for a site file in feet]",
)
@click.option(
    "--offset",
    nargs=3,
    type=float,
    default=None,
    metavar="FROM TO STEP",
    help="Offsets to try, in the site file's unit. [default: 75-200 m in 25 m steps, or 250-650 ft in 50 ft steps]",
)
@click.option(
    "--side",
    type=click.Choice(["left", "right", "both"]),
    default=None,
    help="Side(s) of the runway to try. [default: the site file's mast side]",
)
@click.option(
    "--solve-setback",
    is_flag=True,
    help="At each side and offset, the setback that meets the target RDH (glide_path.target_rdh, else "
    "15.5 m) on the candidate's own reflecting plane, instead of a grid of setbacks.",
)
@click.option(
    "--criterion",
    type=click.Choice(["rayleigh", "fraunhofer", "iev"]),
    default="fraunhofer",
    show_default=True,
    help="Roughness criterion for feasibility and the grading tolerance.",
)
@click.option(
    "--rdh-band",
    nargs=2,
    type=float,
    default=None,
    metavar="LOW HIGH",
    help="Feasible RDH, in the site file's units. [default: Annex 10 for the category and code]",
)
@click.option(
    "--surface-top",
    type=click.IntRange(min=0),
    default=10,
    show_default=True,
    metavar="N",
    help="Re-judge the N best feasible candidates by the surface prediction over the DEM (path angle, "
    "half-sectors, RDH, bends) and rank those failing over the surface lower; 0 for none. Only with a DEM and "
    "prediction.surface on.",
)
@overwrite_option
@plots_option
@fail_on_option
@quiet_option
@reports_errors
def sweep(
    site: Path,
    out_dir: str,
    setback,
    offset,
    side: str | None,
    solve_setback: bool,
    criterion: str,
    rdh_band,
    surface_top: int,
    overwrite: bool,
    plots: bool,
    fail_on: str | None,
    quiet: bool,
) -> None:
    """Try every mast position of a grid beside the runway of SITE and rank the feasible ones.

    With --fail-on, the exit code is 1 when the best candidate's study has a finding at that
    level or worse, or when no candidate is feasible.

    Example: mastplan sweep site.toml --out sweep/ --setback 230 380 5 --offset 80 200 20
    """
    from geo.errors import SiteFileError
    from geo.outputs.sweep_out import SCORE_TEXT, sweep_text
    from geo.outputs.write import check_target, write_sweep
    from geo.site.site_file import load_site
    from geo.study.findings import rdh_band_m
    from geo.study.site_study import run_study
    from geo.study.solved_setbacks import solve_setbacks
    from geo.study.sweep import SweepOptions, best_site, run_sweep
    from geo.study.sweep_choice import RANK_TEXT, add_ranks
    from geo.study.sweep_surface import SURFACE_RANK_TEXT, rejudge_over_surface, surface_skip_reason

    spec = load_site(site)
    check_target(out_dir, overwrite, [Path(spec.source)] if spec.source else [])
    unit = spec.units
    if solve_setback and setback:
        raise SiteFileError("--setback", "give either --setback or --solve-setback, not both")
    setbacks = _range(setback or DEFAULT_SETBACKS[unit], "--setback", unit)
    offsets = _range(offset or DEFAULT_OFFSETS[unit], "--offset", unit)
    if side is None:
        side = spec.mast.side or _surveyed_side(spec)
    band = _band(rdh_band, unit) if rdh_band else rdh_band_m(spec.category, spec.runway_code)[:2]
    options = SweepOptions(
        setbacks,
        offsets,
        ("left", "right") if side == "both" else (side,),
        band,
        roughness_criterion=criterion,
        surface_top=surface_top,
    )
    with progress_bar("Sweeping candidates", quiet) as progress:
        if solve_setback:
            result, options, _ = solve_setbacks(spec, options)
        else:
            result = run_sweep(spec, options, progress=progress)
    add_ranks(result, options, spec)
    with progress_bar("Re-judging over the surface", quiet) as progress:
        rejudged = rejudge_over_surface(spec, result, options, progress=progress)
    best_spec = best_site(spec, result)
    best = run_study(best_spec) if best_spec is not None else None
    folder = write_sweep(spec, result, options, best, out_dir, overwrite=overwrite, plots=plots)
    if not quiet:
        click.echo(sweep_text(spec, result, options, folder / "best" if best is not None else None))
        click.echo(f"Score: {SCORE_TEXT}")
        click.echo(f"Ranking: {RANK_TEXT}")
        skipped = surface_skip_reason(spec, options)
        if skipped is None:
            click.echo(f"Re-judged over the DEM surface: {rejudged} candidate(s); {SURFACE_RANK_TEXT}")
        else:
            click.echo(f"Re-judged over the DEM surface: none ({skipped}).")
        click.echo(f"Results written to {folder}")
    if fail_on is not None:
        if best is None:
            fail(f"no feasible candidate (--fail-on {fail_on})", EXIT_FAILED)
        check_fail_on([f.severity for f in best.findings], fail_on, " in the best candidate's study")
