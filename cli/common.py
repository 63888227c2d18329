"""What every command shares: options, error reporting, exit codes.

Exit codes: 0 done; 1 something failed that is not the user's input;
2 bad input (site file, options, output folder), with a one-line message
naming the field and the fix, and no traceback.
"""

from __future__ import annotations

import functools
import os
import sys

import click

EXIT_FAILED = 1
EXIT_BAD_INPUT = 2

out_option = click.option(
    "--out",
    "out_dir",
    required=True,
    type=click.Path(file_okay=False),
    help="Folder for the results; must be new or empty unless --overwrite.",
)
overwrite_option = click.option(
    "--overwrite",
    is_flag=True,
    help="Replace the results already in --out.",
)
plots_option = click.option(
    "--plots/--no-plots",
    default=True,
    show_default=True,
    help="Draw the PNG plots (the slowest output).",
)
outputs_option = click.option(
    "--outputs",
    default=",".join(("summary", "layers", "gpkg", "kml", "map", "tables", "plots", "report")),
    show_default=True,
    metavar="LIST",
    help="Comma-separated outputs to write: summary, layers, gpkg, kml, map, tables, plots, report.",
)
quiet_option = click.option("--quiet", "-q", is_flag=True, help="Print nothing on success.")


def fail(message: str, code: int) -> None:
    """Print one line on stderr and exit."""
    click.echo(f"mastplan: {message}", err=True)
    sys.exit(code)


class _Terminated(BaseException):
    """Raised in the main thread when the process receives SIGTERM."""


def _terminated(signum, frame):
    raise _Terminated()


def reports_errors(func):
    """Turn library errors into one-line messages and exit codes."""

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        import signal

        from geo.errors import MastplanError, OutputError, SiteFileError, TerrainError

        # A terminated run unwinds like an interrupted one: its temporary folder is removed and the
        # earlier results stay as they were.
        signal.signal(signal.SIGTERM, _terminated)
        try:
            return func(*args, **kwargs)
        except (SiteFileError, OutputError, TerrainError) as exc:
            fail(f"error: {exc}", EXIT_BAD_INPUT)
        except MastplanError as exc:
            fail(f"error: {exc}", EXIT_FAILED)
        except KeyboardInterrupt:
            fail("interrupted; earlier results are untouched", 130)
        except _Terminated:
            fail("terminated; earlier results are untouched", 143)
        except Exception as exc:  # a bug: say so in one line, traceback on request
            if os.environ.get("MASTPLAN_DEBUG"):
                raise
            fail(
                f"internal error: {type(exc).__name__}: {exc} (set MASTPLAN_DEBUG=1 for the traceback)",
                EXIT_FAILED,
            )

    return wrapper
