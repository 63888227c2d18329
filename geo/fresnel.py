"""First Fresnel zones on a reflecting plane (numpy only, no I/O).

A ground point P belongs to the first Fresnel zone of an antenna A and a
receiver R when the path A-P-R exceeds the specular path (from the image A'
of the antenna) by at most half a wavelength. For a distant receiver at
grazing angle ``psi`` the zone is an ellipse on the ground, elongated toward
the receiver.

Coordinates here: ``u`` on the ground from the foot of the mast toward the
receiver, ``w`` across; lengths in metres, angles in radians unless the name
says degrees.

References
----------
.. [1] ITU-R Recommendation P.526, "Propagation by diffraction" (Fresnel
       ellipsoid, first Fresnel zone radius).
.. [2] Hristov, H. D., *Fresnel Zones in Wireless Links, Zone Plate Lenses
       and Antennas*, Artech House, 2000, ch. 2 (Fresnel zones on a plane).
.. [3] Beckmann, P. and Spizzichino, A., *The Scattering of Electromagnetic
       Waves from Rough Surfaces*, Pergamon, 1963 (reflection from a plane).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = ["GroundEllipse", "far_field_ellipse", "inside_ellipses"]


@dataclass(frozen=True)
class GroundEllipse:
    """An ellipse on the ground, axis along the direction to the receiver.

    Attributes
    ----------
    centre_m : float
        Distance of the centre from the foot of the mast, toward the receiver. [m]
    semi_along_m, semi_across_m : float
        Semi-axes along and across that direction. [m]
    """

    centre_m: float
    semi_along_m: float
    semi_across_m: float

    @property
    def near_m(self) -> float:
        """Nearest point to the mast along the axis. [m]"""
        return self.centre_m - self.semi_along_m

    @property
    def far_m(self) -> float:
        """Farthest point from the mast along the axis. [m]"""
        return self.centre_m + self.semi_along_m


def far_field_ellipse(height_m: float, wavelength_m: float, grazing_rad: float) -> GroundEllipse:
    """First Fresnel zone for a receiver at infinity, at grazing angle ``psi`` [2]_.

    Parameters
    ----------
    height_m : float
        Antenna height above the plane. [m]
    wavelength_m : float
        Wavelength. [m]
    grazing_rad : float
        Elevation of the receiver above the plane. [rad]

    Returns
    -------
    GroundEllipse

    Notes
    -----
    With ``a = h sin(psi) + lambda / 2`` and
    ``q = sqrt(lambda h sin(psi) + (lambda / 2)**2)`` the zone is
    ``sin(psi)**2 (u - u_c)**2 + w**2 <= q**2 / sin(psi)**2`` with
    ``u_c = a cos(psi) / sin(psi)**2``: semi-axes ``q / sin(psi)**2`` along
    and ``q / sin(psi)`` across. It follows from
    ``|AP| - u cos(psi) = h sin(psi) + lambda / 2`` (the far-field path excess).
    """
    s = math.sin(grazing_rad)
    a = height_m * s + wavelength_m / 2.0
    q = math.sqrt(wavelength_m * height_m * s + (wavelength_m / 2.0) ** 2)
    return GroundEllipse(a * math.cos(grazing_rad) / (s * s), q / (s * s), q / s)


def inside_ellipses(u_m, w_m, ellipse: GroundEllipse, azimuths_rad) -> np.ndarray:
    """Whether ground points lie in the ellipse turned to any of several azimuths.

    Parameters
    ----------
    u_m, w_m : array_like
        Points: ``u`` from the foot of the mast along the reference direction,
        ``w`` across it. [m]
    ellipse : GroundEllipse
    azimuths_rad : array_like
        Directions of the receivers from the reference direction, toward +w. [rad]

    Returns
    -------
    numpy.ndarray of bool
    """
    u = np.asarray(u_m, dtype=float)
    w = np.asarray(w_m, dtype=float)
    inside = np.zeros(np.broadcast(u, w).shape, dtype=bool)
    a2, b2 = ellipse.semi_along_m**2, ellipse.semi_across_m**2
    for az in np.asarray(azimuths_rad, dtype=float).ravel():
        c, s = math.cos(az), math.sin(az)
        x = u * c + w * s - ellipse.centre_m
        y = w * c - u * s
        inside |= x * x / a2 + y * y / b2 <= 1.0
    return inside
