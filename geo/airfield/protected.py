"""Protected (critical and sensitive) areas of the local rules, against the computed zones.

Authorities define their critical and sensitive areas differently, so the site file gives them
as rectangles or outlines relative to the mast (see :class:`geo.site.site_file.ProtectedArea`). Here they
become polygons in the mast's plane coordinates (``u`` toward the approach, ``w`` toward the
runway), and the computed reflection zones are compared with them.
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["area_polygon", "ZoneCover", "zone_cover"]


def area_polygon(area):
    """A protected area as a shapely polygon in mast plane coordinates (u, w). [m]"""
    import shapely

    polygon = shapely.Polygon(area.outline_m)
    return polygon if polygon.is_valid else shapely.make_valid(polygon)


@dataclass(frozen=True)
class ZoneCover:
    """How much of a computed zone the protected areas cover.

    Attributes
    ----------
    kind : str
        Zone kind (``"path"`` or ``"coverage"``), all antennas together.
    zone_area_m2, outside_m2 : float
        Zone area, and its part outside every protected area. [m^2]
    outside_percent : float
        [%]
    """

    kind: str
    zone_area_m2: float
    outside_m2: float
    outside_percent: float


def zone_cover(zone_polygon, kind: str, areas) -> ZoneCover:
    """The part of a zone outside the union of the protected areas."""
    import shapely

    protected = shapely.union_all([area_polygon(a) for a in areas])
    outside = shapely.difference(zone_polygon, protected).area
    total = zone_polygon.area
    return ZoneCover(kind, total, outside, 100.0 * outside / total if total > 0 else 0.0)
