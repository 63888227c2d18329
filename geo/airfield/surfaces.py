"""The mast against the obstacle limitation surfaces beside a precision approach runway.

Heights are measured from the elevation of the nearest point of the runway centre line (the
lower edge of the inner transitional and transitional surfaces is at that elevation). Lateral
distances are from the centre line. Every parameter is configurable, because the values depend
on the runway code, the approach category and the Annex 14 edition in force; the defaults are
for a code 3 or 4 precision approach runway and come from memory of Annex 14 Volume I (8th
edition, 2018), to be confirmed against the edition that applies.

References
----------
.. [1] ICAO Annex 14, Volume I, Chapter 3 (runway strip: half-width 140 m for code 3-4 precision
       approach runways from the 8th edition, 150 m before; memory) and Chapter 4, Table 4-1
       (transitional 14.3 %; inner approach half-width 60 m and inner transitional 33.3 % for
       code 3-4; memory).
.. [2] ICAO Annex 14, Volume I, 9.9 (siting of equipment on operational areas: frangible and
       as low as possible; memory).
.. [3] ICAO Annex 14, Volume I, Chapter 1 (definition of the obstacle free zone: the airspace
       above the inner approach, inner transitional and balked landing surfaces and the part of
       the strip bounded by them, penetrated by no fixed obstacle other than a low-mass,
       frangibly mounted one required for air navigation); 4.1.18-4.1.33 (the three surfaces:
       inner approach 60 m before the threshold, 900 m long, 2 %; inner transitional 33.3 %
       rising from the sides of the inner approach, along the strip at the elevation of the
       nearest centre-line point, and up the sides of the balked landing surface, to the inner
       horizontal surface 45 m high; balked landing from 1,800 m past the threshold or the
       runway end, whichever is nearer, 10 % divergence, 4 %); Table 4-1 (values for a
       code 3-4 precision approach runway; code 1-2: inner approach half-width 45 m, 2.5 %,
       inner transitional 40 %, balked landing 3.33 %); 4.2.15-4.2.17 (no fixed objects above
       these surfaces except frangible ones that must be there for air navigation). All from
       memory: confirm against the edition in force. For Category I these three surfaces are,
       as we recall, a recommendation (4.2.13) and a standard for Categories II and III; mastplan
       treats the obstacle free zone as a limit for every category, and the site file can accept
       a mast in it (``[surfaces] allow_in_obstacle_free_zone = true``).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = [
    "SurfaceSpec",
    "DEFAULT_SURFACES",
    "surfaces_for_code",
    "MastClearance",
    "mast_clearance",
    "surface_heights_m",
    "ObstacleFreeZone",
    "obstacle_free_zone",
    "OFZ_PARTS",
]


@dataclass(frozen=True)
class SurfaceSpec:
    """Surface parameters.

    Attributes
    ----------
    strip_half_width_m : float
        Runway strip half-width; the transitional surface starts at its edge. [m]
    transitional_slope : float
        Rise per unit of lateral distance. [m/m]
    inner_transitional_start_m : float
        Lateral distance of the inner transitional surface's lower edge. [m]
    inner_transitional_slope : float
        [m/m]
    mast_allowance_m : float
        Top of the mast above the highest antenna. [m]
    source : str
        Where the values come from.
    inner_approach_start_m : float
        Distance of the inner approach surface's inner edge before the threshold [3]_. [m]
    inner_approach_length_m : float
        Length of the inner approach surface [3]_. [m]
    inner_approach_slope : float
        [m/m]
    balked_landing_start_m : float
        Distance of the balked landing surface's inner edge past the threshold (the runway end
        when nearer) [3]_. [m]
    balked_landing_divergence : float
        Outward spread of each side of the balked landing surface. [m/m]
    balked_landing_slope : float
        [m/m]
    inner_horizontal_height_m : float
        Height of the inner horizontal surface, where the inner transitional surface ends [3]_. [m]
    allow_in_obstacle_free_zone : bool
        The authority accepts the mast inside the obstacle free zone (a frangible mast that must
        stand there); the finding becomes a warning instead of a fail.

    Notes
    -----
    The inner approach surface's half-width is ``inner_transitional_start_m``: the inner
    transitional surface rises from the sides of the inner approach surface and from the lines
    in the strip that continue them [3]_.
    """

    strip_half_width_m: float = 140.0
    transitional_slope: float = 0.143
    inner_transitional_start_m: float = 60.0
    inner_transitional_slope: float = 0.333
    mast_allowance_m: float = 1.0
    source: str = (
        "defaults for a code 3-4 precision approach runway, ICAO Annex 14 Vol I 8th ed. (2018) "
        "3.4.3 and Table 4-1, from memory: confirm against the edition in force"
    )
    inner_approach_start_m: float = 60.0
    inner_approach_length_m: float = 900.0
    inner_approach_slope: float = 0.02
    balked_landing_start_m: float = 1800.0
    balked_landing_divergence: float = 0.10
    balked_landing_slope: float = 0.04
    inner_horizontal_height_m: float = 45.0
    allow_in_obstacle_free_zone: bool = False


DEFAULT_SURFACES = SurfaceSpec()

#: Defaults for a code 1-2 precision approach runway [1]_ [3]_ (memory).
_CODE_1_2 = SurfaceSpec(
    strip_half_width_m=70.0,
    inner_transitional_start_m=45.0,
    inner_transitional_slope=0.40,
    inner_approach_slope=0.025,
    balked_landing_slope=1.0 / 30.0,
    source=(
        "defaults for a code 1-2 precision approach runway, ICAO Annex 14 Vol I 8th ed. (2018) "
        "3.4.3 and Table 4-1, from memory: confirm against the edition in force"
    ),
)


def surfaces_for_code(runway_code: int | None) -> SurfaceSpec:
    """Default surface parameters for a runway code number (code 3-4 when unknown) [1]_ [3]_."""
    return _CODE_1_2 if runway_code in (1, 2) else DEFAULT_SURFACES


def surface_heights_m(lateral_m, spec: SurfaceSpec = DEFAULT_SURFACES) -> tuple[np.ndarray, np.ndarray]:
    """Heights of the inner transitional and transitional surfaces at lateral distances [1]_.

    Parameters
    ----------
    lateral_m : array_like
        Distance from the runway centre line. [m]

    Returns
    -------
    inner_transitional_m, transitional_m : numpy.ndarray
        Height above the nearest centre-line point; NaN where the surface does not reach (inside
        its lower edge: there the strip or the inner approach applies). [m]
    """
    d = np.asarray(lateral_m, dtype=float)
    inner = np.where(
        d >= spec.inner_transitional_start_m,
        (d - spec.inner_transitional_start_m) * spec.inner_transitional_slope,
        np.nan,
    )
    trans = np.where(d >= spec.strip_half_width_m, (d - spec.strip_half_width_m) * spec.transitional_slope, np.nan)
    return inner, trans


@dataclass(frozen=True)
class MastClearance:
    """Clearance of the top of the mast below the surfaces (negative: penetration).

    Attributes
    ----------
    top_height_m : numpy.ndarray
        Top of the mast above the nearest centre-line point. [m]
    inner_transitional_margin_m, transitional_margin_m : numpy.ndarray
        Surface height minus mast top; NaN where the surface does not reach the mast. [m]
    in_strip : numpy.ndarray of bool
        The mast stands inside the runway strip (it must be frangible and as low as possible [2]_).
    ofz_margin_m : numpy.ndarray or None
        Height of the obstacle free zone's floor above the mast top (negative: the mast stands
        in the zone); NaN where the zone does not reach the mast; ``None`` when the setback was
        not given [3]_. [m]
    ofz_part : numpy.ndarray of str or None
        Which part of the zone's floor is above or below the mast: one of :data:`OFZ_PARTS`,
        ``""`` where the zone does not reach.
    lateral_m : numpy.ndarray or None
        Distance of the mast's nearest part from the centre line. [m]
    """

    top_height_m: np.ndarray
    inner_transitional_margin_m: np.ndarray
    transitional_margin_m: np.ndarray
    in_strip: np.ndarray
    ofz_margin_m: np.ndarray | None = None
    ofz_part: np.ndarray | None = None
    lateral_m: np.ndarray | None = None

    @property
    def in_obstacle_free_zone(self) -> np.ndarray:
        """True where the mast top is above the obstacle free zone's floor [3]_."""
        if self.ofz_margin_m is None:
            return np.zeros(np.shape(self.top_height_m), dtype=bool)
        return np.nan_to_num(self.ofz_margin_m, nan=np.inf) < 0

    @property
    def penetrates(self) -> np.ndarray:
        """True where the mast top is above a surface."""
        return (np.nan_to_num(self.inner_transitional_margin_m, nan=np.inf) < 0) | (
            np.nan_to_num(self.transitional_margin_m, nan=np.inf) < 0
        )


def mast_clearance(
    offset_m,
    mast_top_elevation_m,
    centreline_elevation_m,
    spec: SurfaceSpec = DEFAULT_SURFACES,
    setback_m=None,
    runway_length_m: float | None = None,
    runway_gradient: float = 0.0,
) -> MastClearance:
    """The mast's top against the surfaces and the obstacle free zone [1]_ [2]_ [3]_.

    Parameters
    ----------
    offset_m : array_like
        Distance of the mast's nearest part (the highest antenna) from the centre line. [m]
    mast_top_elevation_m : array_like
        Highest antenna plus the allowance. [m]
    centreline_elevation_m : array_like
        Elevation of the nearest centre-line point. [m]
    setback_m : array_like, optional
        Distance past the threshold; with ``runway_length_m`` it places the mast against the
        obstacle free zone. [m]
    runway_length_m : float, optional
        Threshold to runway end. [m]
    runway_gradient : float
        Mean runway gradient, uphill positive. [m/m]

    Returns
    -------
    MastClearance
    """
    top = np.asarray(mast_top_elevation_m, float) - np.asarray(centreline_elevation_m, float)
    inner, trans = surface_heights_m(offset_m, spec)
    in_strip = np.asarray(offset_m, float) < spec.strip_half_width_m
    lateral = np.asarray(offset_m, float)
    if setback_m is None or runway_length_m is None:
        return MastClearance(top, inner - top, trans - top, in_strip, lateral_m=lateral)
    zone = obstacle_free_zone(setback_m, offset_m, runway_length_m, spec, runway_gradient)
    return MastClearance(top, inner - top, trans - top, in_strip, zone.floor_height_m - top, zone.part, lateral)


#: Parts of the obstacle free zone's floor, as findings and sweep reasons name them [3]_.
OFZ_PARTS = ("strip", "inner approach surface", "inner transitional surface", "balked landing surface")


@dataclass(frozen=True)
class ObstacleFreeZone:
    """The obstacle free zone's floor at given points [3]_.

    Attributes
    ----------
    floor_height_m : numpy.ndarray
        Height of the floor above the nearest centre-line point (for points before the
        threshold: above the threshold); NaN where the zone does not reach the point (beyond the
        inner transitional surface's top at the inner horizontal surface, or beyond the inner
        approach and balked landing surfaces' ends). [m]
    part : numpy.ndarray of str
        The part of the floor there (:data:`OFZ_PARTS`), ``""`` outside.
    """

    floor_height_m: np.ndarray
    part: np.ndarray


def obstacle_free_zone(
    along_m, lateral_m, runway_length_m: float, spec: SurfaceSpec = DEFAULT_SURFACES, runway_gradient: float = 0.0
) -> ObstacleFreeZone:
    """Floor of the obstacle free zone (OFZ) of a precision approach runway [3]_.

    In the runway frame: the strip part between the inner approach surface's inner edge and the
    balked landing surface's inner edge, within the inner approach half-width of the centre
    line, has its floor at the centre line (any object standing there is in the zone); before
    it the inner approach surface, past it the balked landing surface; beside them all the inner
    transitional surface rises across the runway up to the inner horizontal surface.

    Parameters
    ----------
    along_m : array_like
        Distance past the threshold (negative: before it, on the approach). [m]
    lateral_m : array_like
        Distance from the centre line (either side). [m]
    runway_length_m : float
        Threshold to runway end; the balked landing surface starts at the nearer of its distance
        and the end. [m]
    spec : SurfaceSpec
    runway_gradient : float
        Mean runway gradient, uphill positive: the balked landing surface rises from the centre
        line's elevation at its inner edge, so above the nearest centre-line point it rises by
        its slope less the gradient. [m/m]

    Returns
    -------
    ObstacleFreeZone

    Notes
    -----
    The inner transitional slope is measured at right angles to the centre line [3]_; beside the
    balked landing surface its lower edge is that surface's diverging side. The inner approach
    surface is referred to the threshold's elevation.
    """
    x, d = np.broadcast_arrays(np.asarray(along_m, float), np.abs(np.asarray(lateral_m, float)))
    half = spec.inner_transitional_start_m
    x_ia = -spec.inner_approach_start_m
    x_bl = min(spec.balked_landing_start_m, runway_length_m)
    before = x < x_ia
    past = x > x_bl
    base = np.zeros(x.shape)
    base = np.where(before, (x_ia - x) * spec.inner_approach_slope, base)
    base = np.where(past, (x - x_bl) * (spec.balked_landing_slope - runway_gradient), base)
    edge = np.where(past, half + (x - x_bl) * spec.balked_landing_divergence, half)
    inside_edge = d <= edge
    floor = np.where(inside_edge, base, base + (d - edge) * spec.inner_transitional_slope)
    reach = (floor <= spec.inner_horizontal_height_m) & (x >= x_ia - spec.inner_approach_length_m)
    part = np.where(
        inside_edge,
        np.where(before, OFZ_PARTS[1], np.where(past, OFZ_PARTS[3], OFZ_PARTS[0])),
        OFZ_PARTS[2],
    )
    return ObstacleFreeZone(np.where(reach, floor, np.nan), np.where(reach, part, ""))
