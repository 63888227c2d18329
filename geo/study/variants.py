"""The study's array with something changed: heights, feeds, the ground class, snow on the ground.

One place builds every variant of the study's :class:`geo.radio.prediction.ArrayModel` for the
conditions (:mod:`geo.study.conditions`) and the adjustment (:mod:`geo.study.adjustment`), through
the study's own builder (:func:`geo.study.array_setup.array_model`): the ground constants go the
way the site file's ``[prediction]`` ground goes, and the image-theory prediction
(:func:`geo.radio.prediction.predict_path`) is the one the study uses.

Snow on the ground (depth ``d``, measured vertically):

- wet snow reflects at its surface: the reflecting plane rises by ``d``, every antenna stands ``d``
  lower above it, and the coefficient is that of wet snow (:mod:`geo.radio.ground_constants`);
- dry snow is partly transparent: the plane is again its top surface, and the coefficient is that
  of a layer of dry snow of thickness ``d`` on the ground (Born and Wolf's two-interface formula,
  :func:`geo.radio.reflection.layered_reflection_coefficient_h`).

The layer's coefficient is the plane-wave one, taken at each ray's grazing angle: at a range ``R``
it errs by about ``2 d^2 / R`` in path difference (our estimate), a few centimetres of RDH for half
a metre of snow; the far-field angle and sectors are exact.

The feeds keep the slope phasing set for the antennas as installed, and the SBO level stays the
study's: the snow changes the ground, not the transmitter.

References
----------
.. [1] Kraus, J. D., *Antennas*, 2nd ed., McGraw-Hill, 1988, sec. 11-9 (image theory).
.. [2] Born, M. and Wolf, E., *Principles of Optics*, 7th ed., 1999, sec. 1.6.4 (a film on a substrate).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from geo.errors import SiteFileError
from geo.radio.ground_constants import WET_SNOW_PERMITTIVITY, dry_snow_permittivity, ground_constants
from geo.radio.prediction import ArrayModel, PathPrediction, predict_path
from geo.study.array_setup import array_model
from geo.units import format_length

__all__ = ["Variant", "variant_model", "variant_prediction", "study_heights", "study_shifts"]


@dataclass(frozen=True)
class Variant:
    """What differs from the study.

    Attributes
    ----------
    heights_m : tuple of float or None
        Antenna heights above the bare ground's plane, lowest first; None: the study's. [m]
    csb, sbo : tuple of complex or None
        Feeds, lowest first; None: the study's.
    ground : {"dry", "medium", "wet"} or None
        ITU-R P.527 class; None: the site file's ground.
    snow_depth_m : float
        [m]
    snow : {"dry", "wet"} or None
    snow_permittivity : complex or None
        The snow's complex relative permittivity; None: wet or dry snow's of
        :mod:`geo.radio.ground_constants`.
    """

    heights_m: tuple | None = None
    csb: tuple | None = None
    sbo: tuple | None = None
    ground: str | None = None
    snow_depth_m: float = 0.0
    snow: str | None = None
    snow_permittivity: complex | None = None


def study_heights(result) -> tuple[float, ...]:
    """The study's antenna heights above the plane, lowest first. [m]"""
    return tuple(a.height_m for a in result.antennas)


def study_shifts(result) -> tuple[float, ...]:
    """The study's proximity shifts, lowest first. [m]"""
    return tuple(a.shift_toward_runway_m for a in result.antennas)


def _gradients(result) -> tuple[float, float]:
    t = result.terrain
    return (t.plane.forward_gradient, t.plane.lateral_gradient) if t is not None else (0.0, 0.0)


def variant_model(result, variant: Variant) -> ArrayModel:
    """The study's array over its plane with ``variant``'s changes (see the module notes).

    Raises
    ------
    SiteFileError
        ``conditions.snow_depth`` when the snow reaches the lowest antenna.
    """
    spec = result.spec
    if variant.ground is not None:
        g = ground_constants(variant.ground)
        pred = replace(
            spec.prediction, relative_permittivity=g.relative_permittivity, conductivity_s_m=g.conductivity_s_m
        )
        spec = replace(spec, prediction=pred)
    csb, sbo, _ = result.feeds
    feeds = (variant.csb or csb, variant.sbo or sbo)
    heights = variant.heights_m or study_heights(result)
    gu, gw = _gradients(result)
    model = array_model(spec, list(heights), list(study_shifts(result)), feeds, result.wavelength_m, gu, gw)
    d = variant.snow_depth_m
    if d <= 0.0:
        return model
    if d >= min(heights):
        raise SiteFileError(
            "conditions.snow_depth",
            f"{format_length(d, spec.units, 2)} of snow reaches the lowest antenna "
            f"({format_length(min(heights), spec.units, 2)}); give a smaller depth",
        )
    lowered = model.positions_m - np.array([0.0, 0.0, d])
    if variant.snow == "wet":
        eps = WET_SNOW_PERMITTIVITY if variant.snow_permittivity is None else variant.snow_permittivity
        sigma = -eps.imag / (60.0 * result.wavelength_m)  # eps'' = 60 lambda sigma (ITU-R P.527)
        return replace(model, positions_m=lowered, relative_permittivity=eps.real, conductivity_s_m=sigma, layer=None)
    eps = dry_snow_permittivity() if variant.snow_permittivity is None else variant.snow_permittivity
    return replace(model, positions_m=lowered, layer=(eps, d))


def variant_prediction(result, variant: Variant, bare_plane: bool = True) -> PathPrediction:
    """The image-theory path of ``variant`` at the study's SBO level (heights in ``Z`` above the bare plane).

    The prediction's ``Z`` is measured from the reflecting plane (the snow's top with snow); its
    heights (``path_z_m``, ``nominal_z_m``, ``straight_fit``) are given back from the bare ground's
    plane, as the study's; ``bare_plane=False`` keeps them from the reflecting plane (the frame of
    :func:`variant_model`'s antennas, which the surface prediction works in).
    """
    model = variant_model(result, variant)
    d = variant.snow_depth_m if variant.snow_depth_m > 0.0 else 0.0
    spec, mast = result.spec, result.mast
    intercept_z = result.intercept_elevation_m - mast.plane_elevation_m
    p = predict_path(
        model,
        spec.angle_deg,
        mast.setback_m,
        mast.offset_m,
        intercept_z - d,
        spec.prediction.half_sector,
        sbo_scale=result.prediction.sbo_scale,
    )
    if d == 0.0 or not bare_plane:
        return p
    fit = (p.straight_fit[0] + d, p.straight_fit[1])
    return replace(p, path_z_m=p.path_z_m + d, nominal_z_m=p.nominal_z_m + d, straight_fit=fit)
