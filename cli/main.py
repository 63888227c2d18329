"""Entry point of the ``mastplan`` command."""

from __future__ import annotations

import click

from cli.areas import areas
from cli.batch import batch
from cli.demo import demo
from cli.run import run
from cli.sweep import sweep
from geo import __version__


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

if __name__ == "__main__":  # pragma: no cover
    main()
