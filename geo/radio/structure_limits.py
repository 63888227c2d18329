"""Glide path structure limits of Annex 10 by approach segment.

The approach from the coverage limit to the threshold is cut at the ILS points: A (4 NM before
the threshold), B (1,050 m before it) and, for Category I, C (where the downward-extended
straight path is 30 m above the horizontal plane through the threshold). The 95 % amplitude of
the path bends is limited per segment [1]_:

- Category I: 0.035 DDM from the coverage limit to ILS point C;
- Categories II and III: 0.035 DDM to ILS point A, falling linearly to 0.023 DDM at ILS point
  B, then 0.023 DDM to the ILS reference datum.

These values are from memory of Annex 10 Vol I 3.1.5.4 (the ILS points from Vol I 3.1.1):
confirm them against the edition in force before relying on a verdict.

Distances are measured before the threshold along the centre line (positive on the approach). [m]

References
----------
.. [1] ICAO Annex 10, Volume I, 3.1.1 (ILS points A, B, C) and 3.1.5.4 (glide path structure);
       values from memory, to be confirmed against the edition in force.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

__all__ = ["LIMITS_SOURCE", "POINT_A_M", "POINT_B_M", "COVERAGE_M", "Segment", "structure_segments"]

#: ILS point A: 4 NM (7.5 km) before the threshold (Annex 10 Vol I 3.1.1; memory).
POINT_A_M = 4 * 1852.0
#: ILS point B: 1,050 m before the threshold (Annex 10 Vol I 3.1.1; memory).
POINT_B_M = 1050.0
#: Coverage limit: 10 NM (Annex 10 Vol I 3.1.5.3.1; seen in quotation).
COVERAGE_M = 10 * 1852.0
#: Height of ILS point C above the threshold plane (Annex 10 Vol I 3.1.1; memory). [m]
POINT_C_HEIGHT_M = 30.0
LIMITS_SOURCE = "ICAO Annex 10 Vol I 3.1.5.4 (from memory; confirm against the edition in force)"


@dataclass(frozen=True)
class Segment:
    """One approach segment and its bend limit.

    Attributes
    ----------
    name : str
        ``"coverage limit to A"``, ``"A to B"``, ``"B to C"`` or ``"B to threshold"``.
    from_m, to_m : float
        Distances before the threshold where it starts and ends (``from_m > to_m``). [m]
    limit_from_ddm, limit_to_ddm : float
        95 % bend limit at each end; linear in between.
    """

    name: str
    from_m: float
    to_m: float
    limit_from_ddm: float
    limit_to_ddm: float

    def limit_at(self, distance_m):
        """The limit at distances before the threshold inside the segment (linear). [DDM]"""
        t = (self.from_m - distance_m) / (self.from_m - self.to_m)
        return self.limit_from_ddm + (self.limit_to_ddm - self.limit_from_ddm) * t

    def contains(self, distance_m):
        """Whether distances before the threshold fall inside the segment (ends included)."""
        return (distance_m <= self.from_m) & (distance_m >= self.to_m)


def structure_segments(category: str, rdh_m: float, angle_deg: float) -> list[Segment]:
    """The segments and bend limits of a category [1]_.

    Parameters
    ----------
    category : {"I", "II", "III"}
    rdh_m : float
        Height of the straight path over the threshold, which places ILS point C. [m]
    angle_deg : float
        Path angle. [deg]

    Returns
    -------
    list of Segment
        From the coverage limit toward the threshold.
    """
    a = Segment("coverage limit to A", COVERAGE_M, POINT_A_M, 0.035, 0.035)
    if category in ("II", "III"):
        return [
            a,
            Segment("A to B", POINT_A_M, POINT_B_M, 0.035, 0.023),
            Segment("B to threshold", POINT_B_M, 0.0, 0.023, 0.023),
        ]
    point_c = max((POINT_C_HEIGHT_M - rdh_m) / math.tan(math.radians(angle_deg)), 0.0)
    return [
        a,
        Segment("A to B", POINT_A_M, POINT_B_M, 0.035, 0.035),
        Segment("B to C", POINT_B_M, point_c, 0.035, 0.035),
    ]
