"""Design objects a planner knows: the aerodrome reference code letters' aircraft, and vehicles.

``[[object]] code = "E"`` takes the sizes below; any size the table gives (``height``, ``length``,
``width``, ``base``) overrides the code's. The object model (:mod:`geo.optics.objects`) sees an
aircraft as its tail fin: a plate ``length`` long (the fin's chord at its root) and ``width``
thick, from ``base`` (the top of the fuselage, where the fin starts) up to ``height`` (the top of
the fin above the ground). The fuselage itself is not modelled; of it the model uses only the
height of its top, ``base``.

The code letters are those of ICAO Annex 14, Volume I, Table 1-1 (aerodrome reference code,
element 2: the wingspan: A up to 15 m, B 15 to 24 m, C 24 to 36 m, D 36 to 52 m, E 52 to 65 m,
F 65 to 80 m; from memory). The sizes per letter are representative of the larger aircraft of
each letter, **from memory** of the makers' published airport planning dimensions, rounded: a
planning figure, not a type's data. Give the sizes of the actual design aircraft where known.

References
----------
.. [1] ICAO Annex 14, Volume I, *Aerodrome Design and Operations*, 1.6 and Table 1-1 (aerodrome
       reference code; from memory).
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["DesignObject", "DESIGN_OBJECTS", "DESIGN_SOURCE", "design_object"]

DESIGN_SOURCE = "representative sizes from memory, no source"


@dataclass(frozen=True)
class DesignObject:
    """Sizes of one code letter's representative aircraft (its tail fin) or of a vehicle. [m]"""

    code: str
    what: str
    height_m: float
    length_m: float
    width_m: float
    base_m: float


#: By code: the Annex 14 letters (wingspan bands from memory) and three vehicles. Sizes from memory.
DESIGN_OBJECTS = {
    o.code: o
    for o in (
        # A, wingspan up to 15 m: Cessna 172, Piper PA-28 (tail about 2.7 m high).
        DesignObject("A", "code A aircraft (Cessna 172, Piper PA-28)", 2.7, 1.5, 0.15, 1.0),
        # B, 15 to 24 m: Embraer ERJ 145, Beechcraft 1900D (tail about 6.8 m high).
        DesignObject("B", "code B aircraft (Embraer ERJ 145, Beechcraft 1900D)", 6.8, 3.5, 0.3, 2.8),
        # C, 24 to 36 m: Airbus A320, Boeing 737-800 (tail about 12 m high).
        DesignObject("C", "code C aircraft (Airbus A320, Boeing 737-800)", 12.0, 6.0, 0.5, 4.5),
        # D, 36 to 52 m: Boeing 767-300, Airbus A310 (tail about 16 m high).
        DesignObject("D", "code D aircraft (Boeing 767-300, Airbus A310)", 16.0, 8.5, 0.7, 6.0),
        # E, 52 to 65 m: Boeing 777-300, Boeing 747-400, Airbus A350 (tail about 18.5-19.5 m high).
        DesignObject("E", "code E aircraft (Boeing 777-300, Boeing 747-400, Airbus A350)", 19.0, 12.0, 1.0, 8.0),
        # F, 65 to 80 m: Airbus A380, Boeing 747-8 (tail about 24 m high on the A380).
        DesignObject("F", "code F aircraft (Airbus A380, Boeing 747-8)", 24.0, 14.0, 1.2, 10.0),
        # Vehicles: a car, a van, a fuel truck (body sizes from memory).
        DesignObject("car", "car", 1.5, 4.5, 1.8, 0.0),
        DesignObject("van", "van", 2.8, 6.0, 2.0, 0.0),
        DesignObject("truck", "fuel truck", 3.8, 10.0, 2.5, 0.0),
    )
}


def design_object(code: str) -> DesignObject | None:
    """The sizes of a code (``"A"`` to ``"F"``, ``"car"``, ``"van"``, ``"truck"``), or None for an unknown one."""
    return DESIGN_OBJECTS.get(code)
