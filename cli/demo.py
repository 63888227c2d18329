"""``mastplan demo``: the study of the invented demo airfield."""

from __future__ import annotations

import click

from cli.common import EXIT_CODES_TEXT, overwrite_option, plots_option, quiet_option, reports_errors
from cli.run import run_site


@click.command("demo", epilog=EXIT_CODES_TEXT)
@click.option(
    "--out",
    "out_dir",
    default="out/demo",
    show_default=True,
    type=click.Path(file_okay=False),
    help="Folder for the results.",
)
@overwrite_option
@plots_option
@quiet_option
@reports_errors
def demo(out_dir: str, overwrite: bool, plots: bool, quiet: bool) -> None:
    """Run the study of the invented demo airfield shipped with mastplan.

    Example: mastplan demo --out out/demo --overwrite
    """
    from demo_airfield import SITE_FILE

    run_site(SITE_FILE, out_dir, overwrite, quiet, plots)
