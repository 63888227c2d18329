"""Errors that name the site file they came from.

:func:`geo.site.site_file.load_site` puts the file name in front of every
:class:`~geo.errors.SiteFileError` it raises. Errors found later, while the
study runs (a mast on the runway, a setback past the end, a mast off the DEM),
get the same prefix here, so that every message of a run starts with the file.
"""

from __future__ import annotations

import functools
from pathlib import Path

from geo.errors import SiteFileError, TerrainError

__all__ = ["naming_site_file", "with_site_name"]


def with_site_name(exc: Exception, source: str) -> Exception:
    """The same error with the site file's name in front (unchanged when it has it already)."""
    if not source:
        return exc
    if isinstance(exc, SiteFileError):
        return exc if exc.source else exc.with_source(source)
    if isinstance(exc, TerrainError):
        text = str(exc)
        names = (source, Path(source).name)
        return exc if text.startswith(tuple(f"{n}:" for n in names)) else TerrainError(f"{source}: {text}")
    return exc


def naming_site_file(func):
    """Decorate a function of a ``SiteSpec`` (first argument) so that its errors name the site file."""

    @functools.wraps(func)
    def wrapper(spec, *args, **kwargs):
        try:
            return func(spec, *args, **kwargs)
        except (SiteFileError, TerrainError) as exc:
            named = with_site_name(exc, getattr(spec, "source", ""))
            if named is exc:
                raise
            raise named from None

    return wrapper
