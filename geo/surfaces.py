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
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["SurfaceSpec", "DEFAULT_SURFACES", "MastClearance", "mast_clearance", "surface_heights_m"]


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


DEFAULT_SURFACES = SurfaceSpec()


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
    """

    top_height_m: np.ndarray
    inner_transitional_margin_m: np.ndarray
    transitional_margin_m: np.ndarray
    in_strip: np.ndarray

    @property
    def penetrates(self) -> np.ndarray:
        """True where the mast top is above a surface."""
        return (np.nan_to_num(self.inner_transitional_margin_m, nan=np.inf) < 0) | (
            np.nan_to_num(self.transitional_margin_m, nan=np.inf) < 0
        )


def mast_clearance(
    offset_m, mast_top_elevation_m, centreline_elevation_m, spec: SurfaceSpec = DEFAULT_SURFACES
) -> MastClearance:
    """The mast's top against the surfaces [1]_ [2]_.

    Parameters
    ----------
    offset_m : array_like
        Distance of the mast (nearest part: the lowest antenna) from the centre line. [m]
    mast_top_elevation_m : array_like
        Highest antenna plus the allowance. [m]
    centreline_elevation_m : array_like
        Elevation of the nearest centre-line point. [m]

    Returns
    -------
    MastClearance
    """
    top = np.asarray(mast_top_elevation_m, float) - np.asarray(centreline_elevation_m, float)
    inner, trans = surface_heights_m(offset_m, spec)
    return MastClearance(top, inner - top, trans - top, np.asarray(offset_m, float) < spec.strip_half_width_m)
