"""``mastplan batch``: many site studies in parallel on this machine."""

from __future__ import annotations

import sys
from pathlib import Path

import click

from cli.common import (
    EXIT_CODES_TEXT,
    EXIT_FAILED,
    check_fail_on,
    fail_on_option,
    overwrite_option,
    progress_bar,
    quiet_option,
    reports_errors,
)


@click.command("batch", epilog=EXIT_CODES_TEXT)
@click.argument("sites", nargs=-1, required=True, type=click.Path(dir_okay=False, path_type=Path))
@click.option(
    "--out",
    "out_dir",
    required=True,
    type=click.Path(file_okay=False),
    help="Folder for the results: one folder per site, index.csv and sites.gpkg.",
)
@click.option(
    "--jobs", "-j", type=click.IntRange(1, 64), default=None, help="Parallel processes. [default: the number of CPUs]"
)
@click.option("--plots/--no-plots", default=False, show_default=True, help="Draw each site's PNG plots.")
@overwrite_option
@fail_on_option
@quiet_option
@reports_errors
def batch(
    sites, out_dir: str, jobs: int | None, plots: bool, overwrite: bool, fail_on: str | None, quiet: bool
) -> None:
    """Study every site of SITES: site files (.toml) and CSV files of runways (.csv).

    A CSV has one runway per row and the site file's keys as dotted column names
    (units, site.name, runway.threshold.lat, ..., glide_path.array, mast.side, ...).
    What a CSV cell cannot hold (protected areas, feeds) goes in a site file given beside it.
    A failing site is reported in index.csv with its error and does not stop the others;
    the exit code is then 1.

    Example: mastplan batch sites/*.toml runways.csv --out batch/ -j 2
    """
    from geo.outputs.batch_out import write_batch
    from geo.outputs.write import check_target
    from geo.site.batch import jobs_from_paths

    job_list = jobs_from_paths(sites)  # every input checked before anything is written
    check_target(out_dir, overwrite, list(sites))
    with progress_bar("Studying sites", quiet, total=len(job_list)) as progress:
        folder, records = write_batch(
            job_list, out_dir, overwrite, plots=plots, workers=jobs, inputs=list(sites), progress=progress
        )
    failed = [r for r in records if r.status != "done"]
    if not quiet:
        click.echo(f"{len(records) - len(failed)} of {len(records)} sites done; results in {folder}")
        for r in failed:
            click.echo(f"failed: {r.label}: {r.error}")
    if failed:
        sys.exit(EXIT_FAILED)
    severities = []
    for r in records:
        severities += ["fail"] * r.figures.get("findings_fail", 0) + ["warning"] * r.figures.get("findings_warning", 0)
    check_fail_on(severities, fail_on, f" in {len(records)} sites")
