"""A commented starter site file for a new runway: the text, checked by the site file's own parser.

:func:`starter_site_text` returns the text and never writes it; ``geo.outputs.starter`` writes it
(``mastplan new-site``). The text loads as it is (:func:`geo.site.site_file.parse_site` checks it
before it is returned): the mast is placed by a target RDH on flat ground, and every optional table
is shown commented out, with its keys as ``docs/site-file.md`` lists them.
"""

from __future__ import annotations

import json
import tomllib

from geo.radio.arrays import ARRAY_TYPES
from geo.site.site_file import parse_site
from geo.units import LENGTH_UNITS

__all__ = ["STARTER_LENGTHS", "starter_site_text"]

#: The starter's lengths by unit: runway width, mast offset, target RDH (the Annex 10 15 m band's
#: lower half; 51 ft is 15.54 m), the trade's typical setback, the terrain clearance.
STARTER_LENGTHS = {
    "m": {"width": 45, "offset": 120, "target_rdh": 15.5, "setback": 300, "min_clearance": 10},
    "ft": {"width": 150, "offset": 400, "target_rdh": 51, "setback": 1000, "min_clearance": 33},
}

_TEMPLATE = """\
# Starter site file written by mastplan new-site. Check every value against the survey before use;
# docs/site-file.md lists every key, its unit, default and allowed values.
units = "{units}"                      # the unit of every length and elevation in this file: "m" or "ft"

[site]
name = {name}
# notes = "survey of ..., revision ..."

[runway]
threshold = {{ lat = {t_lat!r}, lon = {t_lon!r}, elevation = {t_elev!r} }}   # WGS 84 degrees; surveyed elevation
end = {{ lat = {e_lat!r}, lon = {e_lon!r}, elevation = {e_elev!r} }}         # far end, in the landing direction
width = {width}
# code = 4                       # aerodrome code number 1-4, for the RDH band and the surfaces
# designator = "27"              # checked against the magnetic bearing from threshold to end
# vertical_datum = "EGM96"       # "EGM96" | "EGM2008" | "WGS84": datum of the elevations above

[glide_path]
angle_deg = 3.0
localizer_mhz = 110.30           # a paired localizer channel, or frequency_mhz = 335.0 (one of the two)
array = "{array}"{array_pad}# {arrays}
category = "I"                   # "I" | "II" | "III"
target_rdh = {target_rdh}{rdh_pad}# solves the setback, since [mast] gives none

[mast]
side = "right"                   # as seen by a pilot on approach: "left" | "right"
offset = {offset}{offset_pad}# centre line to the lowest antenna
# setback = {setback}{setback_pad}# threshold to the point abeam the mast (instead of target_rdh)
# base_elevation = ...           # ground at the mast; default the threshold elevation

# Without [terrain] the ground is flat at the mast's base. With a DEM:
# [terrain]
# dem = "dem.tif"                # a raster or a list of tiles, relative to this file
# min_clearance = {min_clearance}
# vertical_datum = "EGM96"

# [prediction]
# surface = false                # with a DEM, skip the path over the DEM surface (a faster study)
"""


def _pad(value: str, width: int) -> str:
    return " " * max(1, width - len(value))


def starter_site_text(
    threshold: tuple[float, float, float],
    end: tuple[float, float, float],
    units: str = "m",
    array: str = "null-reference",
    name: str = "New runway (edit this name)",
) -> str:
    """The text of a commented starter site file.

    Parameters
    ----------
    threshold, end : tuple of float
        Latitude and longitude (WGS 84 degrees) and elevation (in ``units``) of the threshold and the
        far end, in the landing direction.
    units : str
        ``"m"`` or ``"ft"``: the file's unit.
    array : str
        An array type of :data:`geo.radio.arrays.ARRAY_TYPES`.
    name : str
        The site's name.

    Returns
    -------
    str
        A site file that :func:`geo.site.site_file.parse_site` accepts.

    Raises
    ------
    SiteFileError
        When a value is not allowed (a position off the globe, the same point twice, ...), naming
        the site file's field.
    """
    if units not in LENGTH_UNITS:
        raise ValueError(f"units must be one of {', '.join(LENGTH_UNITS)}")
    lengths = STARTER_LENGTHS[units]
    text = _TEMPLATE.format(
        units=units,
        name=json.dumps(name, ensure_ascii=False),
        t_lat=float(threshold[0]), t_lon=float(threshold[1]), t_elev=float(threshold[2]),
        e_lat=float(end[0]), e_lon=float(end[1]), e_elev=float(end[2]),
        array=array,
        array_pad=_pad(f'array = "{array}"', 33),
        arrays=" | ".join(f'"{n}"' for n in ARRAY_TYPES),
        rdh_pad=_pad(f"target_rdh = {lengths['target_rdh']}", 33),
        offset_pad=_pad(f"offset = {lengths['offset']}", 33),
        setback_pad=_pad(f"# setback = {lengths['setback']}", 33),
        **lengths,
    )  # fmt: skip
    parse_site(tomllib.loads(text))
    return text
