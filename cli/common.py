"""What every command shares: options, error reporting, exit codes.

Exit codes (:data:`EXIT_CODES_TEXT`, shown by every command's ``--help`` and in README.md):
0 done; 1 the study ran and its results failed the stated gate (``--fail-on``, failed sites of a
batch); 2 bad input (site file, options, output folder), with a one-line message naming the field
and the fix, and no traceback; 3 an internal error (a bug); 130, 143 and 141 for a run stopped by
Ctrl-C, by SIGTERM, or by a reader that went away.
"""

from __future__ import annotations

import contextlib
import functools
import os
import sys

import click

EXIT_DONE = 0
#: The study ran and its results failed the gate the user set (``--fail-on``; a batch's failed sites).
EXIT_FAILED = 1
EXIT_BAD_INPUT = 2
#: A bug in mastplan: neither the input nor the results.
EXIT_INTERNAL = 3
#: Interrupted (Ctrl-C, 128 + SIGINT) and terminated (128 + SIGTERM).
EXIT_INTERRUPTED = 130
EXIT_TERMINATED = 143
#: The reader of standard output went away (128 + SIGPIPE, as shells report it).
EXIT_BROKEN_PIPE = 141

#: The exit codes, for every command's ``--help`` (click's ``epilog``; ``\b`` keeps the lines as they are).
EXIT_CODES_TEXT = (
    "\b\nExit codes:\n"
    f"  {EXIT_DONE}    done\n"
    f"  {EXIT_FAILED}    the results failed the gate: --fail-on, or failed sites of a batch\n"
    f"  {EXIT_BAD_INPUT}    bad input: site file, option or output folder (one line names it and the fix)\n"
    f"  {EXIT_INTERNAL}    internal error, a bug in mastplan (MASTPLAN_DEBUG=1 shows the traceback)\n"
    f"  {EXIT_INTERRUPTED}  interrupted (Ctrl-C); the earlier results are untouched\n"
    f"  {EXIT_BROKEN_PIPE}  the reader of the output went away (| head)\n"
    f"  {EXIT_TERMINATED}  terminated (SIGTERM); the earlier results are untouched"
)


def bad_option(option: str, fix: str) -> None:
    """Stop at a bad command-line option: one line naming it and the fix, exit code 2."""
    fail(f"error: {option}: {fix}", EXIT_BAD_INPUT)


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
    help="Comma-separated outputs to write: summary, layers, gpkg, kml, map, tables, plots, report; "
    "also pdf (report.pdf printed by headless Chromium; not by default).",
)
quiet_option = click.option("--quiet", "-q", is_flag=True, help="Print nothing on success.")
fail_on_option = click.option(
    "--fail-on",
    type=click.Choice(["fail", "warning"]),
    default=None,
    help="Exit with code 1 when a finding at this level or worse exists "
    "(fail: a standard not met; warning: also a recommendation not met). The results are written.",
)


def fail(message: str, code: int) -> None:
    """Print one line on stderr and exit."""
    click.echo(f"mastplan: {message}", err=True)
    sys.exit(code)


def check_fail_on(severities, level: str | None, what: str = "") -> None:
    """Exit with code 1 when ``--fail-on LEVEL`` was given and a finding at that level or worse exists.

    Parameters
    ----------
    severities : iterable of str
        The severities of the findings (``pass``, ``info``, ``warning``, ``fail``).
    level : str or None
        The ``--fail-on`` value; ``None`` checks nothing.
    what : str
        Where the findings are, for the message (e.g. ``" in 2 sites"``).
    """
    if level is None:
        return
    from geo.study.findings import SEVERITIES

    worse = SEVERITIES[SEVERITIES.index(level) :]
    counts = {s: 0 for s in worse}
    for s in severities:
        if s in counts:
            counts[s] += 1
    if sum(counts.values()):
        found = ", ".join(f"{n} {s}" for s, n in reversed(counts.items()) if n)
        fail(f"findings at level {level} or worse{what}: {found} (--fail-on {level})", EXIT_FAILED)


@contextlib.contextmanager
def progress_bar(label: str, quiet: bool, total: int | None = None):
    """A progress bar with the time left, on stderr when it is a terminal and not ``--quiet``.

    Yields the callback the library takes, ``progress(done, total)``, or ``None`` when no bar is
    shown. With ``total`` the bar shows at once; otherwise at the first call of the callback.
    """
    if quiet or not sys.stderr.isatty():
        yield None
        return
    bars = []

    def start(length: int):
        bar = click.progressbar(length=length, label=label, file=sys.stderr, show_eta=True, show_pos=True)
        bar.__enter__()
        bars.append(bar)
        return bar

    def update(done: int, length: int) -> None:
        bar = bars[0] if bars else start(length)
        if done > bar.pos:
            bar.update(done - bar.pos)

    if total:
        start(total)
    try:
        yield update
    finally:
        for bar in bars:
            bar.__exit__(None, None, None)


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
        except MastplanError as exc:  # every kind has its class above; a new one is a bug until it does
            fail(f"internal error: {exc}", EXIT_INTERNAL)
        except BrokenPipeError:  # the reader went away (`| head`): stop quietly, as a shell tool does
            devnull = os.open(os.devnull, os.O_WRONLY)
            os.dup2(devnull, sys.stdout.fileno())  # so that the final flush at exit does not fail again
            sys.exit(EXIT_BROKEN_PIPE)
        except KeyboardInterrupt:
            fail("interrupted; earlier results are untouched", EXIT_INTERRUPTED)
        except _Terminated:
            fail("terminated; earlier results are untouched", EXIT_TERMINATED)
        except Exception as exc:  # a bug: say so in one line, traceback on request
            if os.environ.get("MASTPLAN_DEBUG"):
                raise
            fail(
                f"internal error: {type(exc).__name__}: {exc} (set MASTPLAN_DEBUG=1 for the traceback)",
                EXIT_INTERNAL,
            )

    return wrapper
