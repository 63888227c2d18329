"""Every key a site file may hold, table by table: the parser's list of allowed keys.

:data:`SITE_KEYS` is the one list: :mod:`geo.site.site_file` takes each table's allowed keys from
it (an unknown key is an error that lists them), and :func:`reference_markdown` writes the
reference of the site file from it (``docs/site-file.md``, remade by ``docs/make_site_reference.py``),
so the reference names every key the parser accepts and nothing else.

A length's unit is the file's own (``units = "m"`` or ``"ft"``); the defaults of lengths are given in
metres, the unit the library works in.
"""

from __future__ import annotations

from dataclasses import dataclass

from geo.airfield.surfaces import DEFAULT_SURFACES
from geo.radio.arrays import ARRAY_TYPES

__all__ = ["Key", "SITE_KEYS", "LENGTH", "keys_of", "reference_markdown"]

#: The unit of a length or elevation: the site file's own.
LENGTH = "the file's unit"


@dataclass(frozen=True)
class Key:
    """One key of a site-file table.

    Attributes
    ----------
    name : str
        The key as written in the file.
    kind : str
        Its TOML type in words (number, text, true/false, table, ...).
    unit : str
        Its unit; empty when it has none.
    default : str
        What holds when it is left out (``required`` when it must be given).
    allowed : str
        The values it may take, in words.
    what : str
        What it says.
    """

    name: str
    kind: str
    unit: str
    default: str
    allowed: str
    what: str


def _choices(names) -> str:
    return " | ".join(f'"{n}"' for n in names)


_DATUMS = _choices(("EGM96", "EGM2008", "WGS84"))
_POINT = "inline table { lat, lon, elevation }"


def _point_keys(elevation: str) -> tuple[Key, ...]:
    keys = (
        Key("lat", "number", "deg", "required", "-89.9 to 89.9", "WGS 84 latitude"),
        Key("lon", "number", "deg", "required", "-180 to 180", "WGS 84 longitude"),
    )
    if elevation:
        keys += (Key("elevation", "number", LENGTH, elevation, "-500 to 9,000 m", "surveyed elevation"),)
    return keys


def _surface_keys() -> tuple[Key, ...]:
    d = DEFAULT_SURFACES
    length = ("number", LENGTH)
    ratio = ("number", "rise per run")
    rows = (
        ("strip_half_width", length, d.strip_half_width_m, "0 to 2,000 m", "half-width of the runway strip"),
        ("inner_transitional_start", length, d.inner_transitional_start_m, "0 to 2,000 m",
         "start of the inner transitional surface from the centre line; the inner approach half-width"),
        ("mast_allowance", length, d.mast_allowance_m, "0 to 2,000 m", "top of the mast above the highest antenna"),
        ("inner_approach_start", length, d.inner_approach_start_m, "0 to 2,000 m", "start before the threshold"),
        ("inner_approach_length", length, d.inner_approach_length_m, "0 to 2,000 m", "inner approach surface"),
        ("balked_landing_start", length, d.balked_landing_start_m, "0 to 2,000 m",
         "start past the threshold (the runway end when nearer)"),
        ("inner_horizontal_height", length, d.inner_horizontal_height_m, "0 to 2,000 m", "inner horizontal surface"),
        ("transitional_slope", ratio, d.transitional_slope, "above 0, at most 1", "transitional surface"),
        ("inner_transitional_slope", ratio, d.inner_transitional_slope, "above 0, at most 1",
         "inner transitional surface"),
        ("inner_approach_slope", ratio, d.inner_approach_slope, "above 0, at most 1", "inner approach surface"),
        ("balked_landing_divergence", ratio, d.balked_landing_divergence, "above 0, at most 1",
         "each side of the balked landing surface"),
        ("balked_landing_slope", ratio, round(d.balked_landing_slope, 4), "above 0, at most 1",
         "balked landing surface"),
    )  # fmt: skip
    keys = tuple(Key(n, k, u, f"{v:g} (code 3-4)", a, w) for n, (k, u), v, a, w in rows)
    return keys + (
        Key("allow_in_obstacle_free_zone", "true/false", "", "false", "true | false",
            "true: a frangible mast in the obstacle free zone is a warning, not a fail"),
        Key("source", "text", "", "site file [surfaces]", "one line", "where the surface parameters come from"),
    )  # fmt: skip


#: The keys of each table, by the table's dotted name ("" is the top level), in the parser's order.
SITE_KEYS: dict[str, tuple[Key, ...]] = {
    "": (
        Key("units", "text", "", "required", '"m" | "ft"', "the unit of every length and elevation in the file"),
        Key("site", "table", "", "required", "[site]", "the site's name and notes"),
        Key("runway", "table", "", "required", "[runway]", "the runway and its datum"),
        Key("glide_path", "table", "", "required", "[glide_path]", "the glide path's angle, channel and array"),
        Key("mast", "table", "", "required", "[mast]", "where the mast stands"),
        Key("terrain", "table", "", "flat ground at the mast's base", "[terrain]", "the DEM"),
        Key("protected_area", "array of tables", "", "none", "[[protected_area]]", "critical and sensitive areas"),
        Key("prediction", "table", "", "defaults below", "[prediction]", "the predicted path's settings"),
        Key("surfaces", "table", "", "Annex 14 for the runway code", "[surfaces]", "obstacle limitation surfaces"),
        Key("object", "array of tables", "", "three generic classes", "[[object]]", "objects of mastplan areas"),
        Key("areas", "table", "", "defaults below", "[areas]", "the derived areas' shares and grid"),
        Key("report", "table", "", "empty title block", "[report]", "the report's title block"),
        Key("building", "array of tables", "", "none", "[[building]]", "buildings beside the runway"),
        Key("taxiway", "array of tables", "", "none", "[[taxiway]]", "taxiways mastplan areas follows"),
        Key(
            "holding_position",
            "array of tables",
            "",
            "none",
            "[[holding_position]]",
            "holding positions mastplan areas checks",
        ),
    ),  # fmt: skip
    "site": (
        Key("name", "text", "", "required", "one line, not empty", "the site's name, in every output"),
        Key("notes", "text", "", '""', "any text", "notes carried into the outputs"),
    ),
    "runway": (
        Key("threshold", _POINT, "", "required", "see [runway.threshold]", "the landing threshold"),
        Key("end", _POINT, "", "required", "see [runway.end]", "the far end, in the landing direction"),
        Key("width", "number", LENGTH, "required", "10 to 200 m", "runway width"),
        Key("code", "integer", "", "none (code 3-4 surfaces)", "1 | 2 | 3 | 4", "aerodrome code number"),
        Key("vertical_datum", "text", "", "none (no conversion)", _DATUMS, "datum of every elevation in the file"),
        Key(
            "geoid_undulation",
            "number",
            LENGTH,
            "none (PROJ's geoid grid)",
            "-150 to 150 m",
            "N published with the threshold; needs vertical_datum",
        ),
        Key(
            "designator",
            "text",
            "",
            "none (not checked)",
            '"01" to "36", then L, C or R',
            "the landing direction's designator, checked against the magnetic bearing",
        ),
        Key(
            "magnetic_date",
            "date or text",
            "",
            "2025.0 (WMM-2025's epoch)",
            "2010-01-01 to 2029-12-31",
            "date of the magnetic variation",
        ),
    ),  # fmt: skip
    "runway.threshold": _point_keys("required"),
    "runway.end": _point_keys("required"),
    "glide_path": (
        Key("angle_deg", "number", "deg", "required", "1 to 6", "the glide path angle theta"),
        Key(
            "localizer_mhz",
            "number",
            "MHz",
            "one of the two",
            "the 40 paired channels 108.10-111.95",
            "paired localizer frequency; or frequency_mhz",
        ),
        Key("frequency_mhz", "number", "MHz", "one of the two", "the glide path band", "glide path frequency"),
        Key("array", "text", "", "required", _choices(ARRAY_TYPES), "the image-array type"),
        Key(
            "target_rdh",
            "number",
            LENGTH,
            "none (give mast.setback)",
            "above 0, at most 100 m",
            "RDH the setback is solved for when [mast] gives none",
        ),
        Key("category", "text", "", '"I"', '"I" | "II" | "III"', "ILS category"),
    ),  # fmt: skip
    "mast": (
        Key("side", "text", "", "required without position", '"left" | "right"', "as seen by a pilot on approach"),
        Key(
            "offset",
            "number",
            LENGTH,
            "required without position",
            "beyond the runway's half-width, at most 1,000 m",
            "centre line to the lowest antenna",
        ),
        Key(
            "setback",
            "number",
            LENGTH,
            "required without target_rdh",
            "above 0",
            "threshold to the point abeam the mast, along the centre line",
        ),
        Key("base_elevation", "number", LENGTH, "the threshold elevation", "-500 to 9,000 m", "ground at the mast"),
        Key(
            "position",
            "inline table { lat, lon }",
            "",
            "none",
            "see [mast.position]; not with side/offset/setback",
            "a surveyed mast position",
        ),
    ),  # fmt: skip
    "mast.position": _point_keys(""),
    "terrain": (
        Key(
            "dem",
            "text or list of texts",
            "",
            "required",
            "raster files GDAL reads, relative to the site file",
            "one DEM, a list of tiles (first valid one wins) or a VRT",
        ),
        Key("vertical_offset", "number", LENGTH, "0", "-1,000 to 1,000 m", "added to DEM heights"),
        Key("vertical_unit", "text", "", "the raster's metadata, else metres", '"m" | "ft"', "unit of DEM heights"),
        Key("min_clearance", "number", LENGTH, "0", "0 to 1,000 m", "smallest path height over the approach terrain"),
        Key("vertical_datum", "text", "", "none (no conversion)", _DATUMS, "datum of the DEM's heights"),
    ),  # fmt: skip
    "protected_area": (
        Key("name", "text", "", "required", "one line, not empty", "the area's name"),
        Key("kind", "text", "", "required", '"critical" | "sensitive"', "what the area protects"),
        Key("ahead", "number", LENGTH, "required without outline", "above 0, at most 20,000 m", "toward the approach"),
        Key("behind", "number", LENGTH, "0", "0 to 20,000 m", "behind the mast"),
        Key(
            "toward_runway",
            "number",
            LENGTH,
            "required without outline",
            "above 0, at most 20,000 m",
            "from the mast toward the runway",
        ),
        Key("away", "number", LENGTH, "0", "0 to 20,000 m", "beyond the mast, away from the runway"),
        Key(
            "outline",
            "list of [ahead, toward_runway] pairs",
            LENGTH,
            "none",
            "3 or more pairs; not with the four above",
            "the area's outline relative to the mast",
        ),
    ),  # fmt: skip
    "prediction": (
        Key(
            "relative_permittivity",
            "number",
            "",
            "none (perfect conductor)",
            "1 to 100; with conductivity",
            "the ground's relative permittivity",
        ),
        Key(
            "conductivity",
            "number",
            "S/m",
            "none (perfect conductor)",
            "0 to 100; with relative_permittivity",
            "the ground's conductivity",
        ),
        Key("half_sector", "number", "fraction of theta", "0.12", "0.07 to 0.14", "where DDM = 0.0875 below the path"),
        Key(
            "csb_feed",
            "list of [amplitude, phase_deg]",
            "",
            "the array type's",
            "one pair per antenna, amplitude 0-1000",
            "CSB feed, lowest antenna first",
        ),
        Key(
            "sbo_feed",
            "list of [amplitude, phase_deg]",
            "",
            "the array type's",
            "one pair per antenna, amplitude 0-1000",
            "SBO feed, lowest antenna first",
        ),
        Key(
            "below_path_down_to",
            "number",
            "fraction of theta",
            "0.45",
            "0.30 to 0.45",
            "lower edge of the below-path band",
        ),
        Key("surface", "true/false", "", "true", "true | false", "with a DEM, also predict the path over the surface"),
        Key(
            "element",
            "text",
            "",
            '"generic"',
            '"generic" | "isotropic"',
            "the antennas' element pattern, in every field (generic: 62 deg beamwidth, 25 dB front-to-back)",
        ),
        Key(
            "element_front_to_back_db",
            "number",
            "dB",
            "25 (generic, from memory)",
            '0 to 60; element = "generic" only',
            "the generic element's front-to-back ratio",
        ),
    ),  # fmt: skip
    "surfaces": _surface_keys(),
    "object": (
        Key("name", "text", "", "required (the code's name with a code)", "one line, not empty", "the object's name"),
        Key(
            "height",
            "number",
            LENGTH,
            "required (the code's with a code)",
            "above 0, at most 100 m",
            "top of the object above the ground",
        ),
        Key(
            "length",
            "number",
            LENGTH,
            "required (the code's with a code)",
            "above 0, at most 100 m",
            "along its heading",
        ),
        Key("width", "number", LENGTH, "required (the code's with a code)", "0 to 100 m", "across its heading"),
        Key(
            "base",
            "number",
            LENGTH,
            "0 (the code's with a code)",
            "0 to 100 m, below height",
            "lowest edge above the ground",
        ),
        Key(
            "headings",
            "list of texts",
            "",
            '["along", "across"]',
            '"along" | "across", each once',
            "along the runway, across it",
        ),
        Key(
            "code",
            "text",
            "",
            "none",
            '"A" to "F" (Annex 14 code letter) | "car" | "van" | "truck"',
            "a design object's sizes (geo/site/design_objects.py; from memory); a size given overrides the code's",
        ),
    ),  # fmt: skip
    "areas": (
        Key("critical_share", "number", "fraction of the limit", "0.5", "above 0, at most 1", "critical above it"),
        Key(
            "sensitive_share",
            "number",
            "fraction of the limit",
            "0.2",
            "above 0, below critical_share",
            "sensitive above it",
        ),
        Key("grid", "number", LENGTH, "10 m", "1 to 200 m", "spacing of the object positions"),
        Key("ahead", "number", LENGTH, "600 m", "0 to 5,000 m", "grid extent in front of the mast"),
        Key("behind", "number", LENGTH, "50 m", "0 to 5,000 m", "behind the mast"),
        Key("away", "number", LENGTH, "100 m", "0 to 5,000 m", "beyond the mast, away from the runway"),
        Key("beyond", "number", LENGTH, "100 m", "0 to 5,000 m", "past the centre line"),
        Key(
            "max_extent",
            "number",
            LENGTH,
            "1,500 m",
            "50 to 10,000 m",
            "the grid grows until every area closes, on no side farther than this from the mast",
        ),
    ),  # fmt: skip
    "taxiway": (
        Key("name", "text", "", "required", "one line, not empty", "the taxiway's name"),
        Key(
            "line",
            "list of inline tables { lat, lon }",
            "",
            "required",
            "at least two points, WGS 84 degrees",
            "its centre line, from either end",
        ),
        Key("code", "text", "", "required", '"A" to "F" | "car" | "van" | "truck"', "the code of its largest user"),
    ),
    "holding_position": (
        Key("name", "text", "", "required", "one line, not empty", "the holding position's name"),
        Key("lat", "number", "deg", "required", "-89.9 to 89.9", "where it is"),
        Key("lon", "number", "deg", "required", "-180 to 180", "where it is"),
        Key("taxiway", "text", "", "none", "a [[taxiway]] name given above it", "the taxiway it is on"),
        Key("code", "text", "", "the taxiway's", '"A" to "F" | "car" | "van" | "truck"', "the aircraft holding there"),
    ),  # fmt: skip
    "report": (
        Key("prepared_by", "text", "", '""', "one line", "title block"),
        Key("checked_by", "text", "", '""', "one line", "title block"),
        Key("revision", "text", "", '""', "one line", "title block"),
        Key("date", "text", "", '""', "one line in quotes, shown as written", "title block"),
        Key("page", "text", "", '"A4"', '"A4" | "Letter"', "page size of report.pdf"),
        Key(
            "distance_axis",
            "text",
            "",
            '"linear"',
            '"linear" | "log"',
            "scale of the distance axis of the DDM and surface plots along the approach",
        ),
    ),
}


#: ``[conditions]``: the seasons' ground under the same antennas (:mod:`geo.site.conditions`).
SITE_KEYS[""] = (
    *SITE_KEYS[""],
    Key("conditions", "table", "", "none", "[conditions]", "snow and ground conditions predicted side by side"),
)
SITE_KEYS["conditions"] = (
    Key(
        "snow_depth",
        "number or list of numbers",
        LENGTH,
        "0 (no snow)",
        "0 to 3 m each, below the lowest antenna",
        "depth of snow on the ground; a list gives one condition each",
    ),
    Key("snow", "text", "", "required with snow", '"dry" | "wet"', "dry snow: a layer; wet snow: reflects at its top"),
    Key(
        "ground",
        "text or list of texts",
        "",
        "the [prediction] ground",
        '"dry" | "medium" | "wet"',
        "ITU-R P.527 ground class (values from memory); a list gives one condition each",
    ),
)
#: ``[[building]]`` (geo/site/buildings.py reads it).
SITE_KEYS["building"] = (
    Key("name", "text", "", "required", "one line, not empty, each building its own", "the building's name"),
    Key("height", "number", LENGTH, "required", "above 0, at most 300 m", "top of the roof above the ground"),
    Key("footprint", "list of inline tables { lat, lon }", "deg", "none (give centre, length, width)",
        "3 to 200 corners in order, a simple polygon", "the outline, WGS 84"),
    Key("centre", "inline table { lat, lon }", "deg", "none (give footprint)", "WGS 84", "a rectangle's centre"),
    Key("length", "number", LENGTH, "required with centre", "1 to 2,000 m", "a rectangle's side along heading_deg"),
    Key("width", "number", LENGTH, "required with centre", "1 to 2,000 m", "a rectangle's other side"),
    Key("heading_deg", "number", "deg", "0", "-360 to 360", "true bearing of the rectangle's length"),
    Key("cladding", "text", "", '"metal"', '"metal" | "concrete" | "glass"',
        "walls and roof: metal a perfect conductor, the others ITU-R P.2040 constants"),
    Key("relative_permittivity", "number", "", "from cladding", "1 to 100, with conductivity",
        "the walls' own constant, instead of the cladding's"),
    Key("conductivity", "number", "S/m", "from cladding", "0 to 1e8, with relative_permittivity",
        "the walls' own conductivity"),
)  # fmt: skip


def keys_of(table: str) -> tuple[str, ...]:
    """The keys a table may hold, in the parser's order.

    Parameters
    ----------
    table : str
        Dotted table name (``"runway"``, ``"runway.threshold"``; ``""`` for the top level).

    Returns
    -------
    tuple of str
    """
    return tuple(key.name for key in SITE_KEYS[table])


def _heading(table: str) -> str:
    if table == "":
        return "## The top level"
    if table in ("protected_area", "object", "building", "taxiway", "holding_position"):
        return f"## `[[{table}]]` (one table per item)"
    return f"## `[{table}]`"


def _cell(text: str) -> str:
    return (text or "-").replace("|", "\\|")


def reference_markdown() -> str:
    """The reference of the site file, every key of every table, as Markdown.

    Returns
    -------
    str
        The text of ``docs/site-file.md``.
    """
    lines = [
        "# The site file: every key",
        "",
        "Generated from `geo/site/keys.py`, the list the parser checks keys against "
        "(`python docs/make_site_reference.py` remakes this file; `tests/site/test_keys.py` holds the two together).",
        f'A unit "{LENGTH}" is the unit the file names in `units`; defaults of lengths are in metres. '
        "Any key not listed here is an error naming it and the allowed keys.",
    ]
    for table, keys in SITE_KEYS.items():
        lines += ["", _heading(table), "", "| key | type | unit | default | allowed | what |", "| --- " * 6 + "|"]
        for key in keys:
            cells = (f"`{key.name}`", key.kind, key.unit, key.default, key.allowed, key.what)
            lines.append("| " + " | ".join(_cell(c) for c in cells) + " |")
    return "\n".join(lines) + "\n"
