"""mastplan library: siting studies for ILS glide path image arrays.

A study runs through the stages below, one package each; a package imports only from the
packages listed after it (checked by ``tests/test_layout.py``):

=================  ==================================================================
``geo.outputs``    writers: summary.json, GIS layers, web map, plots, report
``geo.study``      one site, a sweep of candidates, their findings
``geo.optics``     the facet kernel: the path over the real surface, objects, areas
``geo.site``       the site file, read into validated inputs in metres; batch inputs
``geo.ground``     the DEM, its datums, the reflecting plane fitted in the zones
``geo.radio``      image arrays, ground reflection, Fresnel zones, the image-theory path
``geo.airfield``   runway frame, RDH/GPIP geometry, obstacle surfaces, protected areas
``geo.errors``,    the errors every stage raises; metres and feet; the version
``geo.units``,
``geo.version``
=================  ==================================================================

The names a script needs are importable from here (``from geo import load_site, run_study``).
They load on first use, so ``import geo`` stays light: heavy modules (pyproj, shapely,
geopandas, rasterio, matplotlib, folium) are imported by the functions that need them.
The library never prints and never exits: results are returned, problems are raised as
subclasses of :class:`geo.errors.MastplanError`.
"""

from __future__ import annotations

import importlib

from geo.version import __version__

#: Public name -> the module that defines it.
_EXPORTS = {
    "MastplanError": "geo.errors",
    "SiteFileError": "geo.errors",
    "TerrainError": "geo.errors",
    "OutputError": "geo.errors",
    "SiteSpec": "geo.site.site_file",
    "load_site": "geo.site.site_file",
    "parse_site": "geo.site.site_file",
    "Finding": "geo.study.findings",
    "StudyResult": "geo.study.site_study",
    "run_study": "geo.study.site_study",
    "SweepOptions": "geo.study.sweep",
    "SweepResult": "geo.study.sweep",
    "run_sweep": "geo.study.sweep",
    "solve_setbacks": "geo.study.solved_setbacks",
    "rejudge_over_surface": "geo.study.sweep_surface",
    "AreasResult": "geo.optics.areas",
    "derive_areas": "geo.optics.areas",
    "write_study": "geo.outputs.write",
    "write_sweep": "geo.outputs.write",
    "write_areas": "geo.outputs.areas_out",
}

__all__ = ["__version__", *_EXPORTS]


def __getattr__(name: str):
    """Load a public name from its module on first use (PEP 562)."""
    module = _EXPORTS.get(name)
    if module is None:
        raise AttributeError(f"module 'geo' has no attribute {name!r}")
    value = getattr(importlib.import_module(module), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(_EXPORTS))
