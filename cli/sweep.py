"""``mastplan sweep``: evaluate many candidate mast positions beside the runway."""

from __future__ import annotations

from pathlib import Path

import click

from cli.common import (
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


def _range(values, name: str, scale: float) -> tuple[float, ...]:
    from geo.errors import SiteFileError

    start, stop, step = values
    if not (step > 0 and stop >= start):
        raise SiteFileError(name, f"give FROM TO STEP with TO >= FROM and STEP > 0 (got {start:g} {stop:g} {step:g})")
    count = int((stop - start) / step + 1e-9) + 1
    if count > 5000:
        raise SiteFileError(name, f"{count} values; use a larger STEP (at most 5000 values)")
    return tuple((start + i * step) * scale for i in range(count))


@click.command("sweep")
@click.argument("site", type=click.Path(dir_okay=False, path_type=Path))
@out_option
@click.option(
    "--setback",
    nargs=3,
    type=float,
    default=None,
    metavar="FROM TO STEP",
    help="Setbacks to try, in the site file's units. [default: 750-1,250 ft in 10 m steps]",
)
@click.option(
    "--offset",
    nargs=3,
    type=float,
    default=None,
    metavar="FROM TO STEP",
    help="Offsets to try, in the site file's units. [default: 250-650 ft in 25 m steps]",
)
@click.option("--side", type=click.Choice(["left", "right", "both"]), default="both", show_default=True)
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
    side: str,
    criterion: str,
    rdh_band,
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
    from geo.findings import rdh_band_m
    from geo.outputs.sweep_out import SCORE_TEXT
    from geo.outputs.write import write_sweep
    from geo.site import load_site
    from geo.study import run_study
    from geo.sweep import SweepOptions, best_site, run_sweep
    from geo.units import LENGTH_UNITS

    spec = load_site(site)
    scale = LENGTH_UNITS[spec.units]
    setbacks = _range(setback, "--setback", scale) if setback else tuple(228.6 + 10.0 * i for i in range(16))
    offsets = _range(offset, "--offset", scale) if offset else tuple(76.2 + 25.0 * i for i in range(5))
    low, high, _, _ = rdh_band_m(spec.category, spec.runway_code)
    band = (rdh_band[0] * scale, rdh_band[1] * scale) if rdh_band else (low, high)
    options = SweepOptions(
        setbacks, offsets, ("left", "right") if side == "both" else (side,), band, roughness_criterion=criterion
    )
    with progress_bar("Sweeping candidates", quiet) as progress:
        result = run_sweep(spec, options, progress=progress)
    best_spec = best_site(spec, result)
    best = run_study(best_spec) if best_spec is not None else None
    folder = write_sweep(spec, result, options, best, out_dir, overwrite=overwrite, plots=plots)
    if not quiet:
        c = result.columns
        feasible = int(c["feasible"].sum())
        click.echo(f"{len(result)} candidates, {feasible} feasible.")
        if result.best is not None:
            k = result.best
            click.echo(
                f"Best: {c['side'][k]} side, setback {c['setback_m'][k]:.1f} m, offset {c['offset_m'][k]:.1f} m, "
                f"RDH {c['rdh_m'][k]:.2f} m, cut {c['cut_m3'][k]:.0f} m3, fill {c['fill_m3'][k]:.0f} m3, "
                f"score {c['score'][k]:.1f} (full study in {folder / 'best'})"
            )
        else:
            click.echo("No candidate is feasible; see the reasons in sweep.csv.")
        click.echo(f"Score: {SCORE_TEXT}")
        click.echo(f"Results written to {folder}")
    if fail_on is not None:
        if best is None:
            fail(f"no feasible candidate (--fail-on {fail_on})", EXIT_FAILED)
        check_fail_on([f.severity for f in best.findings], fail_on, " in the best candidate's study")
