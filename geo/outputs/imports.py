"""Importing a writer's library without the data-frame libraries it only offers, not needs.

folium and pyogrio import pandas (and pyogrio geopandas) when they are installed, only to accept
or return data frames; mastplan never passes them one. Importing pandas costs about a third of a
second, a tenth of a full run, so a writer imports these libraries with the data-frame libraries
hidden, when none of them is loaded yet. The library then runs without its data-frame features,
for the rest of the process; data frames stay importable by anything else.
"""

from __future__ import annotations

import importlib
import sys
from types import ModuleType

__all__ = ["import_without_dataframes"]

_HIDDEN = ("geopandas", "pandas", "pyarrow")


def import_without_dataframes(name: str) -> ModuleType:
    """Import the module ``name`` with geopandas, pandas and pyarrow hidden, if that is still possible.

    Parameters
    ----------
    name : str
        A module, e.g. ``"folium"`` or ``"pyogrio.raw"``.

    Returns
    -------
    module
        The module, imported the ordinary way when its package or a data-frame library is loaded
        already, or when it cannot do without them.
    """
    top = name.partition(".")[0]
    if top in sys.modules or any(h in sys.modules for h in _HIDDEN):
        return importlib.import_module(name)
    for hidden in _HIDDEN:
        sys.modules[hidden] = None  # an import of it now raises ImportError
    try:
        return importlib.import_module(name)
    except ImportError:  # a version that needs them after all: forget the half import
        for loaded in [m for m in sys.modules if m == top or m.startswith(top + ".")]:
            del sys.modules[loaded]
    finally:
        for hidden in _HIDDEN:
            if hidden in sys.modules and sys.modules[hidden] is None:
                del sys.modules[hidden]
    return importlib.import_module(name)
