"""The site file's buildings in a study: the path with and without them, and one finding each.

Each building (:mod:`geo.site.buildings`) is placed in the mast frame on the ground under its
centre (the DEM's height there above the reflecting plane, or the plane itself without a DEM) and
its change of the CSB and SBO (:func:`geo.optics.buildings.building_fields`: the walls' and roof's
scattered field by the four ground paths, and the knife-edge shadow of the direct and reflected
waves) is taken at the receivers of the surface prediction (the designed path from 10 NM to the
threshold, at most 20 m apart). The change of the DDM it makes, ``DDM(C + dC, S + dS) - DDM(C, S)``
with the array's fields over the reflecting plane, is added to the path over the DEM surface (or
to image theory's path without one): to first order in the surface's own departure from the plane,
the same change (stated in the outputs).

The bends are measured by the one rule of :mod:`geo.radio.structure` (the surface prediction's):
the path with and without the buildings, and each building's added 95 % bend per segment (the rule
is linear in the DDM: the change alone is the building's share), against the Annex 10 limits of
:mod:`geo.radio.structure_limits`. The path angle's shift is that of the straight line fitted from
2 to 10 NM through the path heights, the DDM change turned into height by the image DDM's slope.

A planning aid: the authority's assessment and flight inspection decide.

References
----------
.. [1] ICAO Annex 10, Volume I, 3.1.5.4 (glide path structure; limits from memory in
       :mod:`geo.radio.structure_limits`).
.. [2] Knott, E. F., Shaeffer, J. F. and Tuley, M. T., *Radar Cross Section*, 2nd ed., 1993, ch. 5.
.. [3] ITU-R Recommendation P.526, sec. 4.1 (knife edge).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from geo.optics.areas import array_model
from geo.optics.buildings import SHADOW_NOTE, BuildingShape, building_fields, shape_in_mast_frame
from geo.optics.surface_prediction import APPROACH_STEP_M, FIT_FROM_M, FIT_TO_M
from geo.radio.prediction import ddm
from geo.radio.structure import segment_structure, structure_arrays
from geo.radio.structure_limits import LIMITS_SOURCE, structure_segments
from geo.site.buildings import cladding_constants
from geo.study.findings import Finding
from geo.units import format_length

__all__ = [
    "BUILDINGS_CAUTION",
    "BUILDINGS_METHOD",
    "BuildingEffect",
    "BuildingsResult",
    "building_shapes",
    "approach_receivers",
    "study_receivers",
    "buildings_for_study",
    "building_findings",
]

BUILDINGS_CAUTION = (
    "The buildings' effect is a physical-optics prediction and a screening aid: the authority's assessment and "
    "flight inspection decide, and the Annex 14 obstacle surfaces apply on top of it."
)
BUILDINGS_METHOD = (
    "each building's change of the DDM with the array's fields over the reflecting plane, added to the path over "
    "the DEM surface (to image theory's path without a DEM); " + SHADOW_NOTE
)


@dataclass(frozen=True)
class BuildingEffect:
    """One building's effect on the path.

    Attributes
    ----------
    spec : geo.site.buildings.BuildingSpec
    shape : BuildingShape
        In the mast frame.
    added_bend_95_ddm, share : numpy.ndarray, shape (S,)
        Per segment, the 95 % bend of its DDM change and the 95th percentile of ``|bend| / limit``.
    angle_shift_deg : float
        Shift of the fitted path angle (2 to 10 NM). [deg]
    deepest_shadow_db : float
        The largest knife-edge loss it puts on a direct or reflected wave of any antenna toward the
        path's receivers (0: it shadows none). [dB]
    """

    spec: object
    shape: BuildingShape
    added_bend_95_ddm: np.ndarray
    share: np.ndarray
    angle_shift_deg: float
    deepest_shadow_db: float

    @property
    def worst_share(self) -> float:
        return float(np.nanmax(self.share)) if self.share.size else 0.0


@dataclass(frozen=True)
class BuildingsResult:
    """The path with and without the site file's buildings.

    Attributes
    ----------
    effects : list of BuildingEffect
    segments : list of Segment
    along_m : numpy.ndarray
        Receivers, distance from the threshold (negative on the approach). [m]
    ddm_without, ddm_with : numpy.ndarray
        DDM on the designed path. [-]
    structure_without, structure_with : list of SegmentBends
    fitted_angle_without_deg, fitted_angle_with_deg : float
    over : {"DEM surface", "reflecting plane"}
    """

    effects: list
    segments: list
    along_m: np.ndarray
    ddm_without: np.ndarray
    ddm_with: np.ndarray
    structure_without: list
    structure_with: list
    fitted_angle_without_deg: float
    fitted_angle_with_deg: float
    over: str


def building_shapes(result, buildings=None) -> list[BuildingShape]:
    """The buildings in the mast frame, each on the ground under its centre (the plane without a DEM)."""
    spec, mast = result.spec, result.mast
    buildings = spec.buildings if buildings is None else buildings
    frame = result.runway.frame
    shapes = []
    for b in buildings:
        constants = cladding_constants(b, result.channel.glide_path_mhz)
        shape = shape_in_mast_frame(b, frame, mast.side, mast.setback_m, mast.offset_m, 0.0, constants)
        shapes.append(shape)
    if spec.terrain is None or result.terrain is None or not shapes:
        return shapes
    return _on_the_ground(result, shapes)


def _on_the_ground(result, shapes):
    """Each shape's base: the DEM under its centre above the plane there (at least 0: walls start on the plane)."""
    from geo.ground.dem import Dem

    mast, plane = result.mast, result.terrain.plane
    sign = 1.0 if mast.side == "right" else -1.0
    model = array_model(result)
    n = model.normal
    out = []
    with Dem.open(result.spec.terrain) as dem:
        for s in shapes:
            cu, cw = s.centre_m
            at = dem.sample_frame(
                result.runway.frame, np.array([mast.setback_m - cu]), np.array([sign * (mast.offset_m - cw)])
            )
            ground = float(np.ravel(at)[0])
            plane_z = -(n[0] * cu + n[1] * cw) / n[2]
            above = ground - plane.elevation_at_mast_m - plane_z if math.isfinite(ground) else 0.0
            base, height = max(above, 0.0), s.height_m + min(above, 0.0)
            out.append(BuildingShape(s.name, s.outline_m, max(height, 0.1), base, s.relative_permittivity,
                                     s.conductivity_s_m))  # fmt: skip
    return out


def approach_receivers(result) -> tuple[np.ndarray, np.ndarray]:
    """The surface prediction's receivers: the designed path from 10 NM to the threshold, evenly, at most 20 m apart.

    Returns the distances from the threshold (negative on the approach) and the points (u, w, Z). [m]
    """
    sp = result.surface
    image, mast = result.prediction, result.mast
    if sp is not None and sp.approach_along_m is not None:
        dense = np.asarray(sp.approach_along_m, float)
    else:
        along = image.along_m
        dense = np.linspace(along[0], along[-1], int(math.ceil((along[-1] - along[0]) / APPROACH_STEP_M)) + 1)
    z = np.interp(dense, image.along_m, image.nominal_z_m)  # the designed path: a straight line
    return dense, np.column_stack([mast.setback_m - dense, np.full(dense.size, mast.offset_m), z])


def study_receivers(result):
    """The receivers of :func:`approach_receivers` as :class:`geo.optics.areas.PathReceivers` (for the map).

    With the array's fields over the reflecting plane and each receiver's segment and limit, as
    :func:`geo.optics.areas.path_receivers` gives them for its own receivers.
    """
    from geo.optics.areas import PathReceivers

    spec = result.spec
    segments = structure_segments(spec.category, result.rdh_m, spec.angle_deg)
    along, points = approach_receivers(result)
    csb, sbo = array_model(result).fields(points)
    before = -along
    limit, segment = np.full(before.size, np.nan), np.full(before.size, -1)
    for i in range(len(segments) - 1, -1, -1):  # the first segment containing a receiver wins
        inside = segments[i].contains(before)
        limit = np.where(inside, segments[i].limit_at(before), limit)
        segment = np.where(inside, i, segment)
    return PathReceivers(points, before, csb, sbo, result.prediction.sbo_scale, limit, segment)


def _height_slope(model, points, scale):
    """D DDM / d Z of image theory at the points (turns a DDM change into a path height change). [1/m]"""
    dz = 0.05 * np.maximum(np.abs(points[:, 2]), 1.0)
    up = np.column_stack([0.0 * dz, 0.0 * dz, dz])
    hi, lo = model.fields(points + up), model.fields(points - up)
    return (ddm(*hi, scale) - ddm(*lo, scale)) / (2 * dz)


def _angle_shift_deg(along, change, slope, base_slope):
    """Shift of the 2-10 NM straight-line angle by a DDM change (path moved by -change / slope). [deg]"""
    part = (along <= -FIT_FROM_M) & (along >= -FIT_TO_M)
    dz = -change[..., part] / np.where(slope[part] != 0.0, slope[part], -np.inf)
    x = -along[part]
    x0 = x - x.mean()
    dslope = (dz - dz.mean(axis=-1, keepdims=True)) @ x0 / (x0 @ x0)
    return np.degrees(np.arctan(base_slope + dslope) - math.atan(base_slope))


def _shadow_depth_db(model, shape, rx) -> float:
    from geo.optics.buildings import shadow_factors
    from geo.optics.kernel import mirror_points

    top = shape.base_m + shape.height_m
    sources = np.vstack([model.positions_m, mirror_points(model.positions_m, model.normal)])
    f = shadow_factors(sources, rx, shape.outline_m, top, model.normal, model.wavelength_m)
    return float(max(0.0, -20.0 * math.log10(max(float(np.abs(f).min()), 1e-12))))


def buildings_for_study(result, buildings=None, refine: float = 1.0) -> BuildingsResult:
    """The path with and without the buildings, and each building's added bends and angle shift (module notes).

    Parameters
    ----------
    result : StudyResult
        With or without its surface prediction.
    buildings : tuple of BuildingSpec, optional
        Default: the site file's.
    refine : float
        Finer facets than the phase criterion (checks).
    """
    spec = result.spec
    model = array_model(result)
    segments = structure_segments(spec.category, result.rdh_m, spec.angle_deg)
    along, points = approach_receivers(result)
    scale = result.prediction.sbo_scale
    c, s = model.fields(points)
    image = ddm(c, s, scale)
    sp = result.surface
    surface = sp is not None and sp.approach_along_m is not None
    base = np.asarray(sp.approach_ddm, float) if surface else image
    shapes = building_shapes(result, buildings)
    d_csb, d_sbo = building_fields(model, shapes, points, refine)
    each = ddm(c + d_csb, s + d_sbo, scale) - image
    together = ddm(c + d_csb.sum(axis=0), s + d_sbo.sum(axis=0), scale) - image
    added = structure_arrays(segments, -along, each)
    slope = _height_slope(model, points, scale)
    base_slope = sp.straight_fit[1] if surface else result.prediction.straight_fit[1]
    shifts = _angle_shift_deg(along, each, slope, base_slope)
    effects = [
        BuildingEffect(
            b, shape, added.bend_95_ddm[g], added.ratio_95[g], float(shifts[g]), _shadow_depth_db(model, shape, points)
        )  # fmt: skip
        for g, (b, shape) in enumerate(zip(spec.buildings if buildings is None else buildings, shapes))
    ]
    fitted = sp.fitted_angle_deg if surface else math.degrees(math.atan(base_slope))
    return BuildingsResult(
        effects,
        segments,
        along,
        base,
        base + together,
        segment_structure(segments, -along, base, image).segments,
        segment_structure(segments, -along, base + together, image).segments,
        float(fitted),
        float(fitted + _angle_shift_deg(along, together[None, :], slope, base_slope)[0]),
        "DEM surface" if surface else "reflecting plane",
    )


def building_findings(found: BuildingsResult, unit: str, critical_share: float) -> list[Finding]:
    """One finding per building: its added 95 % bend per segment and its angle shift, against the limits [1]_.

    ``fail`` when the building alone takes more than the whole limit of a segment, ``warning`` above
    ``critical_share`` of it (the derived areas' critical share), ``pass`` below.
    """
    out = []
    for e in found.effects:
        parts = [
            f"{seg.name} {bend:.4f} DDM ({share:.0%} of {seg.limit_to_ddm:.3f})"
            for seg, bend, share in zip(found.segments, e.added_bend_95_ddm, e.share)
            if np.isfinite(bend)
        ]
        worst = e.worst_share
        severity = "fail" if worst > 1.0 else ("warning" if worst > critical_share else "pass")
        shadow = f", shadows a wave by up to {e.deepest_shadow_db:.1f} dB" if e.deepest_shadow_db > 0.05 else ""
        out.append(
            Finding(
                "building-bends",
                severity,
                f"Building {e.spec.name} ({format_length(e.spec.height_m, unit, 1)} high{shadow}): added 95 % bend "
                f"{'; '.join(parts)}; path angle shift {e.angle_shift_deg:+.4f} deg; largest share of a limit "
                f"{worst:.0%} against {critical_share:.0%} ({LIMITS_SOURCE}; physical optics over the "
                f"{found.over}, a screening aid: the authority and flight inspection decide, Annex 14 surfaces "
                "apply too).",
            )
        )
    return out
