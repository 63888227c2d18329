"""``mastplan areas``: critical and sensitive areas derived from the disturbance of parked or moving objects."""

from __future__ import annotations

import sys
from pathlib import Path

import click

from cli.common import EXIT_CODES_TEXT, out_option, overwrite_option, plots_option, quiet_option, reports_errors


@click.command("areas", epilog=EXIT_CODES_TEXT)
@click.argument("site", type=click.Path(dir_okay=False, path_type=Path))
@out_option
@overwrite_option
@plots_option
@quiet_option
@reports_errors
def areas(site: Path, out_dir: str, overwrite: bool, plots: bool, quiet: bool) -> None:
    """Derive critical and sensitive areas around the mast of SITE from the path disturbance.

    The objects are the site file's [[object]] tables (or three generic classes) and the grid and
    shares come from [areas]. A planning aid beside the authority's rules and flight inspection,
    never in place of them.

    Example: mastplan areas site.toml --out areas/
    """
    from geo.optics.areas import AREAS_CAUTION, derive_areas
    from geo.outputs.areas_out import write_areas
    from geo.outputs.write import check_target
    from geo.site.site_file import load_site
    from geo.study.site_study import run_study

    spec = load_site(site)
    check_target(out_dir, overwrite, [Path(spec.source)] if spec.source else [])
    result = run_study(spec)
    derived = _derive(derive_areas, result, quiet)
    folder = write_areas(derived, out_dir, overwrite=overwrite, plots=plots)
    if not quiet:
        from geo.outputs.areas_out import screen_lines

        for line in screen_lines(derived):
            click.echo(line)
        click.echo(AREAS_CAUTION)
        click.echo(f"Results written to {folder}")


def _plan_line(positions: int, seconds: float) -> str:
    """The first grid's size and the time it will take, before the long part of the run."""
    return (
        f"{positions:,} object positions x headings in the first grid; about {seconds:,.0f} s "
        "(from a timed first block; the grid grows where an area stays open)"
    )


def _derive(derive_areas, result, quiet: bool):
    """The areas, with the first grid's size and time estimate and, on a terminal, a progress bar."""

    def plan(positions: int, seconds: float) -> None:
        if not quiet:
            click.echo(_plan_line(positions, seconds), err=True)

    if not sys.stderr.isatty() or quiet:
        return derive_areas(result, plan=plan)
    with click.progressbar(length=1, label="Object positions", file=sys.stderr) as bar:
        state = {"done": 0}

        def progress(done: int, total: int) -> None:
            bar.length = total
            bar.update(done - state["done"])
            state["done"] = done

        return derive_areas(result, progress=progress, plan=plan)
