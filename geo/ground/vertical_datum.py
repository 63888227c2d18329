"""Vertical datums: DEM heights moved into the datum of the surveyed elevations.

A site file's elevations and a DEM's heights may refer to different vertical
datums: a geoid (EGM96, EGM2008: orthometric heights ``H``) or the WGS 84
ellipsoid (GNSS heights ``h``). They differ by the geoid undulation ``N``,
``h = H + N`` [1]_, which reaches about +/-100 m over the globe and 15-40 m
over much of the land. :func:`datum_conversion` chooses how to convert:

- the same datum, or either one not stated: no conversion;
- an orthometric datum and WGS 84 with the undulation published at the
  threshold (``runway.geoid_undulation``, ICAO Annex 15 [2]_): one value,
  ``h = H + N``, no grid needed;
- otherwise PROJ's geoid grids through ``TransformerGroup(...).best_available``
  [3]_; a grid PROJ cannot find is an error that names it, never a silent
  "ballpark" transform that leaves heights unchanged.

Debian's ``proj-data`` package puts ``egm96_15.gtx`` in the system's PROJ data
folder, which pyproj's wheels do not search; :func:`add_system_proj_data`
adds that folder (and any named by ``PROJ_DATA``).

References
----------
.. [1] Hofmann-Wellenhof, B. and Moritz, H., *Physical Geodesy*, 2nd ed.,
       Springer, 2006, sec. 2.7 (h = H + N).
.. [2] ICAO Annex 15, Aeronautical Information Services: geoid undulation
       published at the threshold of precision approach runways (memory).
.. [3] PROJ documentation, "Transformations" and "Resource files"; pyproj
       ``TransformerGroup.best_available``.
"""

from __future__ import annotations

import math
import os
import shutil
import subprocess
import warnings
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path

import numpy as np

from geo.errors import TerrainError

__all__ = ["DATUMS", "DatumConversion", "datum_conversion", "add_system_proj_data"]

#: Compound CRS of each vertical datum the site file may name (horizontal WGS 84 in degrees).
DATUMS = {
    "EGM96": "EPSG:4326+5773",  # WGS 84 + EGM96 height
    "EGM2008": "EPSG:4326+3855",  # WGS 84 + EGM2008 height
    "WGS84": "EPSG:4979",  # WGS 84 3D: ellipsoidal height
}
_ORTHOMETRIC = ("EGM96", "EGM2008")
#: Folders where Debian and most Linux distributions install PROJ's data.
_SYSTEM_PROJ_DIRS = ("/usr/share/proj", "/usr/local/share/proj")


@dataclass(frozen=True)
class DatumConversion:
    """How DEM heights reach the survey's vertical datum.

    Attributes
    ----------
    dem_datum, survey_datum : str or None
        ``"EGM96"``, ``"EGM2008"``, ``"WGS84"`` or ``None`` (not stated).
    method : str
        ``"none"`` (no datum stated or the same datum), ``"published undulation"``
        or ``"geoid grid"``.
    undulation_m : float or None
        The published geoid undulation ``N`` at the threshold, for that method. [m]
    grids : tuple of str
        PROJ grids the grid method uses.
    """

    dem_datum: str | None
    survey_datum: str | None
    method: str = "none"
    undulation_m: float | None = None
    grids: tuple[str, ...] = ()

    @property
    def applied(self) -> bool:
        """True when DEM heights are changed."""
        return self.method != "none"

    def shift_m(self, lon_deg, lat_deg) -> np.ndarray:
        """Height to add to DEM heights at WGS 84 positions to reach the survey's datum. [m]

        Parameters
        ----------
        lon_deg, lat_deg : array_like
            WGS 84 positions. [deg]
        """
        lon = np.atleast_1d(np.asarray(lon_deg, dtype=float))
        lat = np.atleast_1d(np.asarray(lat_deg, dtype=float))
        if self.method == "none":
            return np.zeros(lon.shape)
        if self.method == "published undulation":
            # h = H + N [1]_: orthometric -> ellipsoidal adds N, ellipsoidal -> orthometric subtracts it.
            sign = 1.0 if self.survey_datum == "WGS84" else -1.0
            return np.full(lon.shape, sign * self.undulation_m)
        transformer = _transformer(self.dem_datum, self.survey_datum)
        ok = np.isfinite(lon) & np.isfinite(lat)
        out = np.full(lon.shape, np.nan)
        if ok.any():
            _, _, z = transformer.transform(lon[ok], lat[ok], np.zeros(int(ok.sum())))
            out[ok] = np.asarray(z, dtype=float)
        return out

    def describe(self) -> str:
        """One line: what was converted and how."""
        if self.dem_datum is None or self.survey_datum is None:
            return "none: the vertical datum of the DEM or of the site file is not stated"
        if self.method == "none":
            return f"none: the DEM and the site file are both in {self.survey_datum}"
        if self.method == "published undulation":
            return (
                f"{self.dem_datum} -> {self.survey_datum} with the published geoid undulation "
                f"N = {self.undulation_m:+.3f} m (runway.geoid_undulation; h = H + N)"
            )
        return f"{self.dem_datum} -> {self.survey_datum} through PROJ with the geoid grid {', '.join(self.grids)}"


def datum_conversion(
    dem_datum: str | None, survey_datum: str | None, geoid_undulation_m: float | None = None
) -> DatumConversion:
    """Choose the conversion of DEM heights into the survey's datum, and check that it can be made.

    Parameters
    ----------
    dem_datum : str or None
        ``terrain.vertical_datum``.
    survey_datum : str or None
        ``runway.vertical_datum``.
    geoid_undulation_m : float, optional
        ``runway.geoid_undulation``: ``N`` at the threshold, relative to the orthometric datum. [m]

    Raises
    ------
    TerrainError
        When the conversion needs a geoid grid that PROJ cannot find; the message names the grid.
    """
    if dem_datum is None or survey_datum is None or dem_datum == survey_datum:
        return DatumConversion(dem_datum, survey_datum)
    if geoid_undulation_m is not None and "WGS84" in (dem_datum, survey_datum):
        return DatumConversion(dem_datum, survey_datum, "published undulation", float(geoid_undulation_m))
    available, grids = _grids(dem_datum, survey_datum)
    if not available:
        hint = (
            " or give runway.geoid_undulation (the undulation published with the threshold)"
            if "WGS84" in (dem_datum, survey_datum)
            else ""
        )
        raise TerrainError(
            f"terrain.vertical_datum: converting {dem_datum} DEM heights to {survey_datum} (runway.vertical_datum) "
            f"needs PROJ's geoid grid {', '.join(grids)}, which PROJ cannot find; install it (Debian: "
            f"apt-get install proj-data, which has EGM96 only; or projsync --file {grids[0]}, or put the file in "
            f"a folder named by PROJ_DATA){hint}"
        )
    return DatumConversion(dem_datum, survey_datum, "geoid grid", None, grids)


@lru_cache(maxsize=8)
def _grids(dem_datum: str, survey_datum: str) -> tuple[bool, tuple[str, ...]]:
    """Whether PROJ's best transformation is available, and the grids it needs (missing ones first).

    Cached: building a transformer group costs a tenth of a second or more.
    """
    from pyproj.transformer import TransformerGroup

    add_system_proj_data()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # pyproj warns of a missing grid; the error below says it
        group = TransformerGroup(DATUMS[dem_datum], DATUMS[survey_datum], always_xy=True)
    if group.best_available and group.transformers:
        used = _grid_names(group.transformers[0])
        return True, tuple(used or ["(none)"])
    missing = []
    for op in group.unavailable_operations:
        for grid in op.grids:
            if not grid.available and grid.short_name not in missing:
                missing.append(grid.short_name)
    return False, tuple(missing or ["(unknown)"])


def _grid_names(transformer) -> list[str]:
    names = []
    for op in transformer.operations or []:
        for grid in getattr(op, "grids", []):
            name = Path(grid.full_name).name if grid.full_name else grid.short_name
            if name not in names:
                names.append(name)
    return names


@lru_cache(maxsize=8)
def _transformer(dem_datum: str, survey_datum: str):
    from pyproj.transformer import TransformerGroup

    add_system_proj_data()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        group = TransformerGroup(DATUMS[dem_datum], DATUMS[survey_datum], always_xy=True)
    if not group.best_available:  # checked by datum_conversion; never fall back to a ballpark transform
        raise TerrainError(f"terrain.vertical_datum: no grid for {dem_datum} -> {survey_datum}")
    return group.transformers[0]


@lru_cache(maxsize=1)
def add_system_proj_data() -> tuple[str, ...]:
    """Add the system's PROJ data folders to pyproj's search path (once).

    Folders: those named by ``PROJ_DATA`` (or the older ``PROJ_LIB``), the usual
    system folders, and the folder where Debian's ``proj-data`` package put
    ``egm96_15.gtx`` (asked of ``dpkg -L proj-data``).

    Returns
    -------
    tuple of str
        The folders added.
    """
    from pyproj.datadir import append_data_dir, get_data_dir

    candidates = []
    for var in ("PROJ_DATA", "PROJ_LIB"):
        candidates += [p for p in os.environ.get(var, "").split(os.pathsep) if p]
    candidates += list(_SYSTEM_PROJ_DIRS)
    candidates += _dpkg_proj_data_dirs()
    present = set(get_data_dir().split(os.pathsep))
    added = []
    for folder in candidates:
        if folder not in present and os.path.isdir(folder):
            append_data_dir(folder)
            present.add(folder)
            added.append(folder)
    return tuple(added)


def _dpkg_proj_data_dirs() -> list[str]:
    """Folders of the geoid grids that Debian's ``proj-data`` package installed (empty elsewhere)."""
    dpkg = shutil.which("dpkg")
    if dpkg is None:
        return []
    try:
        listing = subprocess.run(
            [dpkg, "-L", "proj-data"], capture_output=True, text=True, timeout=10, check=False
        ).stdout
    except (OSError, subprocess.SubprocessError):
        return []
    folders = []
    for line in listing.splitlines():
        if line.endswith((".gtx", ".tif")) and "egm" in line.lower():
            folder = str(Path(line).parent)
            if folder not in folders:
                folders.append(folder)
    return folders


def shift_at(conversion: DatumConversion, lon_deg: float, lat_deg: float) -> float:
    """The conversion's height shift at one position. [m]"""
    value = float(conversion.shift_m([lon_deg], [lat_deg])[0])
    return value if math.isfinite(value) else float("nan")
