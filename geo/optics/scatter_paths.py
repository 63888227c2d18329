"""The field an object scatters from an antenna to receivers over a reflecting plane: four paths.

Over a plane ground the wave reaches the object directly and by the ground reflection, and
leaves it toward the receiver directly and by the ground reflection. By image theory [1]_
each reflected leg is a leg from (or to) the mirror image in the plane, weighted by the ground's
Fresnel coefficient ``Gamma`` at the leg's grazing angle [2]_ (``-1`` for a perfect conductor)::

    E = E(a -> o -> r) + Gs E(a' -> o -> r) + Gr E(a -> o -> r') + Gs Gr E(a' -> o -> r')

with ``a'`` and ``r'`` the images of antenna and receiver. Each ``E(.)`` is the physical-optics
field of the object's facets (:func:`geo.optics.kernel.scattered_field`, which includes the forward
scatter that forms the object's shadow); so the object also blocks the ground reflection (the
``a'`` paths shadow the image wave behind the object). The source's element pattern, when given,
weights each facet by the element's field along the leg's direction leaving the real antenna.
``Gamma`` is taken at the grazing angle
of the leg between the image and the object's centre (one value per object position and
antenna, and per position and receiver), which keeps the sum reciprocal: swapping antenna and
receiver swaps the second and third paths.

Coordinates: the mast frame of :mod:`geo.radio.prediction`, plane through the origin. [m]

References
----------
.. [1] Kraus, J. D., *Antennas*, 2nd ed., McGraw-Hill, 1988, sec. 11-9 (image theory).
.. [2] Balanis, C. A., *Advanced Engineering Electromagnetics*, Wiley, 1989, sec. 5.3
       (Fresnel coefficient, horizontal polarisation).
"""

from __future__ import annotations

import numpy as np

from geo.optics.kernel import Facets, mirror_points, scattered_field
from geo.radio.reflection import reflection_coefficient_h

__all__ = ["grazing_gamma", "four_path_field", "four_path_fields"]


def grazing_gamma(points_m, images_m, normal, wavelength_m, relative_permittivity=None, conductivity_s_m=None):
    """Fresnel coefficient of the legs from image points to points, by their grazing angle.

    Parameters
    ----------
    points_m : numpy.ndarray, shape (G, 3)
        Points above the plane (the object's centres). [m]
    images_m : numpy.ndarray, shape (R, 3)
        Mirror images below it (of antennas or receivers). [m]
    normal : numpy.ndarray, shape (3,)
        Unit normal of the plane.

    Returns
    -------
    numpy.ndarray of complex, shape (G, R)
    """
    d = np.asarray(points_m, float)[:, None, :] - np.asarray(images_m, float)[None, :, :]
    sin_psi = np.abs(d @ np.asarray(normal, float)) / np.linalg.norm(d, axis=2)
    return reflection_coefficient_h(
        np.arcsin(np.clip(sin_psi, 0.0, 1.0)), relative_permittivity, conductivity_s_m, wavelength_m
    )


def four_path_field(
    source_m,
    facets: Facets,
    groups: np.ndarray,
    centres_m: np.ndarray,
    receivers_m,
    wavelength_m: float,
    normal,
    relative_permittivity=None,
    conductivity_s_m=None,
    element=None,
    facet_constants=(None, None),
) -> np.ndarray:
    """Field of the object at each position from one source, the four ground paths summed.

    Parameters
    ----------
    source_m : array_like, shape (3,)
        The antenna. [m]
    facets : Facets
        The object's facets at every position.
    groups : numpy.ndarray of int, shape (P,)
        Position of each facet (non-decreasing, 0 to G - 1).
    centres_m : numpy.ndarray, shape (G, 3)
        Centre of the object per position (for the grazing angles). [m]
    receivers_m : array_like, shape (R, 3)
        [m]
    wavelength_m : float
    normal : array_like, shape (3,)
        Unit normal of the ground plane through the origin.
    relative_permittivity, conductivity_s_m : float or None
        Ground constants; ``None``: a perfect conductor.
    element : callable, optional
        ``element(directions (..., 3)) -> field``: the source's element pattern toward directions
        leaving it (:meth:`geo.radio.prediction.ArrayModel.element_field`). It weights each facet on
        the legs from the source (toward the facet) and from its image (toward the ground point on
        the way, the image's direction mirrored in the plane). None: a point source.
    facet_constants : tuple of (float or None)
        (relative permittivity, conductivity S/m) of the facets' own material (a building's
        cladding); ``(None, None)``: perfectly conducting plates.

    Returns
    -------
    numpy.ndarray of complex, shape (G, R)
        In units of the direct field ``exp(-j k r) / r`` of the source.
    """
    src = np.asarray(source_m, dtype=float)[None, :]
    ground = (relative_permittivity, conductivity_s_m, element)
    return four_path_fields(
        src, facets, groups, centres_m, receivers_m, wavelength_m, normal, *ground, facet_constants=facet_constants
    )[0]


def four_path_fields(
    sources_m,
    facets: Facets,
    groups: np.ndarray,
    centres_m: np.ndarray,
    receivers_m,
    wavelength_m: float,
    normal,
    relative_permittivity=None,
    conductivity_s_m=None,
    element=None,
    ground=None,
    blocks=None,
    facet_constants=(None, None),
) -> np.ndarray:
    """:func:`four_path_field` for several sources (A, 3) at once: shape (A, G, R).

    The sources and their images go through the kernel together (two calls, toward the receivers
    and toward their images), which shares the facet-receiver work among them. With ``ground`` (a
    :class:`geo.optics.object_ground.LocalGround`) the legs reflect on the DEM's local surface
    instead of the plane of ``normal`` (:func:`_over_local_ground`); ``blocks`` (index arrays of the
    receivers) each get their own plane per position there.
    """
    if ground is not None:
        ground_constants = (relative_permittivity, conductivity_s_m)
        return _over_local_ground(sources_m, facets, groups, centres_m, receivers_m, wavelength_m, ground,
                                  ground_constants, element, blocks, facet_constants)  # fmt: skip
    src = np.atleast_2d(np.asarray(sources_m, dtype=float))
    count = src.shape[0]
    rx = np.atleast_2d(np.asarray(receivers_m, dtype=float))
    n = np.asarray(normal, dtype=float) / np.linalg.norm(normal)
    src_image = mirror_points(src, n)
    rx_image = mirror_points(rx, n)
    ground = (n, wavelength_m, relative_permittivity, conductivity_s_m)
    gamma_source = grazing_gamma(centres_m, src_image, *ground).T[:, :, None]  # (A, G, 1)
    gamma_receiver = grazing_gamma(centres_m, rx_image, *ground)  # (G, R)
    weights = None
    if element is not None:
        from_image = facets.centres_m[None, :, :] - src_image[:, None, :]
        toward_ground = from_image - 2.0 * (from_image @ n)[..., None] * n
        weights = np.concatenate([element(facets.centres_m[None, :, :] - src[:, None, :]), element(toward_ground)])
    every = np.concatenate([src, src_image])
    plates = dict(groups=groups, source_weights=weights)
    to_rx = scattered_field(every, facets, rx, wavelength_m, *facet_constants, **plates)
    to_image = scattered_field(every, facets, rx_image, wavelength_m, *facet_constants, **plates)
    direct = to_rx[:count] + gamma_source * to_rx[count:]
    via_ground = to_image[:count] + gamma_source * to_image[count:]
    return direct + gamma_receiver[None, :, :] * via_ground


def _gamma(sin_psi, wavelength_m, constants):
    return reflection_coefficient_h(np.arcsin(np.clip(sin_psi, 0.0, 1.0)), *constants, wavelength_m)


def _over_local_ground(sources_m, facets, groups, centres_m, receivers_m, wavelength_m, ground, constants,
                       element, blocks, facet_constants=(None, None)) -> np.ndarray:  # fmt: skip
    """The four paths over the DEM's local surface (:mod:`geo.optics.object_ground`): shape (A, G, R).

    The antenna's image is taken per position in the tangent plane at its leg's specular point (a
    source position per facet for the kernel). A receiver's image leg ``E(a -> object -> r')``, with
    ``r'`` the image in the position's plane ``M`` for its block, is computed as ``E(M a -> M object ->
    r)`` (a mirror moves every point alike), so the receivers stay common to every position.
    """
    from geo.optics.object_ground import block_plane, grazing_sin, mirror_in, specular_planes

    src = np.atleast_2d(np.asarray(sources_m, dtype=float))
    rx = np.atleast_2d(np.asarray(receivers_m, dtype=float))
    count, g = src.shape[0], np.asarray(groups)
    point, normal = specular_planes(ground, src, centres_m)  # (G, A, 3)
    image = mirror_in(src[None, :, :], point, normal)  # (G, A, 3)
    gamma_source = _gamma(grazing_sin(centres_m[:, None, :], image, normal), wavelength_m, constants).T[:, :, None]
    per_facet = np.concatenate([np.broadcast_to(src[:, :, None], (count, 3, g.size)), image[g].transpose(1, 2, 0)])
    weights = None
    if element is not None:
        from_image = facets.centres_m[None, :, :] - image[g].transpose(1, 0, 2)  # (A, P, 3)
        toward_ground = mirror_in(from_image, 0.0, normal[g].transpose(1, 0, 2))
        weights = np.concatenate([element(facets.centres_m[None, :, :] - src[:, None, :]), element(toward_ground)])
    to_rx = scattered_field(per_facet, facets, rx, wavelength_m, *facet_constants, groups=g, source_weights=weights)
    out = np.zeros((count, centres_m.shape[0], rx.shape[0]), dtype=complex)
    for block in [np.arange(rx.shape[0])] if blocks is None else blocks:
        if len(block) == 0:
            continue
        p_r, n_r = block_plane(ground, rx[block], centres_m)  # (G, 3)
        rx_image = mirror_in(rx[None, block, :], p_r[:, None, :], n_r[:, None, :])  # (G, b, 3)
        gamma_receiver = _gamma(grazing_sin(centres_m[:, None, :], rx_image, n_r[:, None, :]), wavelength_m, constants)
        pf, nf = p_r[g], n_r[g]  # the plane of each facet's position
        turned = Facets(mirror_in(facets.centres_m, pf, nf), mirror_in(facets.edge_a_m, 0.0, nf),
                        mirror_in(facets.edge_b_m, 0.0, nf), facets.two_sided, facets.weights)  # fmt: skip
        sources = mirror_in(per_facet.transpose(0, 2, 1), pf[None], nf[None]).transpose(0, 2, 1)
        to_image = scattered_field(
            sources, turned, rx[block], wavelength_m, *facet_constants, groups=g, source_weights=weights
        )
        direct = to_rx[:count][:, :, block] + gamma_source * to_rx[count:][:, :, block]
        via_ground = to_image[:count] + gamma_source * to_image[count:]
        out[:, :, block] = direct + gamma_receiver[None, :, :] * via_ground
    return out
