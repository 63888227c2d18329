"""The predicted glide path: CSB and SBO fields over the reflecting plane, DDM, path, sector.

Image theory: every antenna radiates a direct wave and a wave from its image in the reflecting
plane (flat ground, or the plane fitted to the DEM), weighted by the ground's reflection
coefficient (-1 for a perfect conductor in horizontal polarisation). Distances from the antenna
positions (heights, proximity shifts) to each receiver are exact in 3-D, so proximity effects
near the runway come out of the geometry. Each wave carries the element's field pattern
(:mod:`geo.radio.element`) toward the direction it leaves the antenna: the direct wave toward the
receiver, the reflected wave toward its specular point (the direction from the image to the
receiver mirrored in the plane); without an element (``element=None``) the antennas are point
sources. Clearance signals are out of scope.

The difference in depth of modulation follows from the CSB (carrier with 90 and 150 Hz tones,
40 % each, Annex 10 Vol I 3.1.5.5.1) and the SBO (the tones' sidebands only, in antiphase): with
field ratio ``S / C`` at the receiver, ``m150 = m + Re(S/C)`` and ``m90 = m - Re(S/C)`` to first
order, so ``DDM = m150 - m90 = 2 Re(S/C)``; positive when 150 Hz dominates, below the path.
The SBO level is scaled so that the far-field DDM is 0.0875 at the half-sector below the path
(default 0.12 theta, Annex 10 Vol I 3.1.5.6).

Coordinates: ``u`` along the course toward the approach from the foot of the mast, ``w`` across
toward the runway, ``Z`` vertical from the plane's elevation at the foot of the mast. [m]

References
----------
.. [1] Kraus, J. D., *Antennas*, 2nd ed., McGraw-Hill, 1988, sec. 11-9 (antennas over ground,
       image theory).
.. [2] ICAO Annex 10, Volume I, 3.1.5.5.1 (modulation 40 % per tone), 3.1.5.6 (DDM 0.0875 at
       0.12 theta below the path for Category I; 0.07-0.14 theta allowed).
.. [3] FAA Order 6750.16, Siting Criteria for Instrument Landing Systems (image arrays, feeds).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from geo.radio.element import ElementPattern
from geo.radio.reflection import layered_reflection_coefficient_h, reflection_coefficient_h

__all__ = ["DDM_AT_HALF_SECTOR", "ArrayModel", "PathPrediction", "predict_path", "ddm", "far_field_ddm"]

#: DDM at the half-sector below the path (Annex 10 Vol I 3.1.5.6) [2]_.
DDM_AT_HALF_SECTOR = 0.0875
#: Depth of modulation of each tone in the CSB (Annex 10 Vol I 3.1.5.5.1) [2]_.
TONE_MODULATION = 0.4
RANGE_M = 10 * 1852.0


@dataclass(frozen=True)
class ArrayModel:
    """Antennas, their images and their feeds over a reflecting plane.

    Attributes
    ----------
    positions_m : numpy.ndarray, shape (n, 3)
        Antennas (u, w, Z). [m]
    csb, sbo : numpy.ndarray of complex, shape (n,)
        Relative feeds.
    wavelength_m : float
    normal : numpy.ndarray, shape (3,)
        Unit normal of the plane through the origin.
    relative_permittivity, conductivity_s_m : float or None
        Ground constants; ``None`` for a perfect conductor.
    layer : tuple or None
        A layer on the reflecting plane (dry snow): ``(complex permittivity, thickness_m)``; the plane
        is then the layer's top and the ground constants are those under it
        (:func:`geo.radio.reflection.layered_reflection_coefficient_h`).
    element : ElementPattern or None
        Every antenna's element, facing the approach (+u); ``None``: point sources.
    """

    positions_m: np.ndarray
    csb: np.ndarray
    sbo: np.ndarray
    wavelength_m: float
    normal: np.ndarray
    relative_permittivity: float | None = None
    conductivity_s_m: float | None = None
    layer: tuple | None = None
    element: ElementPattern | None = None

    @classmethod
    def build(
        cls,
        heights_m,
        shifts_m,
        csb,
        sbo,
        wavelength_m: float,
        forward_gradient: float = 0.0,
        lateral_gradient: float = 0.0,
        relative_permittivity=None,
        conductivity_s_m=None,
        phase_for_angle_deg: float | None = None,
        element: ElementPattern | None = None,
    ) -> ArrayModel:
        """Antennas on a vertical mast at the origin, ``shifts_m`` toward the runway (+w).

        Over a sloping plane the antennas of a vertical mast are not on the plane's normal: each
        antenna-and-image pair is centred at a different point along the plane, which puts a
        phase between the antennas toward the path. With ``phase_for_angle_deg`` each antenna's
        feeds are phased by that path-direction phase, relative to the lowest antenna, as the
        setup phasing does (see :meth:`slope_phases_deg`); on flat ground it is zero.
        """
        normal = np.array([-forward_gradient, -lateral_gradient, 1.0])
        normal /= np.linalg.norm(normal)
        positions = np.column_stack(
            [np.zeros(len(heights_m)), np.asarray(shifts_m, float), np.asarray(heights_m, float)]
        )
        model = cls(
            positions,
            np.asarray(csb, complex),
            np.asarray(sbo, complex),
            wavelength_m,
            normal,
            relative_permittivity,
            conductivity_s_m,
            element=element,
        )
        if phase_for_angle_deg is None:
            return model
        turn = np.exp(-1j * np.radians(model.slope_phases_deg(phase_for_angle_deg)))
        ground = (relative_permittivity, conductivity_s_m)
        return cls(positions, model.csb * turn, model.sbo * turn, wavelength_m, normal, *ground, element=element)

    def slope_phases_deg(self, angle_deg: float) -> np.ndarray:
        """Phase of each antenna-image pair's centre toward a distant receiver, relative to the lowest.

        Parameters
        ----------
        angle_deg : float
            Elevation of the receiver. [deg]

        Returns
        -------
        numpy.ndarray
            [deg]
        """
        e = math.radians(angle_deg)
        direction = np.array([math.cos(e), 0.0, math.sin(e)])
        centres = (self.positions_m + self.images_m) / 2.0
        phase = 2.0 * math.pi / self.wavelength_m * (centres @ direction)
        return np.degrees(phase - phase[0])

    @property
    def images_m(self) -> np.ndarray:
        """Mirror images of the antennas in the plane."""
        p = self.positions_m
        return p - 2.0 * (p @ self.normal)[:, None] * self.normal[None, :]

    def ground_reflection(self, grazing_rad):
        """The plane's reflection coefficient (horizontal polarisation) at grazing angles, its layer included. [-]"""
        return self._gamma(np.sin(np.asarray(grazing_rad, dtype=float)))

    def _gamma(self, sin_grazing):
        if self.layer is not None:
            eps = self.relative_permittivity
            ground = None if eps is None else eps - 1j * 60.0 * self.wavelength_m * (self.conductivity_s_m or 0.0)
            psi = np.arcsin(np.clip(sin_grazing, -1.0, 1.0))
            return layered_reflection_coefficient_h(psi, self.layer[0], self.layer[1], ground, self.wavelength_m)
        return reflection_coefficient_h(
            np.arcsin(np.clip(sin_grazing, -1.0, 1.0)),
            self.relative_permittivity,
            self.conductivity_s_m,
            self.wavelength_m,
        )

    def element_field(self, direction_m) -> np.ndarray | float:
        """The element's field toward directions (..., 3) leaving an antenna (1 without an element)."""
        if self.element is None or self.element.is_isotropic:
            return 1.0
        return self.element.toward(direction_m)

    def mirrored(self, direction_m) -> np.ndarray:
        """Directions (..., 3) mirrored in the plane: from an image to a receiver, from the antenna to the ground."""
        d = np.asarray(direction_m, dtype=float)
        return d - 2.0 * (d @ self.normal)[..., None] * self.normal

    def fields(self, receivers_m: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """CSB and SBO fields (complex, common arbitrary scale) at receivers, shape (N, 3) [1]_."""
        k = 2.0 * math.pi / self.wavelength_m
        rx = np.asarray(receivers_m, dtype=float)
        csb = np.zeros(rx.shape[0], dtype=complex)
        sbo = np.zeros(rx.shape[0], dtype=complex)
        for pos, img, c, s in zip(self.positions_m, self.images_m, self.csb, self.sbo):
            d = rx - pos
            r_direct = np.sqrt(np.einsum("ij,ij->i", d, d))
            g_direct = self.element_field(d)
            d = rx - img
            r_image = np.sqrt(np.einsum("ij,ij->i", d, d))
            gamma = self._gamma((d @ self.normal) / r_image) * self.element_field(self.mirrored(d))
            e = g_direct * np.exp(-1j * k * r_direct) / r_direct + gamma * np.exp(-1j * k * r_image) / r_image
            csb += c * e
            sbo += s * e
        return csb, sbo

    def far_fields(self, elevation_rad, azimuth_rad: float = 0.0) -> tuple[np.ndarray, np.ndarray]:
        """CSB and SBO array factors toward a distant receiver (plane waves) [1]_.

        Parameters
        ----------
        elevation_rad : array_like
            Elevation above the horizontal. [rad]
        azimuth_rad : float
            From the course direction toward the runway. [rad]
        """
        k = 2.0 * math.pi / self.wavelength_m
        e = np.atleast_1d(np.asarray(elevation_rad, dtype=float))
        direction = np.column_stack([np.cos(e) * math.cos(azimuth_rad), np.cos(e) * math.sin(azimuth_rad), np.sin(e)])
        gamma = self._gamma(direction @ self.normal) * self.element_field(self.mirrored(direction))
        direct = np.exp(1j * k * direction @ self.positions_m.T) * np.atleast_1d(self.element_field(direction))[:, None]
        image = gamma[:, None] * np.exp(1j * k * direction @ self.images_m.T)
        total = direct + image
        return total @ self.csb, total @ self.sbo


def ddm(csb, sbo, sbo_scale: float) -> np.ndarray:
    """``DDM = 2 Re(k S / C)``: positive when 150 Hz dominates (see the module notes)."""
    return 2.0 * sbo_scale * np.real(sbo / csb)


def far_field_ddm(model: ArrayModel, elevation_rad, sbo_scale: float) -> np.ndarray:
    """DDM toward distant receivers at the given elevations."""
    c, s = model.far_fields(elevation_rad)
    return ddm(c, s, sbo_scale)


def _root(func, lo: float, hi: float, tol: float = 1e-13) -> float:
    """A root of ``func`` between ``lo`` and ``hi`` by bisection (ValueError without a sign change)."""
    f_lo, f_hi = func(lo), func(hi)
    if not (np.isfinite(f_lo) and np.isfinite(f_hi)) or f_lo * f_hi > 0.0:
        raise ValueError("no sign change in the bracket")
    while hi - lo > tol:
        mid = 0.5 * (lo + hi)
        f_mid = func(mid)
        if f_mid == 0.0:
            return mid
        if (f_mid > 0.0) == (f_lo > 0.0):
            lo, f_lo = mid, f_mid
        else:
            hi = mid
    return 0.5 * (lo + hi)


@dataclass(frozen=True)
class PathPrediction:
    """What the aircraft would fly.

    Attributes
    ----------
    sbo_scale : float
        SBO amplitude relative to the default feed that gives the wanted sector (its magnitude
        is the SBO/CSB ratio; a negative value means the SBO phase is reversed).
    path_angle_deg : float
        Far-field elevation where DDM = 0. [deg]
    half_sector_below_deg, half_sector_above_deg : float
        Angular distance from the path to DDM = +0.0875 (below) and -0.0875 (above). [deg]
    along_m : numpy.ndarray
        Distance from the threshold along the centre line (negative on the approach). [m]
    path_z_m : numpy.ndarray
        Predicted path (DDM = 0) above the plane's elevation at the mast, on the centre line. [m]
    nominal_z_m : numpy.ndarray
        The designed straight path there. [m]
    ddm_nominal : numpy.ndarray
        DDM on the designed straight path.
    straight_fit : tuple of float
        (intercept at the threshold, slope) of a line fitted to the predicted path from 2 NM
        to 10 NM, in ``Z`` metres.
    far_elevation_deg, far_ddm : numpy.ndarray
        The far-field DDM from 0.3 to 1.8 theta. [deg], [-]
    slope_phases_deg : numpy.ndarray
        Phasing applied to each antenna's feeds for the slope of the plane (0 on flat ground). [deg]
    """

    sbo_scale: float
    path_angle_deg: float
    half_sector_below_deg: float
    half_sector_above_deg: float
    along_m: np.ndarray
    path_z_m: np.ndarray
    nominal_z_m: np.ndarray
    ddm_nominal: np.ndarray
    straight_fit: tuple[float, float]
    far_elevation_deg: np.ndarray
    far_ddm: np.ndarray
    slope_phases_deg: np.ndarray


def _centre_line_receivers(along_m, setback_m, offset_m, z_m):
    return np.column_stack([setback_m - along_m, np.full(along_m.size, offset_m), z_m])


def predict_path(
    model: ArrayModel,
    angle_deg: float,
    setback_m: float,
    offset_m: float,
    intercept_z_m: float = 0.0,
    half_sector: float = 0.12,
    samples: int = 400,
    sbo_scale: float | None = None,
) -> PathPrediction:
    """Scale the SBO, find the far-field path and sector, and the path along the approach.

    Parameters
    ----------
    model : ArrayModel
    angle_deg : float
        Design path angle. [deg]
    setback_m, offset_m : float
        Mast position. [m]
    intercept_z_m : float
        Height of the reflection-plane intercept above the origin (``Z`` of the designed straight
        path abeam the mast). [m]
    half_sector : float
        Fraction of theta below the path where the far-field DDM is 0.0875.
    samples : int
        Points along the approach (10 NM to the runway end abeam the mast).
    sbo_scale : float, optional
        Use this SBO scale instead of calibrating one (to compare arrays at equal feeds).

    Returns
    -------
    PathPrediction
    """
    theta = math.radians(angle_deg)
    if sbo_scale is None:
        c, s = model.far_fields((1.0 - half_sector) * theta)
        sbo_scale = float(DDM_AT_HALF_SECTOR / (2.0 * np.real(s / c))[0])

    def far(e):
        return float(far_field_ddm(model, e, sbo_scale)[0])

    path = _root(far, 0.75 * theta, 1.25 * theta)
    below = _root(lambda e: far(e) - DDM_AT_HALF_SECTOR, 0.5 * theta, path)
    above = _root(lambda e: far(e) + DDM_AT_HALF_SECTOR, path, 1.6 * theta)

    # From 10 NM to the threshold, denser near the threshold where the path bends.
    along = np.r_[-np.geomspace(RANGE_M, 1.0, samples - 1), 0.0]
    horizontal = np.hypot(setback_m - along, offset_m)
    lo = np.tan(0.6 * theta) * horizontal
    hi = np.tan(1.4 * theta) * horizontal
    for _ in range(60):  # bisection on the height, all ranges at once
        mid = 0.5 * (lo + hi)
        c, s = model.fields(_centre_line_receivers(along, setback_m, offset_m, mid))
        below_path = ddm(c, s, sbo_scale) > 0.0
        lo = np.where(below_path, mid, lo)
        hi = np.where(below_path, hi, mid)
    path_z = 0.5 * (lo + hi)
    nominal = intercept_z_m + (setback_m - along) * math.tan(theta)
    c, s = model.fields(_centre_line_receivers(along, setback_m, offset_m, nominal))
    ddm_nominal = ddm(c, s, sbo_scale)
    far_part = (along <= -2 * 1852.0) & (along >= -RANGE_M)
    slope, intercept = np.polyfit(-along[far_part], path_z[far_part], 1)
    far_elevation = np.linspace(0.3, 1.8, 301) * angle_deg
    far_curve = far_field_ddm(model, np.radians(far_elevation), sbo_scale)
    return PathPrediction(
        sbo_scale,
        math.degrees(path),
        math.degrees(path - below),
        math.degrees(above - path),
        along,
        path_z,
        nominal,
        ddm_nominal,
        (float(intercept), float(slope)),
        far_elevation,
        far_curve,
        model.slope_phases_deg(angle_deg),
    )
