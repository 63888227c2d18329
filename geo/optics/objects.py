"""Objects near the mast as flat plates, cut into facets for the physics of :mod:`geo.optics.kernel`.

An object (a tail fin, a vehicle body) is taken as the three plates through its middle: the side
plate (length x height, along its heading), the end plate (width x height, across it) and the top
plate (length x width, horizontal). A fin (an object on a base above the ground) has a tapered,
swept side plate instead of a rectangle (:func:`fin_strips`: root chord = its length, taper
:data:`FIN_TAPER`, leading-edge sweep :data:`FIN_SWEEP_DEG`; generic, from memory) and its top
plate is its tip. Objects stand at headings spread about "along" and "across"
(:func:`heading_offsets_deg`), not exactly aligned. Each plate has the projected area
the box shows in that principal direction, which sets its specular return and its shadow;
a thin fin is in effect its side plate alone. The plates are two-sided perfect conductors.

Facet size by a phase criterion: the optics core integrates each facet with the phase
linearised about its centre, exact for a plane wave. The neglected quadratic part at the corner
of a square facet of side ``D`` seen from a distance ``r`` is at most ``k (D / sqrt 2)^2 / (2 r)
= pi D^2 / (2 lambda r)``; keeping it below ``pi / 8`` gives ``D <= sqrt(lambda r) / 2``. Near
the antennas (``r`` small) the plates are cut finely; far from them a 12 m fin may be one facet
per side. ``r`` is the distance from the antennas (and images) to the nearest point of the
object (or from the nearest receiver, when closer), never taken below :data:`MIN_RANGE_M`.
Checked in the tests against plates cut three times finer: fields within 12 % of the largest
(about 10 % for a tail 30 m in front of the mast, facing it), disturbances within 10 %.

Coordinates: the mast frame of :mod:`geo.radio.prediction` (``u`` toward the approach, ``w`` toward
the runway, ``Z`` up). [m]

References
----------
.. [1] Knott, E. F., Shaeffer, J. F. and Tuley, M. T., *Radar Cross Section*, 2nd ed., Artech
       House, 1993, ch. 5 (flat plates by physical optics).
.. [2] Born, M. and Wolf, E., *Principles of Optics*, 7th ed., Cambridge, 1999, sec. 8.3
       (Fresnel and Fraunhofer regimes: the quadratic phase term across an aperture).
"""

from __future__ import annotations

import math

import numpy as np

from geo.optics.kernel import Facets
from geo.site.site_file import ObjectSpec

__all__ = [
    "GENERIC_OBJECTS",
    "GENERIC_SOURCE",
    "MIN_RANGE_M",
    "facet_side_m",
    "heading_vector",
    "heading_offsets_deg",
    "HEADING_SPREAD_DEG",
    "HEADING_SAMPLES",
    "object_plates",
    "fin_strips",
    "FIN_TAPER",
    "FIN_SWEEP_DEG",
    "object_facets",
]

GENERIC_SOURCE = "generic, no source"
#: Three generic object classes used when the site file gives no [[object]] (sizes: generic, no source).
GENERIC_OBJECTS = (
    ObjectSpec("large aircraft tail", 19.0, 12.0, 1.0, 8.0, ("along", "across"), GENERIC_SOURCE),
    ObjectSpec("small aircraft tail", 9.0, 5.0, 0.5, 3.5, ("along", "across"), GENERIC_SOURCE),
    ObjectSpec("service vehicle", 3.0, 8.0, 2.5, 0.0, ("along", "across"), GENERIC_SOURCE),
)
#: A fin (an object standing on a base above the ground, ``base_m > 0``: a tail above its fuselage) is a
#: tapered, swept plate: tip chord over root chord and leading-edge sweep (typical of transport aircraft
#: fins; generic, from memory, no source), cut into this many strips up its height.
FIN_TAPER = 0.4
FIN_SWEEP_DEG = 35.0
FIN_STRIPS = 2
#: Headings as objects stand: spread evenly over +-12 deg about "along" and "across", sampled by 4
#: (the middles of four 6 deg bins: +-3 and +-9 deg), judged at the 95th percentile over them (the
#: spread: common practice, no source; a taxiing or parked aircraft is rarely exactly aligned).
HEADING_SPREAD_DEG = 12.0
HEADING_SAMPLES = 4
#: Shortest distance used in the facet criterion (an object closer than this touches the mast). [m]
MIN_RANGE_M = 5.0


def facet_side_m(range_m, wavelength_m: float):
    """Largest facet side with a quadratic phase below pi / 8 at ``range_m``: ``sqrt(lambda r) / 2`` [2]_.

    Parameters
    ----------
    range_m : array_like
        Distance from the nearest antenna. [m]
    wavelength_m : float
        [m]
    """
    return np.sqrt(wavelength_m * np.maximum(range_m, MIN_RANGE_M)) / 2.0


def heading_vector(heading: str, offset_deg: float = 0.0) -> np.ndarray:
    """Unit vector of a heading in the mast frame: ``along`` the runway (u) or ``across`` it (w).

    ``offset_deg`` turns it about the vertical (from u toward w). [deg]
    """
    if offset_deg == 0.0:
        return np.array([1.0, 0.0, 0.0]) if heading == "along" else np.array([0.0, 1.0, 0.0])
    angle = math.radians((0.0 if heading == "along" else 90.0) + offset_deg)
    return np.array([math.cos(angle), math.sin(angle), 0.0])


def heading_offsets_deg(spread_deg: float = HEADING_SPREAD_DEG, samples: int = HEADING_SAMPLES) -> np.ndarray:
    """The sampled headings about a nominal one: the middles of ``samples`` equal bins over ``+-spread_deg``.

    Each sample stands for an equal share of headings spread evenly over the range; with an even
    count the exact heading (0) is not a sample. One sample: the nominal heading itself. [deg]
    """
    if samples <= 1 or spread_deg <= 0.0:
        return np.zeros(1)
    return -spread_deg + 2.0 * spread_deg * (np.arange(samples) + 0.5) / samples


def object_plates(
    obj: ObjectSpec, heading: str, offset_deg: float = 0.0
) -> list[tuple[np.ndarray, np.ndarray, np.ndarray]]:
    """The object's plates relative to its foot: (centre offset, edge a, edge b), each shape (3,). [m]

    Plates of zero area (a width of 0) are left out. ``offset_deg`` turns the heading (:func:`heading_vector`).
    """
    h = heading_vector(heading, offset_deg)
    s = np.cross([0.0, 0.0, 1.0], h)
    up = np.array([0.0, 0.0, 1.0])
    tall = obj.height_m - obj.base_m
    mid = np.array([0.0, 0.0, obj.base_m + tall / 2.0])
    if obj.base_m > 0.0:  # a fin: tapered and swept
        plates = fin_strips(obj, h)
        tip_centre = -h * _fin_mid_slope(obj) * tall + np.array([0.0, 0.0, obj.height_m])
        top = (tip_centre, h * obj.length_m * FIN_TAPER, s * obj.width_m)
    else:
        plates = [(mid, h * obj.length_m, up * tall)]
        top = (np.array([0.0, 0.0, obj.height_m]), h * obj.length_m, s * obj.width_m)
    if obj.width_m > 0.0:
        plates.append((mid, s * obj.width_m, up * tall))
        plates.append(top)
    return plates


def _fin_mid_slope(obj: ObjectSpec) -> float:
    """How far the fin's mid-chord line moves back per metre of height. [-]

    Leading edge ``L / 2 - z tan(sweep)``, chord ``L (1 - (1 - taper) z / T)`` at height ``z``
    above the base (``T`` the fin's height): the mid-chord ``-z (tan(sweep) - (1 - taper) L / (2 T))``.
    """
    tall = obj.height_m - obj.base_m
    return math.tan(math.radians(FIN_SWEEP_DEG)) - (1.0 - FIN_TAPER) * obj.length_m / (2.0 * tall)


def fin_strips(obj: ObjectSpec, h: np.ndarray) -> list[tuple[np.ndarray, np.ndarray, np.ndarray]]:
    """A fin's side plate as a tapered, swept trapezoid: :data:`FIN_STRIPS` parallelogram strips up its height.

    The root chord is the object's length at its base; the chord falls linearly to
    :data:`FIN_TAPER` of it at the tip and the leading edge sweeps back (against the heading) by
    :data:`FIN_SWEEP_DEG`. Each strip is a parallelogram with the trapezoid's chord at its middle
    height, slanted along the mid-chord line (:func:`_fin_mid_slope`): the strips hold the
    trapezoid's area ``T L (1 + taper) / 2`` exactly (the chord is linear in height) and its
    slanted outline, to within the steps of the strips.
    """
    tall = obj.height_m - obj.base_m
    step = tall / FIN_STRIPS
    slope = _fin_mid_slope(obj)
    rise = np.array([0.0, 0.0, step]) - h * slope * step
    strips = []
    for i in range(FIN_STRIPS):
        z = (i + 0.5) * step
        chord = obj.length_m * (1.0 - (1.0 - FIN_TAPER) * z / tall)
        strips.append((-h * slope * z + np.array([0.0, 0.0, obj.base_m + z]), h * chord, rise))
    return strips


def object_facets(
    obj: ObjectSpec,
    heading: str,
    feet_m: np.ndarray,
    range_m: np.ndarray,
    wavelength_m: float,
    refine: float = 1.0,
    offset_deg: float = 0.0,
) -> tuple[Facets, np.ndarray]:
    """Facets of the object standing at each foot position, grouped by position.

    Parameters
    ----------
    obj : ObjectSpec
    heading : {"along", "across"}
    feet_m : numpy.ndarray, shape (G, 3)
        Ground point under the object's centre, per position. [m]
    range_m : numpy.ndarray, shape (G,)
        Distance from the antennas to the nearest point of the object, per position. [m]
    wavelength_m : float
    refine : float
        Divides the facet side (1: the phase criterion; larger: finer, for checks).
    offset_deg : float
        The heading turned by this about the vertical. [deg]

    Returns
    -------
    facets : Facets
        Two-sided plates.
    groups : numpy.ndarray of int, shape (P,)
        Position of each facet (non-decreasing).
    """
    feet = np.atleast_2d(np.asarray(feet_m, dtype=float))
    side = facet_side_m(np.asarray(range_m, dtype=float), wavelength_m) / refine
    centres, edges_a, edges_b, groups = [], [], [], []
    for offset, a, b in object_plates(obj, heading, offset_deg):
        la, lb = float(np.linalg.norm(a)), float(np.linalg.norm(b))
        # a slanted plate (a fin's strip): its facets' longer diagonal, not a square's, held to the criterion
        slant = max(np.linalg.norm(a / la + b / lb), np.linalg.norm(a / la - b / lb)) / math.sqrt(2.0)
        na = np.maximum(1, np.ceil(la * slant / side)).astype(int)
        nb = np.maximum(1, np.ceil(lb * slant / side)).astype(int)
        for ca, cb in sorted(set(zip(na.tolist(), nb.tolist()))):
            which = np.flatnonzero((na == ca) & (nb == cb))
            ia, ib = np.meshgrid((np.arange(ca) + 0.5) / ca - 0.5, (np.arange(cb) + 0.5) / cb - 0.5)
            local = offset + ia.ravel()[:, None] * a + ib.ravel()[:, None] * b  # (m, 3)
            centres.append((feet[which, None, :] + local[None, :, :]).reshape(-1, 3))
            count = which.size * local.shape[0]
            edges_a.append(np.tile(a / ca, (count, 1)))
            edges_b.append(np.tile(b / cb, (count, 1)))
            groups.append(np.repeat(which, local.shape[0]))
    group = np.concatenate(groups)
    order = np.argsort(group, kind="stable")
    facets = Facets(
        np.concatenate(centres)[order], np.concatenate(edges_a)[order], np.concatenate(edges_b)[order], two_sided=True
    )
    return facets, group[order]


def object_half_diagonal_m(obj: ObjectSpec) -> float:
    """Half the horizontal diagonal of the object's footprint. [m]"""
    return 0.5 * math.hypot(obj.length_m, obj.width_m)
