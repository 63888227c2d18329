"""Reflection of the glide path carrier by the ground (horizontal polarisation).

References
----------
.. [1] Balanis, C. A., *Advanced Engineering Electromagnetics*, Wiley, 1989, sec. 5.3
       (reflection at a planar interface, perpendicular = horizontal polarisation, lossy media
       through the complex permittivity).
.. [2] ITU-R Recommendation P.527, "Electrical characteristics of the surface of the Earth"
       (complex relative permittivity ``eps_r - j 60 lambda sigma``; typical ground values).
.. [3] Ament, W. S., "Toward a theory of reflection by a rough surface", Proc. IRE 41 (1953)
       142-146; Beckmann, P. and Spizzichino, A., *The Scattering of Electromagnetic Waves from
       Rough Surfaces*, Pergamon, 1963, ch. 5 (the coherent reflection of a Gaussian surface).
.. [4] Born, M. and Wolf, E., *Principles of Optics*, 7th ed., Cambridge University Press, 1999,
       sec. 1.6.4 (reflection by a homogeneous film between two media: ``r = (r12 + r23 e^{2i beta})
       / (1 + r12 r23 e^{2i beta})``, ``beta`` the film's one-way phase thickness).
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "coherent_roughness_factor",
    "complex_permittivity",
    "layered_reflection_coefficient_h",
    "reflection_coefficient_h",
]


def reflection_coefficient_h(
    grazing_rad, relative_permittivity: float | None, conductivity_s_m: float | None, wavelength_m: float
):
    """Fresnel reflection coefficient for horizontal polarisation at grazing angle ``psi``.

    Parameters
    ----------
    grazing_rad : array_like
        Angle between the ray and the ground. [rad]
    relative_permittivity : float or None
        ``eps_r`` of the ground; ``None`` for a perfect conductor.
    conductivity_s_m : float or None
        Ground conductivity. [S/m]
    wavelength_m : float
        [m]

    Returns
    -------
    numpy.ndarray of complex
        ``(sin psi - sqrt(eps_c - cos^2 psi)) / (sin psi + sqrt(eps_c - cos^2 psi))`` with
        ``eps_c = eps_r - j 60 lambda sigma`` [1]_ [2]_; -1 for a perfect conductor.
    """
    psi = np.asarray(grazing_rad, dtype=float)
    if relative_permittivity is None:
        return np.full(psi.shape, -1.0 + 0.0j)
    eps = relative_permittivity - 1j * 60.0 * wavelength_m * (conductivity_s_m or 0.0)
    root = np.sqrt(eps - np.cos(psi) ** 2 + 0j)
    s = np.sin(psi)
    return (s - root) / (s + root)


def coherent_roughness_factor(sigma_m: float, grazing_rad, wavelength_m: float):
    """Share of the specular (coherent) reflected field left by roughness of RMS height ``sigma``.

    Parameters
    ----------
    sigma_m : float
        RMS height of the roughness (Gaussian heights). [m]
    grazing_rad : array_like
        Grazing angle of the specular reflection. [rad]
    wavelength_m : float
        [m]

    Returns
    -------
    numpy.ndarray
        ``exp(-2 (2 pi sigma sin psi / lambda)^2)`` [3]_: 1 for a smooth surface.

    Examples
    --------
    >>> float(coherent_roughness_factor(0.0, 0.05, 0.9))
    1.0
    """
    g = 2.0 * np.pi * sigma_m * np.sin(np.asarray(grazing_rad, float)) / wavelength_m
    return np.exp(-2.0 * g * g)


def complex_permittivity(relative_permittivity: float, conductivity_s_m: float, wavelength_m: float) -> complex:
    """``eps_r - j 60 lambda sigma`` [2]_ (time dependence ``exp(j omega t)``, as the prediction's fields).

    Parameters
    ----------
    relative_permittivity : float
    conductivity_s_m : float
        [S/m]
    wavelength_m : float
        [m]

    Returns
    -------
    complex
    """
    return complex(relative_permittivity, -60.0 * wavelength_m * conductivity_s_m)


def layered_reflection_coefficient_h(
    grazing_rad, layer_permittivity: complex, thickness_m: float, ground_permittivity, wavelength_m: float
):
    """Horizontal-polarisation reflection of a layer (snow) of ``thickness_m`` lying on the ground.

    Parameters
    ----------
    grazing_rad : array_like
        Grazing angle above the layer's top surface. [rad]
    layer_permittivity : complex
        The layer's complex relative permittivity (:func:`complex_permittivity`).
    thickness_m : float
        [m]
    ground_permittivity : complex or None
        The ground's under the layer; ``None`` for a perfect conductor (``r23 = -1``).
    wavelength_m : float
        [m]

    Returns
    -------
    numpy.ndarray of complex
        Referred to the layer's top surface: ``(r12 + r23 exp(-2j k d q1)) / (1 + r12 r23 exp(-2j k d q1))``
        with ``q_i = sqrt(eps_i - cos^2 psi)`` (``q0 = sin psi``), ``r12 = (q0 - q1) / (q0 + q1)``,
        ``r23 = (q1 - q2) / (q1 + q2)`` [1]_ [4]_; with ``thickness_m = 0`` it is the ground's own
        Fresnel coefficient, with ``layer_permittivity = 1`` the ground's delayed by ``2 k d sin psi``.
    """
    psi = np.asarray(grazing_rad, dtype=float)
    cos2 = np.cos(psi) ** 2
    q0 = np.sin(psi) + 0j
    q1 = np.sqrt(layer_permittivity - cos2 + 0j)  # principal root: Im <= 0 for a lossy layer (decays downward)
    r12 = (q0 - q1) / (q0 + q1)
    if ground_permittivity is None:
        r23 = -1.0 + 0j
    else:
        q2 = np.sqrt(ground_permittivity - cos2 + 0j)
        r23 = (q1 - q2) / (q1 + q2)
    delay = np.exp(-2j * (2.0 * np.pi / wavelength_m) * thickness_m * q1)  # [4]_ sec. 1.6.4, exp(j omega t)
    return (r12 + r23 * delay) / (1.0 + r12 * r23 * delay)
