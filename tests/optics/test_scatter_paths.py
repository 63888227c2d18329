"""The four ground paths of an object's scattered field: reciprocity and image theory."""

import numpy as np
import pytest

from geo.optics.kernel import Facets, mirror_points, scattered_field
from geo.optics.objects import object_facets
from geo.optics.scatter_paths import four_path_field
from geo.site.site_file import ObjectSpec

LAM = 0.9  # [m]
UP = np.array([0.0, 0.0, 1.0])
TAIL = ObjectSpec("tail", 19.0, 12.0, 1.0, 8.0)


def _tail(feet, heading="along", range_m=60.0):
    feet = np.atleast_2d(np.asarray(feet, float))
    facets, groups = object_facets(TAIL, heading, feet, np.full(feet.shape[0], range_m), LAM)
    centres = feet + [0.0, 0.0, 13.5]
    return facets, groups, centres


@pytest.mark.parametrize("ground", [(None, None), (15.0, 0.005)])
def test_four_paths_are_reciprocal(ground):
    # Reciprocity (Balanis, Advanced Engineering Electromagnetics, sec. 7.8): swapping transmitter
    # and receiver leaves the coupling unchanged; over the ground the second and third paths swap.
    facets, groups, centres = _tail([[150.0, -30.0, 0.0], [260.0, 40.0, 0.0]], "across")
    normal = np.array([-0.004, 0.01, 1.0])
    normal /= np.linalg.norm(normal)
    a = np.array([0.0, 0.0, 8.6])
    b = np.array([1800.0, 120.0, 95.0])
    ab = four_path_field(a, facets, groups, centres, b[None, :], LAM, normal, *ground)
    ba = four_path_field(b, facets, groups, centres, a[None, :], LAM, normal, *ground)
    assert np.abs(ab - ba).max() <= 1e-9 * np.abs(ab).max()


def test_four_paths_over_a_conductor_are_the_object_and_its_image():
    # Image theory (Kraus, Antennas, sec. 11-9): over a perfectly conducting plane the field of an
    # object is that of the object and its mirror image in free space, lit by the antenna and by
    # its image (with the coefficient -1 of horizontal polarisation).
    facets, groups, centres = _tail([[120.0, -20.0, 0.0]], "along")

    def flip(v):  # an edge vector mirrored in the ground (a swept fin's edges slant)
        return v - 2.0 * (v @ UP)[:, None] * UP

    image = Facets(mirror_points(facets.centres_m, UP), flip(facets.edge_a_m), flip(facets.edge_b_m), two_sided=True)
    both = Facets(
        np.vstack([facets.centres_m, image.centres_m]),
        np.vstack([facets.edge_a_m, image.edge_a_m]),
        np.vstack([facets.edge_b_m, image.edge_b_m]),
        two_sided=True,
    )
    a = np.array([0.0, 0.0, 4.3])
    rx = np.array([[2000.0, 120.0, 110.0], [700.0, 120.0, 40.0], [-300.0, -200.0, 20.0]])
    got = four_path_field(a, facets, groups, centres, rx, LAM, UP)[0]
    free = scattered_field(a, both, rx, LAM) - scattered_field(mirror_points(a, UP), both, rx, LAM)
    assert np.abs(got - free).max() <= 1e-9 * np.abs(free).max()


def test_groups_sum_like_separate_calls():
    # Independent construction: one call per object position against one grouped call.
    facets, groups, centres = _tail([[100.0, 0.0, 0.0], [200.0, 50.0, 0.0], [300.0, -60.0, 0.0]], "along", 30.0)
    src = np.array([0.0, 0.0, 4.3])
    rx = np.array([[1500.0, 120.0, 80.0], [5000.0, 120.0, 270.0]])
    grouped = scattered_field(src, facets, rx, LAM, groups=groups)
    for g in range(3):
        alone = scattered_field(src, facets.subset(groups == g), rx, LAM)
        assert np.allclose(grouped[g], alone, rtol=1e-12, atol=0.0)


def test_several_sources_with_an_element_are_the_single_source_sums():
    # Independent construction: each antenna alone through the kernel's single-source call, the
    # element's field toward each facet as the facets' own weights (leg by leg), the four paths summed
    # by hand (image theory, Kraus sec. 11-9), against the several-source call with an element.
    from geo.optics.scatter_paths import four_path_fields, grazing_gamma
    from geo.radio.element import GENERIC_ELEMENT

    facets, groups, centres = _tail([[150.0, -30.0, 0.0], [-90.0, 40.0, 0.0]], "across")
    normal = np.array([-0.004, 0.01, 1.0])
    normal /= np.linalg.norm(normal)
    sources = np.array([[0.0, 0.0, 4.3], [0.0, 0.3, 8.6]])
    rx = np.array([[1800.0, 120.0, 95.0], [600.0, 120.0, 33.0]])
    got = four_path_fields(sources, facets, groups, centres, rx, LAM, normal, 15.0, 0.005, GENERIC_ELEMENT.toward)
    rx_image = mirror_points(rx, normal)
    gamma_r = grazing_gamma(centres, rx_image, normal, LAM, 15.0, 0.005)
    for k, src in enumerate(sources):
        image = mirror_points(src, normal)
        to_image = facets.centres_m - image
        down = to_image - 2.0 * (to_image @ normal)[:, None] * normal
        lit_direct = Facets(facets.centres_m, facets.edge_a_m, facets.edge_b_m, True,
                            GENERIC_ELEMENT.toward(facets.centres_m - src))  # fmt: skip
        lit_image = Facets(facets.centres_m, facets.edge_a_m, facets.edge_b_m, True, GENERIC_ELEMENT.toward(down))
        gamma_s = grazing_gamma(centres, image[None, :], normal, LAM, 15.0, 0.005)

        def leg(a, lit, r):
            return scattered_field(a, lit, r, LAM, groups=groups)

        direct = leg(src, lit_direct, rx) + gamma_s * leg(image, lit_image, rx)
        via = leg(src, lit_direct, rx_image) + gamma_s * leg(image, lit_image, rx_image)
        expected = direct + gamma_r * via
        assert np.abs(got[k] - expected).max() <= 1e-12 * np.abs(expected).max()
