"""Shared fixtures; the header names the geospatial library versions in use."""

from __future__ import annotations

import textwrap
from pathlib import Path

import pytest
from tests_support import BASE_SITE


def pytest_report_header(config):
    import numpy
    import pyproj
    import shapely

    return (
        f"pyproj {pyproj.__version__} (PROJ {pyproj.proj_version_str}), "
        f"shapely {shapely.__version__} (GEOS {shapely.geos_version_string}), numpy {numpy.__version__}"
    )


@pytest.fixture
def site_text() -> str:
    """A valid site file's text (invented test values)."""
    return textwrap.dedent(BASE_SITE)


@pytest.fixture
def write_site(tmp_path):
    """Write site text to a file in a temporary folder and return its path."""

    def _write(text: str, name: str = "site.toml") -> Path:
        path = tmp_path / name
        path.write_text(textwrap.dedent(text), encoding="utf-8")
        return path

    return _write
