"""Objects over the real ground: the four ground paths on the DEM's local surface (each check names its source)."""

import numpy as np
import pytest

from geo.optics.kernel import scattered_field
from geo.optics.object_ground import LocalGround, specular_planes
from geo.optics.objects import GENERIC_OBJECTS, object_facets
from geo.optics.scatter_paths import four_path_fields
from geo.radio.reflection import reflection_coefficient_h

LAM = 0.9  # [m]
SOURCES = np.array([[0.0, 0.0, 4.3], [0.0, 0.4, 8.6]])
RECEIVERS = np.array([[2500.0, 120.0, 140.0], [900.0, 120.0, 60.0], [6000.0, 120.0, 330.0]])
GROUND = (15.0, 0.005)  # a lossy ground: relative permittivity, conductivity [S/m]


def _planar(normal, box=(-400.0, 7000.0, -400.0, 600.0), step=10.0):
    """A DEM that is the plane through the origin with this normal, sampled on a grid."""
    n = np.asarray(normal, float) / np.linalg.norm(normal)
    u = np.arange(box[0], box[1] + step / 2, step)
    w = np.arange(box[2], box[3] + step / 2, step)
    uu, ww = np.meshgrid(u, w, indexing="ij")
    return n, u, w, -(n[0] * uu + n[1] * ww) / n[2]


def _objects():
    obj = GENERIC_OBJECTS[0]
    feet = np.array([[150.0, -30.0, 0.0], [260.0, 40.0, 0.0], [-80.0, 10.0, 0.0]])
    facets, groups = object_facets(obj, "across", feet, np.full(3, 60.0), LAM)
    return facets, groups, feet + [0.0, 0.0, (obj.height_m + obj.base_m) / 2.0]


def test_over_a_dem_that_is_the_fitted_plane_the_paths_are_the_planes():
    # Consistency (independent construction: the image theory of the fitted plane): a DEM that is
    # the fitted plane itself gives that plane's four paths. The receivers' image legs go through
    # the mirrored geometry, where the kernel's polarisation stays horizontal (not the mirror's):
    # a difference of the order of the squared slope (1e-5 here).
    n, u, w, z = _planar([-0.004, 0.003, 1.0])
    facets, groups, centres = _objects()
    plane = four_path_fields(SOURCES, facets, groups, centres, RECEIVERS, LAM, n, *GROUND)
    dem = LocalGround(u, w, z, n)
    local = four_path_fields(SOURCES, facets, groups, centres, RECEIVERS, LAM, n, *GROUND, ground=dem)
    assert np.abs(local - plane).max() <= 1e-4 * np.abs(plane).max()


def test_over_a_tilted_dem_the_paths_are_image_theory_in_the_tilted_plane():
    # Image theory (Kraus, Antennas, sec. 11-9) written out here: over a DEM that is a plane tilted
    # from the fitted (horizontal) one, each reflected leg comes from the mirror image in the tilted
    # plane, weighted by the Fresnel coefficient at its grazing angle on it (Balanis, Advanced
    # Engineering Electromagnetics, sec. 5.3), whatever the fitted plane says.
    tilted, u, w, z = _planar([-0.02, 0.012, 1.0])  # about 1.1 deg forward, 0.7 deg across
    dem = LocalGround(u, w, z, np.array([0.0, 0.0, 1.0]))
    facets, groups, centres = _objects()
    got = four_path_fields(SOURCES, facets, groups, centres, RECEIVERS, LAM, np.array([0.0, 0.0, 1.0]), *GROUND,
                           ground=dem)  # fmt: skip

    def mirror(p):
        return p - 2.0 * (p @ tilted)[..., None] * tilted

    def gamma(images):  # (G, E) at the grazing angle of each leg from an image to a centre
        d = centres[:, None, :] - images[None, :, :]
        sin_psi = np.abs(d @ tilted) / np.linalg.norm(d, axis=2)
        return reflection_coefficient_h(np.arcsin(sin_psi), *GROUND, LAM)

    rx_image = mirror(RECEIVERS)
    g_rx = gamma(rx_image)
    for k, src in enumerate(SOURCES):
        image = mirror(src)
        g_src = gamma(image[None, :])

        def leg(a, r):
            return scattered_field(a, facets, r, LAM, groups=groups)

        expected = (leg(src, RECEIVERS) + g_src * leg(image, RECEIVERS)
                    + g_rx * (leg(src, rx_image) + g_src * leg(image, rx_image)))  # fmt: skip
        assert np.abs(got[k] - expected).max() <= 1e-3 * np.abs(expected).max()
        # and the horizontal plane's paths differ from it (the check can fail)
    flat = four_path_fields(SOURCES, facets, groups, centres, RECEIVERS, LAM, np.array([0.0, 0.0, 1.0]), *GROUND)
    assert np.abs(flat - got).max() > 0.05 * np.abs(got).max()


def test_the_specular_point_lies_on_the_dem_where_the_angles_are_equal():
    # The law of reflection (Born and Wolf, Principles of Optics, sec. 1.5): at the specular point
    # the legs to both ends make equal angles with the tangent plane; here on a curved DEM (a
    # mound), the point on the surface.
    u = np.arange(-100.0, 600.0, 5.0)
    w = np.arange(-200.0, 200.0, 5.0)
    uu, ww = np.meshgrid(u, w, indexing="ij")
    z = 2.0 * np.exp(-((uu - 120.0) ** 2 + ww**2) / (2 * 60.0**2))
    dem = LocalGround(u, w, z, np.array([0.0, 0.0, 1.0]))
    end = np.array([[0.0, 0.0, 6.0]])
    centre = np.array([[300.0, 20.0, 13.5]])
    point, normal = specular_planes(dem, end, centre)
    p, n = point[0, 0], normal[0, 0]
    height, _, _ = dem.surface(p[0], p[1])
    assert p[2] == pytest.approx(float(height), abs=1e-9)
    to_end, to_centre = end[0] - p, centre[0] - p
    sin_a = (to_end @ n) / np.linalg.norm(to_end)
    sin_b = (to_centre @ n) / np.linalg.norm(to_centre)
    assert sin_a == pytest.approx(sin_b, rel=1e-3)
