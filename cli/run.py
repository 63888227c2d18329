"""``mastplan run``: one site study from a site file."""

from __future__ import annotations

from pathlib import Path

import click
from click.core import ParameterSource

from cli.common import (
    EXIT_CODES_TEXT,
    bad_option,
    check_fail_on,
    fail_on_option,
    out_option,
    outputs_option,
    overwrite_option,
    plots_option,
    quiet_option,
    reports_errors,
)


def run_site(
    site_path: Path,
    out_dir: str,
    overwrite: bool,
    quiet: bool,
    plots: bool = True,
    outputs: str | None = None,
    fail_on: str | None = None,
) -> None:
    """Load, study, write and report one site (shared by ``run`` and ``demo``)."""
    from geo.outputs.text import summary_text
    from geo.outputs.write import (
        OUTPUTS,
        check_outputs,
        check_target,
        remove_partials,
        write_early,
        write_study,
    )
    from geo.site.site_file import load_site
    from geo.study.site_study import run_study

    chosen = check_outputs(outputs.split(",")) if outputs is not None else OUTPUTS
    spec = load_site(site_path)
    check_target(out_dir, overwrite, [Path(spec.source)] if spec.source else [])  # before the study, not after
    early, staged = [], []
    try:
        with _background(chosen, plots) as background:

            def before_surface(partial):  # what does not need the surface prediction is drawn meanwhile
                if background is not None:
                    early.append(write_early(partial, out_dir, overwrite, plots, chosen, background, staged))

            with _cores_shared(background):
                result = run_study(spec, before_surface=before_surface)
            folder = write_study(
                result,
                out_dir,
                overwrite=overwrite,
                plots=plots,
                outputs=chosen,
                background=background,
                early=early[0] if early else None,
            )
    finally:  # after the writers have ended: nothing writes into the staging folder any more
        remove_partials(out_dir)  # by name: also one made just before a signal landed
    if not quiet:
        click.echo(summary_text(result))
        click.echo(f"Results written to {folder}")
        if "pdf" in chosen and not (folder / "report.pdf").is_file():
            click.echo(_no_pdf_words())
    check_fail_on([f.severity for f in result.findings], fail_on)


def _no_pdf_words() -> str:
    """Why ``report.pdf`` is missing, in a line for the screen."""
    from geo.outputs.pdf import find_chromium, no_chromium_reason

    if find_chromium() is None:
        return no_chromium_reason()
    return "no report.pdf: Chromium failed to print report.html (summary.json, report_pdf.reason, says why)"


def _cores_shared(background):
    """The optics kernel on one thread while the writer processes draw (they keep the other core busy)."""
    import contextlib

    if background is None:
        return contextlib.nullcontext()
    from geo.optics.kernel import thread_limit

    return thread_limit(lambda: 1 if background.busy() else 2)


def _background(chosen, plots: bool):
    """Writer processes for the plots, the map and the GeoPackage, started before the study.

    They import their libraries while the study runs; a no-op context when none is written.
    """
    import contextlib

    from geo.outputs.background import BackgroundWriter

    slow = [name for name in ("plots", "map", "gpkg") if name in chosen and (plots or name != "plots")]
    return BackgroundWriter(slow) if slow else contextlib.nullcontext(None)


@click.command("run", epilog=EXIT_CODES_TEXT)
@click.argument("site", type=click.Path(dir_okay=False, path_type=Path))
@out_option
@overwrite_option
@plots_option
@outputs_option
@fail_on_option
@quiet_option
@reports_errors
def run(site: Path, out_dir: str, overwrite: bool, plots: bool, outputs: str, fail_on: str | None, quiet: bool) -> None:
    """Study one glide path site from a SITE file (TOML).

    Example: mastplan run site.toml --out results/ --fail-on fail
    """
    given = click.get_current_context().get_parameter_source("outputs") is not ParameterSource.DEFAULT
    if given and not plots and "plots" in [name.strip() for name in outputs.split(",")]:
        bad_option("--outputs", "plots is named and --no-plots drops it; leave out one of the two")
    run_site(site, out_dir, overwrite, quiet, plots, outputs, fail_on)
