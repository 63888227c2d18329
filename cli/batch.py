"""``mastplan batch``: many site studies in parallel on this machine."""

from __future__ import annotations

import os
import sys
from pathlib import Path

import click

from cli.common import EXIT_FAILED, overwrite_option, quiet_option, reports_errors


def _progress(done: int, total: int) -> None:
    width = 30
    filled = int(width * done / total)
    sys.stderr.write(f"\r[{'#' * filled}{' ' * (width - filled)}] {done}/{total} sites")
    if done == total:
        sys.stderr.write("\n")
    sys.stderr.flush()


@click.command("batch")
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
@quiet_option
@reports_errors
def batch(sites, out_dir: str, jobs: int | None, plots: bool, overwrite: bool, quiet: bool) -> None:
    """Study every site of SITES: site files (.toml) and CSV files of runways (.csv).

    A CSV has one runway per row and the site file's keys as dotted column names
    (units, site.name, runway.threshold.lat, ..., glide_path.array, mast.side, ...).
    A failing site is reported in index.csv with its error and does not stop the others;
    the exit code is then 1.

    Example: mastplan batch sites/*.toml runways.csv --out batch/ -j 2
    """
    from concurrent.futures import ProcessPoolExecutor, as_completed

    from geo.batch import combined_layers, jobs_from_paths, run_job, slug
    from geo.outputs.batch_out import write_index
    from geo.outputs.gpkg import write_gpkg
    from geo.outputs.write import atomic_folder

    job_list = jobs_from_paths(sites)
    if not job_list:
        raise click.UsageError("no sites given")
    taken: set[str] = set()
    names = [slug(Path(j.label).stem if j.path else j.label, taken) for j in job_list]
    show = sys.stderr.isatty() and not quiet
    records = [None] * len(job_list)

    def fill(folder: Path) -> None:
        workers = jobs or os.cpu_count() or 1
        with ProcessPoolExecutor(max_workers=min(workers, len(job_list))) as pool:
            futures = {
                pool.submit(run_job, job, str(folder / name), plots): i
                for i, (job, name) in enumerate(zip(job_list, names))
            }
            for n, future in enumerate(as_completed(futures), start=1):
                records[futures[future]] = future.result()
                if show:
                    _progress(n, len(job_list))
        write_index(records, folder / "index.csv")
        layers = combined_layers(records)
        if layers:
            write_gpkg(layers, folder / "sites.gpkg")

    inputs = [p for p in sites]
    folder = atomic_folder(out_dir, overwrite, fill, inputs)
    failed = [r for r in records if r.status != "done"]
    if not quiet:
        click.echo(f"{len(records) - len(failed)} of {len(records)} sites done; results in {folder}")
        for r in failed:
            click.echo(f"failed: {r.label}: {r.error}")
    if failed:
        sys.exit(EXIT_FAILED)
