"""``mastplan new-site``: a commented starter site file for a new runway."""

from __future__ import annotations

from pathlib import Path

import click

from cli.common import EXIT_CODES_TEXT, bad_option, reports_errors

#: The site-file fields the options fill, for errors in the options' own names.
_OPTION_OF_FIELD = {"runway.threshold": "--threshold", "runway.end": "--end", "units": "--units", "site.name": "--name"}


def _array_names() -> list[str]:
    from geo.radio.arrays import ARRAY_TYPES

    return list(ARRAY_TYPES)


@click.command("new-site", epilog=EXIT_CODES_TEXT)
@click.argument("path", type=click.Path(dir_okay=False, path_type=Path))
@click.option(
    "--threshold",
    type=(float, float, float),
    required=True,
    metavar="LAT LON ELEVATION",
    help="The landing threshold: WGS 84 degrees and the surveyed elevation in --units.",
)
@click.option(
    "--end",
    type=(float, float, float),
    required=True,
    metavar="LAT LON ELEVATION",
    help="The runway's far end in the landing direction, as --threshold.",
)
@click.option("--units", type=click.Choice(["m", "ft"]), default="m", show_default=True, help="The file's length unit.")
@click.option(
    "--array",
    type=click.Choice(_array_names()),
    default="null-reference",
    show_default=True,
    help="The image-array type.",
)
@click.option("--name", default="New runway (edit this name)", show_default=True, help="The site's name.")
@click.option("--overwrite", is_flag=True, help="Replace a file already at PATH.")
@reports_errors
def new_site(path: Path, threshold: tuple, end: tuple, units: str, array: str, name: str, overwrite: bool) -> None:
    """Write a commented starter site file for a new runway to PATH (an existing file is refused).

    The mast stands on the right at a typical offset, its setback solved for a target RDH, on flat
    ground; edit the file, then run it.

    Example: mastplan new-site rwy27.toml --threshold 46.35 -101.2 612 --end 46.351 -101.236 606.4
    """
    from geo.errors import SiteFileError
    from geo.outputs.starter import write_new_file
    from geo.site.starter import starter_site_text

    try:
        text = starter_site_text(threshold, end, units=units, array=array, name=name)
    except SiteFileError as exc:
        option = next((o for f, o in _OPTION_OF_FIELD.items() if exc.field.startswith(f)), None)
        if option is None:
            raise
        bad_option(option, f"{exc.field}: {exc.problem}")
    written = write_new_file(path, text, overwrite=overwrite)
    click.echo(f"Starter site file written to {written}; edit it, then: mastplan run {written} --out results/")
