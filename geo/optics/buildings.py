"""Buildings near the mast: walls and roof as plates of the optics core, and the shadow they cast.

**Reflection.** A building is a prism: its footprint (a polygon in the mast frame) raised from the
ground under it to its roof. Each wall is a vertical rectangular plate over one edge of the
footprint, the roof a horizontal plate over the footprint (a rectangle: one plate; any other
outline: squares of the facet side whose centres lie inside it, a staircase edge). The plates are
**one-sided**, their normals outward: a wall is lit and seen only from outside, as the surface of a
solid body is in physical optics [1]_ (the inner faces of a closed body carry no current). They are
cut into facets by the phase criterion of :func:`geo.optics.objects.facet_side_m`, and their field
over the reflecting plane is the sum of the four ground paths of
:func:`geo.optics.scatter_paths.four_path_field`, the same function the objects use; metal is a
perfect conductor, concrete and glass carry the Fresnel coefficient of their constants
(:mod:`geo.site.buildings`, ITU-R P.2040) at each facet [2]_.

**Shadow.** One-sided plates do not scatter forward, so the shadow is taken separately: each
direct wave (antenna to receiver) and each ground-reflected wave (the image's ray, unfolded:
the building and its mirror image in the plane stand in its way) that passes through the
footprint in plan is multiplied by the knife-edge factor ``F(v)`` of ITU-R P.526 [3]_ over the
building's top, ``v`` from the height of the roof above the ray where the ray runs lowest over
the footprint. The footprint taken is its convex hull. Taking the top as an infinite straight
edge leaves out the waves that pass round the building's sides, so the shadow is its deepest
value, a bound; rays that pass above the roof with ``v < -0.78`` (no loss in P.526) are left as
they are. The tests check the physical optics of a thin screen against the same ``J(v)``.

Coordinates: the mast frame of :mod:`geo.radio.prediction` (``u`` toward the approach, ``w`` toward
the runway, ``Z`` up), the plane through the origin. [m]

References
----------
.. [1] Knott, E. F., Shaeffer, J. F. and Tuley, M. T., *Radar Cross Section*, 2nd ed., Artech
       House, 1993, ch. 5 (physical optics: the lit surface carries the current, flat plates).
.. [2] ITU-R Recommendation P.2040-1 (2015), Table 3 (constants of building materials; from memory).
.. [3] ITU-R Recommendation P.526, "Propagation by diffraction", sec. 4.1 (single knife edge).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from geo.optics.kernel import Facets, mirror_points
from geo.optics.objects import facet_side_m
from geo.optics.scatter_paths import four_path_fields
from geo.radio.knife_edge import fresnel_parameter, knife_edge_field_fast

__all__ = [
    "SHADOW_NOTE",
    "BuildingShape",
    "rectangle_outline",
    "shape_in_mast_frame",
    "building_plates",
    "plates_facets",
    "building_facets",
    "scattered_fields",
    "shadow_factors",
    "shadow_fields",
    "building_fields",
]

SHADOW_NOTE = (
    "buildings: walls and roof one-sided physical-optics plates (four ground paths over the reflecting plane); "
    "their shadow on the direct and ground-reflected waves by the knife-edge factor of ITU-R P.526 over the roof "
    "(an infinite edge: the deepest shadow, a bound; the waves round the sides left out)"
)
#: Below this ``v`` P.526 gives no loss: the ray is left as it is [3]_.
_LIT_LIMIT_V = -0.78


@dataclass(frozen=True)
class BuildingShape:
    """A building in the mast frame.

    Attributes
    ----------
    name : str
    outline_m : numpy.ndarray, shape (N, 3)
        Footprint corners (u, w), counter-clockwise seen from above, not closed. [m]
    height_m : float
        Roof above the ground. [m]
    base_m : float
        The ground under it above the plane at its centre (0: on the plane). [m]
    relative_permittivity, conductivity_s_m : float or None
        Wall constants; None: a perfect conductor.
    """

    name: str
    outline_m: np.ndarray
    height_m: float
    base_m: float = 0.0
    relative_permittivity: float | None = None
    conductivity_s_m: float | None = None

    @property
    def centre_m(self) -> np.ndarray:
        """The mean of the corners (u, w). [m]"""
        return self.outline_m.mean(axis=0)

    @property
    def reach_m(self) -> float:
        """Largest distance from the centre to a corner. [m]"""
        return float(np.max(np.linalg.norm(self.outline_m - self.centre_m, axis=1)))


def _counter_clockwise(points: np.ndarray) -> np.ndarray:
    x, y = points[:, 0], points[:, 1]
    area2 = float(np.sum(x * np.roll(y, -1) - np.roll(x, -1) * y))
    return points if area2 > 0 else points[::-1].copy()


def rectangle_outline(centre_uw, length_m: float, width_m: float, angle_rad: float) -> np.ndarray:
    """Corners (4, 2) of a rectangle, its length at ``angle_rad`` from +u toward +w, counter-clockwise. [m]"""
    e = np.array([math.cos(angle_rad), math.sin(angle_rad)])
    p = np.array([-e[1], e[0]])
    c = np.asarray(centre_uw, float)
    hl, hw = length_m / 2.0, width_m / 2.0
    corners = np.array([c + sa * hl * e + sb * hw * p for sa, sb in ((-1, -1), (1, -1), (1, 1), (-1, 1))])
    return _counter_clockwise(corners)


def shape_in_mast_frame(
    building, frame, side: str, setback_m: float, offset_m: float, base_m=0.0, constants=(None, None)
):
    """A site file's building (:class:`geo.site.buildings.BuildingSpec`) in the mast frame.

    The runway frame's ``along`` (from the threshold toward the end) and ``cross`` (right of a
    pilot on approach) become ``u = setback - along``, ``w = offset - s cross`` (``s`` = +1 for a
    mast on the right), as the study samples its DEM; a rectangle's corners are placed on the
    WGS 84 geodesics from its centre (:func:`geo.airfield.frame.geodesic_forward`).
    """
    from geo.airfield.frame import geodesic_forward

    if building.footprint_deg is not None:
        lat = np.array([p[0] for p in building.footprint_deg])
        lon = np.array([p[1] for p in building.footprint_deg])
    else:
        lat0, lon0 = building.centre_deg
        half = math.hypot(building.length_m, building.width_m) / 2.0
        turn = math.degrees(math.atan2(building.width_m, building.length_m))
        corners = [
            geodesic_forward(lat0, lon0, building.heading_deg + a, half) for a in (turn, 180 - turn, 180 + turn, -turn)
        ]
        lat, lon = np.array([c[0] for c in corners]), np.array([c[1] for c in corners])
    along, cross = frame.to_plane(lat, lon)
    sign = 1.0 if side == "right" else -1.0
    uw = np.column_stack([setback_m - np.asarray(along), offset_m - sign * np.asarray(cross)])
    eps, sigma = constants
    return BuildingShape(building.name, _counter_clockwise(uw), building.height_m, float(base_m), eps, sigma)


def _roof_plates(outline: np.ndarray, side_m: float) -> list[tuple]:
    """The roof: one plate for a rectangle, else squares inside the outline (its longest edge's axes)."""
    edges = np.roll(outline, -1, axis=0) - outline
    if outline.shape[0] == 4 and abs(float(edges[0] @ edges[1])) < 1e-6 * float(edges[0] @ edges[0] + 1.0):
        e1 = np.r_[edges[0], 0.0]
        e2 = np.r_[edges[1], 0.0]
        a, b = (e1, e2) if np.cross(e1, e2)[2] > 0 else (e2, e1)
        return [(np.r_[outline.mean(axis=0), 0.0], a, b)]
    import shapely

    longest = edges[np.argmax(np.linalg.norm(edges, axis=1))]
    ex = longest / np.linalg.norm(longest)
    ey = np.array([-ex[1], ex[0]])
    local = outline @ np.column_stack([ex, ey])
    (x0, y0), (x1, y1) = local.min(axis=0), local.max(axis=0)
    nx, ny = max(1, math.ceil((x1 - x0) / side_m)), max(1, math.ceil((y1 - y0) / side_m))
    sx, sy = (x1 - x0) / nx, (y1 - y0) / ny
    xs, ys = np.meshgrid(x0 + (np.arange(nx) + 0.5) * sx, y0 + (np.arange(ny) + 0.5) * sy)
    inside = shapely.contains_xy(shapely.Polygon(local), xs.ravel(), ys.ravel())
    centres = np.column_stack([xs.ravel()[inside], ys.ravel()[inside]]) @ np.vstack([ex, ey])
    a, b = np.r_[ex * sx, 0.0], np.r_[ey * sy, 0.0]
    return [(np.r_[c, 0.0], a, b) for c in centres]


def building_plates(shape: BuildingShape, side_m: float = 10.0) -> list[tuple[np.ndarray, np.ndarray, np.ndarray]]:
    """Walls then roof as one-sided plates (centre, edge a, edge b), ``a x b`` outward. [m]

    Centres are relative to the plane at the foot (``Z`` = 0 on the plane); ``side_m`` is the side
    of the roof's squares when the footprint is not a rectangle.
    """
    up = np.array([0.0, 0.0, shape.height_m])
    plates = []
    for p0, p1 in zip(shape.outline_m, np.roll(shape.outline_m, -1, axis=0)):
        a = np.r_[p1 - p0, 0.0]
        plates.append((np.r_[(p0 + p1) / 2.0, shape.base_m + shape.height_m / 2.0], a, up))
    for c, a, b in _roof_plates(shape.outline_m, side_m):
        plates.append((c + [0.0, 0.0, shape.base_m + shape.height_m], a, b))
    return plates


def plates_facets(centres, edges_a, edges_b, groups, side_m) -> tuple[Facets, np.ndarray]:
    """Plates cut into facets of at most ``side_m`` (per plate), one-sided, ordered by group.

    Parameters
    ----------
    centres, edges_a, edges_b : numpy.ndarray, shape (K, 3)
        The plates. [m]
    groups : numpy.ndarray of int, shape (K,)
        The building (position) each plate belongs to.
    side_m : numpy.ndarray, shape (K,)
        Largest facet side per plate (:func:`geo.optics.objects.facet_side_m`). [m]
    """
    la, lb = np.linalg.norm(edges_a, axis=1), np.linalg.norm(edges_b, axis=1)
    na = np.maximum(1, np.ceil(la / side_m)).astype(int)
    nb = np.maximum(1, np.ceil(lb / side_m)).astype(int)
    out_c, out_a, out_b, out_g = [], [], [], []
    for ca, cb in sorted(set(zip(na.tolist(), nb.tolist()))):
        which = np.flatnonzero((na == ca) & (nb == cb))
        ia, ib = np.meshgrid((np.arange(ca) + 0.5) / ca - 0.5, (np.arange(cb) + 0.5) / cb - 0.5)
        ia, ib = ia.ravel(), ib.ravel()
        a, b = edges_a[which], edges_b[which]
        local = ia[None, :, None] * a[:, None, :] + ib[None, :, None] * b[:, None, :]
        out_c.append((centres[which, None, :] + local).reshape(-1, 3))
        out_a.append(np.repeat(a / ca, ia.size, axis=0))
        out_b.append(np.repeat(b / cb, ia.size, axis=0))
        out_g.append(np.repeat(groups[which], ia.size))
    g = np.concatenate(out_g)
    order = np.argsort(g, kind="stable")
    facets = Facets(np.concatenate(out_c)[order], np.concatenate(out_a)[order], np.concatenate(out_b)[order], False)
    return facets, g[order]


def _plane_z(normal, u, w):
    return -(normal[0] * np.asarray(u) + normal[1] * np.asarray(w)) / normal[2]


def building_facets(model, shapes, receivers_m, refine: float = 1.0) -> tuple[Facets, np.ndarray, np.ndarray]:
    """Facets of several buildings (one group each) on the model's plane, and their centres.

    The facet side follows the phase criterion at the building's nearest distance from the
    antennas or the receivers (as for objects, :func:`geo.optics.objects.facet_side_m`).

    Returns
    -------
    facets : Facets
    groups : numpy.ndarray of int
    centres_m : numpy.ndarray, shape (G, 3)
        Each building's middle (for the ground paths' grazing angles). [m]
    """
    rx = np.atleast_2d(np.asarray(receivers_m, float))
    parts = ([], [], [], [], [])
    centres = []
    for g, shape in enumerate(shapes):
        cu, cw = shape.centre_m
        z0 = float(_plane_z(model.normal, cu, cw))
        centre = np.array([cu, cw, z0 + shape.base_m + shape.height_m / 2.0])
        centres.append(centre)
        reach = math.hypot(shape.reach_m, shape.height_m / 2.0)
        near = min(np.linalg.norm(model.positions_m - centre, axis=1).min(), np.linalg.norm(rx - centre, axis=1).min())
        side = facet_side_m(near - reach, model.wavelength_m) / refine
        for c, a, b in building_plates(shape, float(side)):
            c = c + [0.0, 0.0, float(_plane_z(model.normal, c[0], c[1]))]
            for part, value in zip(parts, (c, a, b, g, side)):
                part.append(value)
    c, a, b = (np.array(p, float) for p in parts[:3])
    facets, groups = plates_facets(c, a, b, np.array(parts[3]), np.array(parts[4], float))
    return facets, groups, np.array(centres)


def scattered_fields(model, facets, groups, centres_m, receivers_m, constants=(None, None)):
    """CSB and SBO the walls and roofs scatter, per group and receiver (four ground paths).

    The same composition as the objects' (:func:`geo.optics.areas.object_fields`): every antenna's
    four-path field (its element's pattern on the legs from it, :attr:`ArrayModel.element`),
    weighted by its feeds.

    Returns
    -------
    d_csb, d_sbo : numpy.ndarray of complex, shape (G, R)
        In the units of :meth:`geo.radio.prediction.ArrayModel.fields`.
    """
    rx = np.atleast_2d(np.asarray(receivers_m, float))
    element = None if model.element is None or model.element.is_isotropic else model.element_field
    e = four_path_fields(
        model.positions_m, facets, groups, centres_m, rx, model.wavelength_m, model.normal,
        model.relative_permittivity, model.conductivity_s_m, element=element, facet_constants=constants,
    )  # fmt: skip
    return np.tensordot(model.csb, e, axes=1), np.tensordot(model.sbo, e, axes=1)


def _hull_planes(outline: np.ndarray):
    """Outward edge normals and edge points of the convex hull of one outline."""
    import shapely

    hull = np.asarray(shapely.MultiPoint(outline).convex_hull.exterior.coords)[:-1]
    hull = _counter_clockwise(hull)
    edges = np.roll(hull, -1, axis=0) - hull
    return np.column_stack([edges[:, 1], -edges[:, 0]]), hull


def shadow_factors(sources_m, receivers_m, outline_m, top_m: float, normal, wavelength_m: float) -> np.ndarray:
    """Knife-edge factor of a building on the rays from sources (antennas or images) to receivers.

    Parameters
    ----------
    sources_m : numpy.ndarray, shape (S, 3)
    receivers_m : numpy.ndarray, shape (R, 3)
    outline_m : numpy.ndarray, shape (N, 2)
        Footprint (its convex hull is used). [m]
    top_m : float
        Roof above the plane. [m]
    normal : numpy.ndarray, shape (3,)
        The plane's unit normal.

    Returns
    -------
    numpy.ndarray of complex, shape (S, R)
        ``F(v)`` where the ray crosses the footprint in plan with ``v >= -0.78``, else 1 [3]_.
    """
    n_out, hull = _hull_planes(np.asarray(outline_m, float))
    s = np.asarray(sources_m, float)[:, None, :]
    r = np.asarray(receivers_m, float)[None, :, :]
    d = r - s  # (S, R, 3)
    t0 = np.zeros(d.shape[:2])
    t1 = np.ones(d.shape[:2])
    for nk, pk in zip(n_out, hull):
        num = (s[..., 0] - pk[0]) * nk[0] + (s[..., 1] - pk[1]) * nk[1]
        den = d[..., 0] * nk[0] + d[..., 1] * nk[1]
        with np.errstate(divide="ignore", invalid="ignore"):
            t = -num / den
        t0 = np.where(den < 0, np.maximum(t0, t), t0)
        t1 = np.where(den > 0, np.minimum(t1, t), t1)
        t1 = np.where((den == 0) & (num > 0), -1.0, t1)
    cross = t1 > t0
    out = np.ones(d.shape[:2], dtype=complex)
    if not cross.any():
        return out
    plane = lambda p: p @ normal  # noqa: E731 (height above the plane through the origin)
    z0 = plane(s[..., :] + t0[..., None] * d)
    z1 = plane(s[..., :] + t1[..., None] * d)
    through = (z0 * z1) < 0  # the unfolded ray meets the plane over the footprint: its lowest point is 0
    low = np.where(through, 0.0, np.minimum(np.abs(z0), np.abs(z1)))
    with np.errstate(divide="ignore", invalid="ignore"):
        t_zero = np.where(through, z0 / (z0 - z1), 0.0)
    t_low = np.where(through, t0 + t_zero * (t1 - t0), np.where(np.abs(z0) <= np.abs(z1), t0, t1))
    length = np.linalg.norm(d, axis=2)
    d1 = np.maximum(t_low * length, 1e-3)
    d2 = np.maximum((1.0 - t_low) * length, 1e-3)
    v = fresnel_parameter(top_m - low, d1, d2, wavelength_m)
    hit = cross & (v >= _LIT_LIMIT_V)
    out[hit] = knife_edge_field_fast(v[hit])
    return out


def shadow_fields(model, shape: BuildingShape, receivers_m) -> tuple[np.ndarray, np.ndarray]:
    """Change of CSB and SBO by the building's shadow on the direct and ground-reflected waves (R,).

    Each antenna's direct wave and its image's wave (Fresnel coefficient at the image ray's
    grazing angle, as :meth:`ArrayModel.fields`) times ``F - 1`` (:func:`shadow_factors`).
    """
    rx = np.atleast_2d(np.asarray(receivers_m, float))
    k = 2.0 * math.pi / model.wavelength_m
    cu, cw = shape.centre_m
    top = shape.base_m + shape.height_m
    images = mirror_points(model.positions_m, model.normal)
    f_direct = shadow_factors(model.positions_m, rx, shape.outline_m, top, model.normal, model.wavelength_m)
    f_image = shadow_factors(images, rx, shape.outline_m, top, model.normal, model.wavelength_m)
    d_csb = np.zeros(rx.shape[0], dtype=complex)
    d_sbo = np.zeros_like(d_csb)
    for i, (pos, img, c, s) in enumerate(zip(model.positions_m, images, model.csb, model.sbo)):
        if np.all(f_direct[i] == 1.0) and np.all(f_image[i] == 1.0):
            continue
        r1 = np.linalg.norm(rx - pos, axis=1)
        d = rx - img
        r2 = np.linalg.norm(d, axis=1)
        gamma = model._gamma((d @ model.normal) / r2)
        e = (f_direct[i] - 1.0) * np.exp(-1j * k * r1) / r1 + gamma * (f_image[i] - 1.0) * np.exp(-1j * k * r2) / r2
        d_csb += c * e
        d_sbo += s * e
    return d_csb, d_sbo


def building_fields(model, shapes, receivers_m, refine: float = 1.0):
    """Each building's change of CSB and SBO at the receivers: its scattered field and its shadow.

    Parameters
    ----------
    model : geo.radio.prediction.ArrayModel
    shapes : list of BuildingShape
    receivers_m : numpy.ndarray, shape (R, 3)
    refine : float
        Finer facets than the phase criterion (checks).

    Returns
    -------
    d_csb, d_sbo : numpy.ndarray of complex, shape (G, R)
    """
    rx = np.atleast_2d(np.asarray(receivers_m, float))
    d_csb = np.zeros((len(shapes), rx.shape[0]), dtype=complex)
    d_sbo = np.zeros_like(d_csb)
    for g, shape in enumerate(shapes):
        facets, groups, centres = building_facets(model, [shape], rx, refine)
        constants = (shape.relative_permittivity, shape.conductivity_s_m)
        c, s = scattered_fields(model, facets, groups, centres, rx, constants)
        sc, ss = shadow_fields(model, shape, rx)
        d_csb[g] = c[0] + sc
        d_sbo[g] = s[0] + ss
    return d_csb, d_sbo
