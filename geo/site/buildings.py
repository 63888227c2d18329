"""``[[building]]`` of the site file: buildings beside the runway, their footprint, height and cladding.

A building is a footprint on the ground (a polygon of WGS 84 points, or a rectangle given by its
centre, length, width and true heading of its length), a height above the ground and a cladding.
The cladding sets the walls' and roof's reflection: ``metal`` is a perfect conductor (the
default: a metal-clad hangar reflects almost all of the signal), ``concrete`` and ``glass`` take
the relative permittivity and conductivity of ITU-R P.2040 at the glide path's frequency
(:data:`CLADDINGS`), or the file gives both constants itself.

The optics (:mod:`geo.optics.buildings`) turn the walls and the roof into plates of the one optics
core; this module only reads and checks.

References
----------
.. [1] ITU-R Recommendation P.2040-1, "Effects of building materials and structures on radiowave
       propagation above about 100 MHz", 2015, Table 3 (``eta' = a f^b``, ``sigma = c f^d``, f in
       GHz); values from memory, labelled so: concrete a = 5.24, b = 0, c = 0.0462, d = 0.7822
       (stated for 1-100 GHz: used below it, an extrapolation); glass a = 6.27, b = 0,
       c = 0.0043, d = 1.1925 (0.1-100 GHz); metal a = 1, c = 1e7 (a perfect conductor here).
"""

from __future__ import annotations

from dataclasses import dataclass

from geo.errors import SiteFileError
from geo.site.keys import keys_of

__all__ = ["BuildingSpec", "Cladding", "CLADDINGS", "CLADDING_SOURCE", "parse_buildings", "cladding_constants"]

CLADDING_SOURCE = "ITU-R P.2040-1 Table 3 (from memory; concrete extrapolated below its 1 GHz range)"


@dataclass(frozen=True)
class Cladding:
    """A material by the four numbers of ITU-R P.2040 [1]_: ``eps_r = a f^b``, ``sigma = c f^d`` (f in GHz).

    ``a`` None: a perfect conductor.
    """

    name: str
    a: float | None
    b: float
    c: float
    d: float


#: The claddings a building may have (ITU-R P.2040-1 Table 3, from memory [1]_).
CLADDINGS = {
    "metal": Cladding("metal", None, 0.0, 0.0, 0.0),
    "concrete": Cladding("concrete", 5.24, 0.0, 0.0462, 0.7822),
    "glass": Cladding("glass", 6.27, 0.0, 0.0043, 1.1925),
}


@dataclass(frozen=True)
class BuildingSpec:
    """One building of the site file, lengths in metres.

    Attributes
    ----------
    name : str
    height_m : float
        Top of the roof above the ground. [m]
    footprint_deg : tuple of (lat, lon) or None
        The outline as given (WGS 84, degrees); None for a rectangle.
    centre_deg : (lat, lon) or None
        A rectangle's centre. [deg]
    length_m, width_m : float
        A rectangle's sides (length along ``heading_deg``). [m]
    heading_deg : float
        True bearing of the rectangle's length. [deg]
    cladding : str
        A key of :data:`CLADDINGS`.
    relative_permittivity, conductivity_s_m : float or None
        Given by the file (both or neither); None: from the cladding.
    """

    name: str
    height_m: float
    footprint_deg: tuple | None = None
    centre_deg: tuple | None = None
    length_m: float = 0.0
    width_m: float = 0.0
    heading_deg: float = 0.0
    cladding: str = "metal"
    relative_permittivity: float | None = None
    conductivity_s_m: float | None = None

    @property
    def constants_source(self) -> str:
        """Where the wall constants come from."""
        if self.relative_permittivity is not None:
            return "site file"
        return "perfect conductor" if self.cladding == "metal" else CLADDING_SOURCE


def cladding_constants(building: BuildingSpec, frequency_mhz: float) -> tuple[float | None, float | None]:
    """``(relative permittivity, conductivity S/m)`` of the walls at a frequency; (None, None) for metal [1]_."""
    if building.relative_permittivity is not None:
        return building.relative_permittivity, building.conductivity_s_m
    c = CLADDINGS[building.cladding]
    if c.a is None:
        return None, None
    f_ghz = frequency_mhz / 1000.0
    return c.a * f_ghz**c.b, c.c * f_ghz**c.d


#: The site reader's own checks (its number, text and key checks), handed over by it: it imports this module.
_CHECKS: list = []


def _helpers():
    return _CHECKS[0]


def _latlon(value, name: str) -> tuple[float, float]:
    sf = _helpers()
    if not isinstance(value, dict):
        raise SiteFileError(name, f"must be an inline table {{ lat = ..., lon = ... }} (got {sf._show(value)})")
    sf._only(value, name, ("lat", "lon"))
    lat = sf._number(value, name, "lat", 1.0, required=True, at_least=-89.9, at_most=89.9, unit="deg")
    lon = sf._number(value, name, "lon", 1.0, required=True, at_least=-180.0, at_most=180.0, unit="deg")
    return lat, lon


def _footprint(value, prefix: str) -> tuple:
    import shapely

    name = f"{prefix}.footprint"
    if not isinstance(value, list) or not 3 <= len(value) <= 200:
        raise SiteFileError(name, "must be a list of 3 to 200 points [{ lat = ..., lon = ... }, ...]")
    points = tuple(_latlon(p, f"{name} point {i + 1}") for i, p in enumerate(value))
    ring = shapely.Polygon([(lon, lat) for lat, lon in points])
    if not ring.is_valid or ring.area <= 0.0:
        raise SiteFileError(name, "must be a simple polygon (its edges may not cross); list the corners in order")
    if max(abs(a[1] - b[1]) for a in points for b in points) > 1.0:
        raise SiteFileError(name, "spans more than 1 deg of longitude; give a building's outline")
    return points


def _rectangle(item: dict, prefix: str, scale: float, units: str) -> dict:
    sf = _helpers()
    if "centre" not in item:
        raise SiteFileError(prefix, "needs a footprint: footprint = [{ lat, lon }, ...] or centre, length, width")
    centre = _latlon(item["centre"], f"{prefix}.centre")
    size = {"required": True, "unit": units, "at_least": 1.0, "at_most": 2000.0}
    length = sf._number(item, prefix, "length", scale, **size)
    width = sf._number(item, prefix, "width", scale, **size)
    heading = sf._number(item, prefix, "heading_deg", 1.0, required=False, unit="deg", at_least=-360.0, at_most=360.0)
    return dict(centre_deg=centre, length_m=length, width_m=width, heading_deg=(heading or 0.0) % 360.0)


def _constants(item: dict, prefix: str) -> dict:
    sf = _helpers()
    cladding = item.get("cladding", "metal")
    if not sf._is_choice(cladding, tuple(CLADDINGS)):
        raise SiteFileError(f"{prefix}.cladding", f'must be "metal", "concrete" or "glass" (got {sf._show(cladding)})')
    eps = sf._number(item, prefix, "relative_permittivity", 1.0, required=False, unit="", at_least=1.0, at_most=100.0)
    sigma = sf._number(item, prefix, "conductivity", 1.0, required=False, unit="S/m", at_least=0.0, at_most=1e8)
    if (eps is None) != (sigma is None):
        raise SiteFileError(
            f"{prefix}.relative_permittivity", "give both relative_permittivity and conductivity, or neither"
        )
    return dict(cladding=cladding, relative_permittivity=eps, conductivity_s_m=sigma)


def parse_buildings(items, scale: float, units: str, checks) -> tuple[BuildingSpec, ...]:
    """``[[building]]``: the buildings whose effect on the path ``mastplan run`` predicts.

    Parameters
    ----------
    items : list
        The TOML array of tables.
    scale : float
        Metres per unit of the file.
    units : str
        The file's unit, for the errors.
    checks : namespace
        The reader's checks (``_number``, ``_text``, ``_only``, ``_show``, ``_is_choice`` of
        :mod:`geo.site.site_file`), so that a building's errors read as every other table's.

    Returns
    -------
    tuple of BuildingSpec

    Raises
    ------
    SiteFileError
        One line, the dotted field counted from 1 (``building 2.height``).
    """
    _CHECKS[:] = [checks]
    sf = checks
    if not isinstance(items, list):
        raise SiteFileError("building", "must be an array of tables: write each as [[building]]")
    out, names = [], set()
    for i, item in enumerate(items):
        prefix = f"building {i + 1}"  # counted from 1, as a reader counts
        if not isinstance(item, dict):
            raise SiteFileError(prefix, f"must be a table [[building]] (got {sf._show(item)})")
        sf._only(item, prefix, keys_of("building"))
        name = sf._text(item, prefix, "name", required=True)
        if name in names:
            raise SiteFileError(f"{prefix}.name", f"{name!r} names an earlier building too; give each its own name")
        names.add(name)
        height = sf._number(item, prefix, "height", scale, required=True, unit=units, above=0.0, at_most=300.0)
        if "footprint" in item:
            clash = [k for k in ("centre", "length", "width", "heading_deg") if k in item]
            if clash:
                raise SiteFileError(
                    f"{prefix}.footprint", f"give either footprint or centre/length/width (not {clash[0]})"
                )
            shape = dict(footprint_deg=_footprint(item["footprint"], prefix))
        else:
            shape = _rectangle(item, prefix, scale, units)
        out.append(BuildingSpec(name, height, **shape, **_constants(item, prefix)))
    return tuple(out)
