"""The antenna element of a glide path array: its field pattern in azimuth and elevation.

A glide path array stacks identical horizontally polarised elements (a dipole before a reflector,
or a log-periodic) on one mast, all facing the approach. The array factor (heights, images, feeds:
:mod:`geo.radio.prediction`) shapes the pattern in elevation; the element sets how much reaches
the sides and the back. The model here is a closed form, separable in azimuth ``phi`` (from the
boresight, the course direction ``+u``, about the vertical) and elevation ``e`` (above the
horizontal)::

    F(phi, e) = [b + (1 - b) cos^(2n)(phi / 2)] |cos e|^m,     b = 10^(-FB / 20)

a cardioid ``cos^2(phi / 2) = (1 + cos phi) / 2`` raised to the power ``n`` [1]_ and lifted to the
back level ``b`` set by the front-to-back ratio ``FB`` [2]_, times a ``cos^m`` elevation factor
(symmetric in ``e``, so the direct wave toward a receiver at elevation ``e`` and the wave toward
its specular point at ``-e`` get the same factor: over a horizontal plane the far-field DDM does
not change with the element). The field is 1 on the boresight, ``b`` straight behind.

Half-power beamwidth in azimuth, from ``F(phi, 0) = 1 / sqrt 2``::

    HPBW = 4 arccos( ((2^(-1/2) - b) / (1 - b))^(1 / (2 n)) )

and in elevation ``2 arccos(2^(-1 / (2 m)))`` (90 deg for ``m = 1``).

**Generic values** (:data:`GENERIC_ELEMENT`), generic and from memory, no source at hand: glide
path elements have a horizontal half-power beamwidth of about 40-70 deg and a front-to-back ratio
of 20-30 dB; here ``n = 5`` (HPBW 62.1 deg with the back level; 60.0 deg without it), FB = 25 dB, ``m = 1``.
:data:`ISOTROPIC` is the choice that leaves every field as a point source's.

References
----------
.. [1] Balanis, C. A., *Antenna Theory*, 3rd ed., Wiley, 2005, sec. 6.2 (two-element array: the
       cardioid ``(1 + cos phi) / 2``) and sec. 2.5 (half-power beamwidth).
.. [2] IEEE Std 145-2013, *Definitions of Terms for Antennas* (front-to-back ratio, half-power
       beamwidth).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = ["ELEMENT_CHOICES", "ElementPattern", "GENERIC_ELEMENT", "ISOTROPIC", "element_for"]

#: Values the site file's ``[prediction] element`` takes.
ELEMENT_CHOICES = ("generic", "isotropic")


@dataclass(frozen=True)
class ElementPattern:
    """A separable element pattern (module notes); field amplitude, 1 on the boresight.

    Attributes
    ----------
    name : str
    azimuth_power : float
        ``n`` of ``cos^(2n)(phi / 2)``; 0: isotropic in azimuth (whatever the front-to-back ratio).
    front_to_back_db : float
        [dB]
    elevation_power : float
        ``m`` of ``|cos e|^m``; 0: no elevation factor.
    source : str
    """

    name: str
    azimuth_power: float
    front_to_back_db: float
    elevation_power: float
    source: str

    @property
    def is_isotropic(self) -> bool:
        return self.front_to_back_db == 0.0 and self.azimuth_power == 0.0 and self.elevation_power == 0.0

    @property
    def back_level(self) -> float:
        """``b = 10^(-FB / 20)``, the field straight behind. [-]"""
        return 10.0 ** (-self.front_to_back_db / 20.0)

    def azimuth_beamwidth_deg(self) -> float:
        """Half-power beamwidth in azimuth, ``4 arccos(((2^-1/2 - b) / (1 - b))^(1/(2n)))`` [1]_. [deg]"""
        b = self.back_level
        if self.azimuth_power == 0.0 or b >= 2.0**-0.5:
            return 360.0
        c = ((2.0**-0.5 - b) / (1.0 - b)) ** (1.0 / (2.0 * self.azimuth_power))
        return math.degrees(4.0 * math.acos(c))

    def elevation_beamwidth_deg(self) -> float:
        """Half-power beamwidth in elevation, ``2 arccos(2^(-1/(2m)))``. [deg]"""
        if self.elevation_power == 0.0:
            return 180.0
        return math.degrees(2.0 * math.acos(2.0 ** (-1.0 / (2.0 * self.elevation_power))))

    def summary(self) -> dict:
        """The pattern in words and figures, as outputs state it."""
        if self.is_isotropic:
            return {"name": self.name, "source": self.source}
        return {
            "name": self.name,
            "azimuth_beamwidth_deg": round(self.azimuth_beamwidth_deg(), 2),
            "elevation_beamwidth_deg": round(self.elevation_beamwidth_deg(), 2),
            "front_to_back_db": self.front_to_back_db,
            "model": "[b + (1 - b) cos^(2n)(phi / 2)] |cos e|^m, b = 10^(-front_to_back_db / 20)",
            "azimuth_power": self.azimuth_power,
            "elevation_power": self.elevation_power,
            "source": self.source,
        }

    def field(self, azimuth_rad, elevation_rad) -> np.ndarray:
        """``F(phi, e)`` (module notes). [-]

        Parameters
        ----------
        azimuth_rad : array_like
            From the boresight (+u), positive toward +w. [rad]
        elevation_rad : array_like
            Above the horizontal. [rad]
        """
        phi = np.asarray(azimuth_rad, dtype=float)
        e = np.asarray(elevation_rad, dtype=float)
        b = self.back_level
        az = b + (1.0 - b) * np.cos(phi / 2.0) ** (2.0 * self.azimuth_power)
        return az * np.abs(np.cos(e)) ** self.elevation_power

    def toward(self, direction_m) -> np.ndarray:
        """``F`` toward directions (..., 3) in the mast frame (u, w, Z), any length; 1 where isotropic. [-]"""
        d = np.asarray(direction_m, dtype=float)
        if self.is_isotropic:
            return np.ones(d.shape[:-1])
        horizontal = np.hypot(d[..., 0], d[..., 1])
        cos_phi = np.divide(d[..., 0], horizontal, out=np.ones_like(horizontal), where=horizontal > 0)
        # cos^2(phi / 2) = (1 + cos phi) / 2, |cos e| = horizontal / |d|: no angles needed
        front = (1.0 + np.clip(cos_phi, -1.0, 1.0)) / 2.0
        b = self.back_level
        az = b + (1.0 - b) * front**self.azimuth_power
        if self.elevation_power == 0.0:
            return az
        length = np.sqrt(horizontal**2 + d[..., 2] ** 2)
        cos_e = np.divide(horizontal, length, out=np.ones_like(length), where=length > 0)
        return az * cos_e**self.elevation_power


#: The generic glide path element (module notes): values generic, from memory, no source.
GENERIC_ELEMENT = ElementPattern("generic", 5.0, 25.0, 1.0, "generic, from memory (no source)")
#: A point source: every field as without an element pattern.
ISOTROPIC = ElementPattern("isotropic", 0.0, 0.0, 0.0, "isotropic point source")


def element_for(name: str, front_to_back_db: float | None = None) -> ElementPattern:
    """The element of a site file's ``[prediction] element`` (and its front-to-back ratio, generic only).

    Raises
    ------
    ValueError
        For a name not in :data:`ELEMENT_CHOICES`.
    """
    if name == "isotropic":
        return ISOTROPIC
    if name != "generic":
        raise ValueError(f"{name!r} is not a valid element, must be one of {', '.join(ELEMENT_CHOICES)}")
    if front_to_back_db is None or front_to_back_db == GENERIC_ELEMENT.front_to_back_db:
        return GENERIC_ELEMENT
    return ElementPattern(
        "generic", GENERIC_ELEMENT.azimuth_power, float(front_to_back_db), GENERIC_ELEMENT.elevation_power,
        f"generic, from memory (no source); front-to-back ratio {front_to_back_db:g} dB from the site file",
    )  # fmt: skip
