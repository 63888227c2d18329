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

__all__ = ["GroundEllipse", "far_field_ellipse", "exact_ellipses", "ellipse_axes"]


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


def exact_ellipses(antenna_uwh_m, receivers_uwz_m, wavelength_m: float) -> tuple[np.ndarray, np.ndarray]:
    """Exact first Fresnel zones on the plane z = 0 for receivers at finite range.

    The zone of antenna ``A`` and receiver ``R`` is the set of ground points ``P`` with
    ``|AP| + |PR| <= |A'R| + lambda / 2`` (``A'`` the image of ``A``): the inside of the prolate
    spheroid with foci ``A`` and ``R`` and major axis ``L = |A'R| + lambda / 2``, cut by the
    plane [1]_ [2]_. Its section is the ellipse ``(p - p0)^T Q (p - p0) <= 1``, found in closed
    form from the quadric.

    Parameters
    ----------
    antenna_uwh_m : array_like, shape (3,) or (n, 3)
        Antenna position (u, w, height above the plane), one for all receivers or one each. [m]
    receivers_uwz_m : array_like, shape (n, 3)
        Receiver positions (u, w, height above the plane). [m]
    wavelength_m : float
        [m]

    Returns
    -------
    centre_m : numpy.ndarray, shape (n, 2)
        Ellipse centres (u, w). [m]
    quadratic : numpy.ndarray, shape (n, 2, 2)
        Symmetric positive definite ``Q`` of each ellipse. [1/m^2]

    Notes
    -----
    With ``S = |A'R| + |AR|``, the spheroid's semi-axes are ``a = (|A'R| + lambda/2) / 2`` and
    ``b**2 = (a - c)(a + c) = (2 h z_R / S + lambda/4)(S/2 + lambda/4)``. Putting ``z = 0``
    into ``(X - C)^T M (X - C) = 1``, ``M = I / b**2 + (1/a**2 - 1/b**2) e e^T``, and
    completing the square (Sherman-Morrison for the 2 x 2 block) gives, with
    ``T = b**2 + ((z_R - h)/2)**2``, ``K = b**2 - h z_R`` and ``d`` the horizontal unit vector
    from antenna to receiver::

        p0 = C_uw - ((z_R + h)/2) ((z_R - h)/2) (R - A)_uw / (2 T)
        Q  = [(I - d d^T) T / b**2 + d d^T T**2 / (a**2 b**2)] / K

    ``K = h z_R lambda / (2 S) + lambda S / 8 + lambda**2 / 16`` is computed in that form, so
    distant receivers lose no digits to cancellation.
    """
    rx = np.atleast_2d(np.asarray(receivers_uwz_m, dtype=float))
    ant = np.broadcast_to(np.asarray(antenna_uwh_m, dtype=float), rx.shape)
    h, z_r = ant[:, 2], rx[:, 2]
    via_image = np.linalg.norm(rx - ant * np.array([1.0, 1.0, -1.0]), axis=1)
    direct = np.linalg.norm(rx - ant, axis=1)
    s = via_image + direct
    a2 = ((via_image + wavelength_m / 2.0) / 2.0) ** 2
    b2 = (2.0 * h * z_r / s + wavelength_m / 4.0) * (s / 2.0 + wavelength_m / 4.0)
    t = b2 + ((z_r - h) / 2.0) ** 2
    k = h * z_r * wavelength_m / (2.0 * s) + wavelength_m * s / 8.0 + wavelength_m**2 / 16.0
    horizontal = rx[:, :2] - ant[:, :2]
    d = horizontal / np.linalg.norm(horizontal, axis=1)[:, None]
    centre = (rx[:, :2] + ant[:, :2]) / 2.0 - (((z_r + h) / 2.0) * ((z_r - h) / 2.0) / (2.0 * t))[:, None] * horizontal
    across = t / b2 / k
    along = t * t / (a2 * b2) / k
    outer = d[:, :, None] * d[:, None, :]
    eye = np.eye(2)[None, :, :]
    q = (eye - outer) * across[:, None, None] + outer * along[:, None, None]
    return centre, q


def ellipse_axes(quadratic) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Semi-axes and orientation of ellipses ``p^T Q p <= 1``.

    Returns
    -------
    semi_major_m, semi_minor_m : numpy.ndarray
        [m]
    angle_rad : numpy.ndarray
        Direction of the major axis from the u axis toward w. [rad]
    """
    q = np.asarray(quadratic, dtype=float).reshape(-1, 2, 2)
    values, vectors = np.linalg.eigh(q)
    major = vectors[:, :, 0]  # smallest eigenvalue: longest axis
    return 1.0 / np.sqrt(values[:, 0]), 1.0 / np.sqrt(values[:, 1]), np.arctan2(major[:, 1], major[:, 0])
