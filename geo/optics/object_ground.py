"""The real ground under an object's ground paths: the DEM's local surface at each specular point.

The four ground paths of :mod:`geo.optics.scatter_paths` reflect the antenna's wave on its way to
the object, and the object's wave on its way to the receivers. Over the fitted plane each
reflected leg is a leg from the mirror image in that plane. Over the DEM the wave reflects where
the surface is: at the specular point of the leg on the DEM, in the surface's tangent plane there
(height and slope from the DEM) [1]_. Here:

- for each object position and antenna, the specular point of the leg antenna -> object centre is
  found by fixed-point iteration: start on the fitted plane, mirror the antenna in the current
  plane, intersect the line from the object's centre to that image with the plane, move halfway
  there (the first step all the way), take the DEM's height and slope there as the next plane
  (:data:`ITERATIONS` times). The antenna's image in that tangent plane lights the object;
- for each object position and block of receivers (an approach segment), the receivers' specular
  points are found the same way (for at most :data:`BLOCK_SAMPLES` of them, evenly picked), and one
  plane stands for them: through the mean of the points, with the mean of their normals. The
  receivers' images in that plane see the object.

Heights and slopes: bilinear interpolation of the DEM's heights and of their central differences,
sampled once on a regular grid in the mast frame (:class:`LocalGround`); off that grid the fitted
plane. Without a DEM (flat ground) the fitted plane is the ground and nothing changes.

Coordinates: the mast frame of :mod:`geo.radio.prediction` (``Z`` from the plane's elevation at the
mast's foot). [m]

References
----------
.. [1] Beckmann, P. and Spizzichino, A., *The Scattering of Electromagnetic Waves from Rough
       Surfaces*, Pergamon, 1963, ch. 3 (Kirchhoff tangent-plane approximation: reflection in the
       local tangent plane at the specular point); Kraus, J. D., *Antennas*, 2nd ed., 1988,
       sec. 11-9 (image theory).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = [
    "ITERATIONS",
    "BLOCK_SAMPLES",
    "LocalGround",
    "mirror_in",
    "specular_planes",
    "block_plane",
    "local_ground",
    "grazing_sin",
]

#: Fixed-point steps for a specular point: the first onto the plane's specular point, the others
#: halfway toward the next estimate (damped: over a mound the plain step overshoots and cycles).
ITERATIONS = 10


@dataclass(frozen=True)
class LocalGround:
    """DEM heights on a regular grid in the mast frame, with the fitted plane off the grid.

    Attributes
    ----------
    u_m, w_m : numpy.ndarray, shape (Nu,), (Nw,)
        Increasing, evenly spaced. [m]
    z_m : numpy.ndarray, shape (Nu, Nw)
        Heights (``Z``; NaN: the plane). [m]
    normal : numpy.ndarray, shape (3,)
        The fitted plane's unit normal (through the origin).
    """

    u_m: np.ndarray
    w_m: np.ndarray
    z_m: np.ndarray
    normal: np.ndarray

    def __post_init__(self):
        du, dw = self.u_m[1] - self.u_m[0], self.w_m[1] - self.w_m[0]
        flat = self._plane_z(*np.meshgrid(self.u_m, self.w_m, indexing="ij"))
        z = np.where(np.isfinite(self.z_m), self.z_m, flat)
        object.__setattr__(self, "_grids", (z, *np.gradient(z, du, dw)))

    def _plane_z(self, u, w):
        n = self.normal
        return -(n[0] * u + n[1] * w) / n[2]

    def surface(self, u, w) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Height and slopes ``dZ/du``, ``dZ/dw`` at points (any shape); the plane off the grid. [m], [-]"""
        from scipy.ndimage import map_coordinates

        u, w = np.asarray(u, float), np.asarray(w, float)
        du, dw = self.u_m[1] - self.u_m[0], self.w_m[1] - self.w_m[0]
        iu, iw = (u - self.u_m[0]) / du, (w - self.w_m[0]) / dw
        out = []
        for grid in self._grids:  # heights, dZ/du, dZ/dw
            out.append(map_coordinates(grid, [iu.ravel(), iw.ravel()], order=1, mode="nearest").reshape(u.shape))
        inside = (iu >= 0) & (iu <= self.u_m.size - 1) & (iw >= 0) & (iw <= self.w_m.size - 1)
        n = self.normal
        plane = (self._plane_z(u, w), np.full(u.shape, -n[0] / n[2]), np.full(u.shape, -n[1] / n[2]))
        return tuple(np.where(inside, got, flat) for got, flat in zip(out, plane))


def mirror_in(points_m, plane_point_m, plane_normal) -> np.ndarray:
    """Points (..., 3) mirrored in planes through ``plane_point_m`` with unit normals (broadcast)."""
    p = np.asarray(points_m, float)
    d = ((p - plane_point_m) * plane_normal).sum(axis=-1, keepdims=True)
    return p - 2.0 * d * plane_normal


def specular_planes(ground: LocalGround, ends_m, centres_m) -> tuple[np.ndarray, np.ndarray]:
    """Tangent planes of the DEM at the specular points of the legs from each centre to each end.

    Parameters
    ----------
    ground : LocalGround
    ends_m : numpy.ndarray, shape (E, 3)
        Antennas or receivers. [m]
    centres_m : numpy.ndarray, shape (G, 3)
        The object's centres. [m]

    Returns
    -------
    point, normal : numpy.ndarray, shape (G, E, 3)
        A point of each tangent plane (the specular point) and its unit normal.
    """
    ends = np.asarray(ends_m, float)[None, :, :]
    c = np.asarray(centres_m, float)[:, None, :]
    point = np.zeros(np.broadcast_shapes(ends.shape, c.shape))
    normal = np.broadcast_to(ground.normal, point.shape).copy()
    for step in range(ITERATIONS):
        image = mirror_in(ends, point, normal)
        toward = image - c
        t = ((point - c) * normal).sum(axis=-1, keepdims=True) / (toward * normal).sum(axis=-1, keepdims=True)
        spot = c + np.clip(t, 0.0, 1.0) * toward
        if step > 0:  # halfway toward it: the plain step overshoots over a mound and cycles
            spot = 0.5 * (spot + point)
        z, gu, gw = ground.surface(spot[..., 0], spot[..., 1])
        point = np.stack([spot[..., 0], spot[..., 1], z], axis=-1)
        normal = np.stack([-gu, -gw, np.ones_like(z)], axis=-1)
        normal /= np.linalg.norm(normal, axis=-1, keepdims=True)
    return point, normal


#: Receivers of a block whose specular points make its plane (evenly picked: the plane is their mean).
BLOCK_SAMPLES = 64


def block_plane(ground: LocalGround, receivers_m, centres_m) -> tuple[np.ndarray, np.ndarray]:
    """One plane per object position for a block of receivers: the mean of their specular points and normals.

    At most :data:`BLOCK_SAMPLES` receivers, evenly picked along the block, and each distinct centre
    once (the headings of a position share it).

    Returns
    -------
    point, normal : numpy.ndarray, shape (G, 3)
    """
    rx = np.asarray(receivers_m, float)
    if rx.shape[0] > BLOCK_SAMPLES:
        rx = rx[np.linspace(0, rx.shape[0] - 1, BLOCK_SAMPLES).round().astype(int)]
    centres, back = np.unique(np.asarray(centres_m, float), axis=0, return_inverse=True)
    point, normal = specular_planes(ground, rx, centres)
    mean_normal = normal.mean(axis=1)
    mean_normal /= np.linalg.norm(mean_normal, axis=-1, keepdims=True)
    back = np.ravel(back)
    return point.mean(axis=1)[back], mean_normal[back]


def local_ground(result, model, box_m: tuple[float, float, float, float]) -> LocalGround | None:
    """The study's DEM in the mast frame over ``box_m = (u0, u1, w0, w1)``, at its cell size; None without one.

    Heights as :func:`geo.study.surface.surface_for_study` samples them (the DEM's tiles and vertical
    datum, ``Z`` from the plane's elevation at the mast's foot).
    """
    spec, terrain = result.spec, result.terrain
    if spec.terrain is None or terrain is None or terrain.plane is None:
        return None
    from geo.ground.dem import Dem

    mast = result.mast
    sign = 1.0 if mast.side == "right" else -1.0
    step = max(float(terrain.cell_size_m), 1.0)
    u0, u1, w0, w1 = box_m
    # on a lattice through the mast's foot, so that a wider box holds the same nodes
    u = step * np.arange(math.floor(u0 / step), math.ceil(u1 / step) + 1)
    w = step * np.arange(math.floor(w0 / step), math.ceil(w1 / step) + 1)
    uu, ww = np.meshgrid(u, w, indexing="ij")
    with Dem.open(spec.terrain) as dem:
        along = mast.setback_m - uu
        cross = sign * (mast.offset_m - ww)
        z = dem.sample_frame(result.runway.frame, along.ravel(), cross.ravel()).reshape(uu.shape)
    z = z - terrain.plane.elevation_at_mast_m
    return LocalGround(u, w, z, np.asarray(model.normal, float))


def grazing_sin(centres_m, images_m, normals) -> np.ndarray:
    """``sin`` of the grazing angle of legs from images to centres on their planes (broadcast). [-]"""
    d = np.asarray(centres_m, float) - np.asarray(images_m, float)
    return np.abs((d * normals).sum(axis=-1)) / np.linalg.norm(d, axis=-1)
