"""Entry point of the ``mastplan`` command."""

from __future__ import annotations

import os
import sys

import click

from cli.areas import areas
from cli.batch import batch
from cli.building_heights import building_heights
from cli.compare_measured import compare_measured
from cli.demo import demo
from cli.new_site import new_site
from cli.run import run
from cli.sweep import sweep
from geo.version import __version__


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, prog_name="mastplan")
def main() -> None:
    """mastplan: siting studies for ILS glide path image arrays.

    A planning aid: flight inspection and the local authority have the last word.
    """


main.add_command(run)
main.add_command(demo)
main.add_command(sweep)
main.add_command(batch)
main.add_command(areas)
main.add_command(new_site)
main.add_command(compare_measured)
main.add_command(building_heights)


def entry() -> None:
    """The ``mastplan`` console command: :func:`main`, then the process ends at once with its status.

    When :func:`main` returns, everything is written and closed: output folders are in place, the
    writer processes have ended, the DEM files are closed. What is left is the interpreter's own
    teardown (freeing every module and object, about 0.2 s after a study on 2 cores), which this
    skips after flushing the standard streams. An exception that escapes :func:`main` ends the
    ordinary way, with its traceback.
    """
    try:
        main()
        code = 0
    except SystemExit as stop:
        code = stop.code
    if code is None:
        code = 0
    elif not isinstance(code, int):  # sys.exit("message"), as Python prints it
        print(code, file=sys.stderr)
        code = 1
    for stream in (sys.stdout, sys.stderr):
        try:
            stream.flush()
        except (OSError, ValueError):  # a reader that went away, or a closed stream: nothing to keep
            pass
    os._exit(code)


if __name__ == "__main__":  # pragma: no cover
    entry()
