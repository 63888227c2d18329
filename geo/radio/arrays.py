"""Image-array types: antenna heights and proximity shifts.

An image array forms its pattern from each antenna and its image in the
ground. A horizontally polarised antenna at height ``h`` over a conducting
plane radiates, in the vertical plane, in proportion to
``sin(2 pi h sin(e) / lambda)`` at elevation ``e`` above the plane [1]_ [2]_.
Each array type puts its antennas at multiples of a base height chosen so
that a null or a crossover of the patterns lies on the path angle.

To add an array type, add one :class:`ArrayType` to :data:`ARRAY_TYPES`
(and its tests).

References
----------
.. [1] Kraus, J. D., *Antennas*, 2nd ed., McGraw-Hill, 1988, sec. 11-9
       (horizontal antenna above a perfectly conducting ground plane).
.. [2] FAA Order 6750.16, Siting Criteria for Instrument Landing Systems
       (image-array glide slopes: null-reference, sideband-reference and
       capture-effect heights).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

__all__ = ["path_setting_antennas", "ArrayType", "ARRAY_TYPES", "array_type", "antenna_heights_m", "proximity_shifts_m"]


@dataclass(frozen=True)
class ArrayType:
    """One image-array type.

    Attributes
    ----------
    name : str
        Name used in site files and outputs.
    roles : tuple of str
        Antenna roles, lowest first.
    quarter_wave_divisor : float
        The base height is ``lambda / (divisor * sin(theta))``.
    multiples : tuple of int
        Height of each antenna as a multiple of the base height.
    csb_feed, sbo_feed : tuple of complex
        Default relative carrier-plus-sidebands (CSB) and sidebands-only (SBO) feed of each
        antenna, lowest first; the SBO level is scaled by the prediction to the wanted
        displacement sensitivity.
    feeds_source : str
        Where the default feeds come from.
    clearance_csb_feed, clearance_sbo_feed : tuple of complex
        Relative feeds of a clearance transmitter on the same antennas (two-frequency
        capture-effect arrays only; empty otherwise); levelled by :mod:`geo.radio.clearance`.
    clearance_source : str
        Where the clearance feeds come from.
    """

    name: str
    roles: tuple[str, ...]
    quarter_wave_divisor: float
    multiples: tuple[int, ...]
    csb_feed: tuple[complex, ...] = ()
    sbo_feed: tuple[complex, ...] = ()
    feeds_source: str = ""
    clearance_csb_feed: tuple[complex, ...] = ()
    clearance_sbo_feed: tuple[complex, ...] = ()
    clearance_source: str = ""


#: The array types mastplan knows, by name.
ARRAY_TYPES: dict[str, ArrayType] = {
    t.name: t
    for t in (
        # Lower carries CSB, upper SBO with its first null on the path [2]_.
        ArrayType(
            "null-reference",
            ("lower", "upper"),
            4.0,
            (1, 2),
            (1, 0),
            (0, 1),
            "CSB on the lower antenna, SBO on the upper (FAA Order 6750.16)",
        ),
        # Lower h, upper 3h with h = lambda / (8 sin theta); SBO on both, equal and opposite, so
        # that the SBO pattern sin x - sin 3x has its null on the path [2]_.
        ArrayType(
            "sideband-reference",
            ("lower", "upper"),
            8.0,
            (1, 3),
            (1, 0),
            (1, -1),
            "CSB on the lower antenna, SBO on both equal and opposite (FAA Order 6750.16)",
        ),
        # M-array: h, 2h, 3h with h = lambda / (4 sin theta) [2]_. Its feed ratios are not
        # published openly; this set is derived here: SBO 1 : -2 : 1 puts a null on the path and
        # rises as x^3 near the horizon, CSB 1 : -0.5 : 0 lifts the carrier off the ground.
        ArrayType(
            "capture-effect",
            ("lower", "middle", "upper"),
            4.0,
            (1, 2, 3),
            (1, -0.5, 0),
            (1, -2, 1),
            "derived in mastplan (not a published set): SBO 1:-2:1, CSB 1:-0.5:0",
            # Clearance (derived, see geo.radio.clearance): CSB on the middle antenna (sin 2x: null on the
            # path, maximum at 0.5 theta where the course carrier is weak), SBO on lower and upper in
            # phase (sin x + sin 3x = 2 sin 2x cos x: the course's DDM shape, 150 Hz below the path).
            clearance_csb_feed=(0, 1, 0),
            clearance_sbo_feed=(1, 0, 1),
            clearance_source="derived in mastplan (not a published set): clearance CSB 0:1:0 (null on the "
            "path, fills 0.5 theta), clearance SBO 1:0:1 (150 Hz below the path, zero on it)",
        ),
    )
}


def path_setting_antennas(name: str) -> tuple[int, ...]:
    """Indices (lowest first) of the antennas whose course feeds form the path.

    The path is set where the CSB and SBO patterns meet: every antenna that carries either feeds it
    (null-reference: the lower with the CSB and the upper whose SBO null lies on the path;
    sideband-reference: both, SBO on each; capture-effect: all three). The reflecting plane is
    fitted over the union of these antennas' zones (:mod:`geo.ground.zone_grid`).
    """
    kind = array_type(name)
    return tuple(i for i, (c, s) in enumerate(zip(kind.csb_feed, kind.sbo_feed)) if c != 0 or s != 0)


def array_type(name: str) -> ArrayType:
    """Return the array type called ``name``.

    Raises
    ------
    ValueError
        Naming the types that exist.
    """
    try:
        return ARRAY_TYPES[name]
    except KeyError:
        allowed = ", ".join(f'"{n}"' for n in ARRAY_TYPES)
        raise ValueError(f"{name!r} is not an array type; use one of {allowed}") from None


def antenna_heights_m(array: str, wavelength_m: float, angle_deg: float, forward_slope_deg: float = 0.0) -> list[float]:
    """Antenna heights above the reflecting ground, lowest first.

    Parameters
    ----------
    array : str
        Array type name, a key of :data:`ARRAY_TYPES`.
    wavelength_m : float
        Carrier wavelength. [m]
    angle_deg : float
        Path angle above the horizontal. [deg]
    forward_slope_deg : float, optional
        Slope of the reflecting ground, positive when it rises toward the
        approach. The path angle over the plane is then ``theta - slope``.
        [deg]

    Returns
    -------
    list of float
        Heights above the reflecting plane at the mast. [m]

    Notes
    -----
    ``h_i = m_i * lambda / (k * sin(theta - alpha))`` with ``k`` = 4 for
    null-reference and capture-effect and 8 for sideband-reference [2]_.

    Examples
    --------
    >>> [round(h, 3) for h in antenna_heights_m("null-reference", 0.8965, 3.0)]
    [4.282, 8.565]
    """
    kind = array_type(array)
    elevation_rad = math.radians(angle_deg - forward_slope_deg)
    if elevation_rad <= 0.0:
        raise ValueError("the ground slope must be smaller than the path angle")
    base = wavelength_m / (kind.quarter_wave_divisor * math.sin(elevation_rad))
    return [m * base for m in kind.multiples]


def proximity_shifts_m(heights_m: list[float], offset_m: float) -> list[float]:
    """Shift of each antenna toward the runway, lowest first (lowest: 0).

    Parameters
    ----------
    heights_m : list of float
        Antenna heights, lowest first. [m]
    offset_m : float
        Distance from the runway centre line to the lowest antenna. [m]

    Returns
    -------
    list of float
        Horizontal shift of each antenna toward the centre line. [m]

    Notes
    -----
    ``s_i = (h_i**2 - h_1**2) / (2 D)`` makes the slant distance from a point
    on the centre line abeam the mast to each antenna the same to first
    order, so all antennas are in phase along the runway: common practice
    [2]_.
    """
    if offset_m <= 0.0:
        raise ValueError("offset_m must be positive")
    low = heights_m[0]
    return [(h * h - low * low) / (2.0 * offset_m) for h in heights_m]
