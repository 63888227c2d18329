"""The glide path predicted over the DEM surface by physical optics: DDM, path, sector, bends.

Image theory (:mod:`geo.radio.prediction`) reflects each antenna in the fitted plane, so over any ground
it gives a smooth path. Here the reflected wave of each antenna is the physical-optics (Kirchhoff)
integral over the DEM surface in front of the mast (:mod:`geo.optics.kernel`, :mod:`geo.optics.surface_facets`):
facets with their own normals, the Fresnel coefficient at each facet's grazing angle, terrain
shadowing toward the antenna and the receivers. The CSB and SBO feeds, the SBO scale and the
DDM are those of the image prediction, so the two differ only by the ground. The antennas'
element pattern (:attr:`geo.radio.prediction.ArrayModel.element`) weights each facet's
illumination by the element's field toward it (the kernel's source-side weights, times the
shadowing ones), for the surface and the plane alike, as image theory weights the reflected wave
by the field toward its specular point.

**How the integral is taken.** A raw integral over a finite area converges slowly to the image
wave of a plane: its truncated edges and the ground under the antennas (where ``1 / r1`` varies
on the scale of the antenna height) leave errors of a few per cent. So the field is written

    E = E_image(plane) + [PO(surface) - PO(plane)]

with the same facets and tapers for both integrals (the plane's facets on the same grid, without
shadowing): truncation and discretisation errors cancel in the bracket, and the ground outside
the integration area (or off the DEM) counts as the plane. Over a plane the bracket vanishes and
image theory comes back exactly; the raw integral ``direct + PO(surface)`` is kept as an option
(``method="raw"``) and tested against image theory with its own, wider, stated tolerance (over a
flat plane it misses the path angle by 0.086 deg with the zones scaled 3 times, 0.030 deg with 6:
the taper over a few Fresnel zones converges slowly).

**Receivers.** The designed path sampled evenly from 10 NM to the threshold, at most
``APPROACH_STEP_M`` (20 m) apart, so that the structure is measured on the DDM at every sample
(not on a DDM interpolated between sparse ones). The integral itself is taken at every sample
near the threshold and farther out at nodes spaced by the scattered field's own band, read between
them by band-limited interpolation (:mod:`geo.optics.approach_nodes`; on the demo 329 of 927
samples, within 4e-5 DDM of the integral at every sample), and distant receivers (plane waves) in
elevation windows around the image theory's path and half-sectors, where a cubic through the
samples around each crossing gives the far-field path angle and half-sectors. Their areas are the
zones of receivers at ``FAR_RANGE_M``. Where aircraft fly, the path angle is the elevation of a
straight line through the path heights between 2 and 10 NM (``fitted_angle_deg``); the far-field
angle is kept beside it for comparison.

**The DEM's noise.** A DEM's posts carry centimetres of noise, which the facets would follow as
geometry (finer facets tilt with it, its bumps cast shadows at grazing incidence): the demo's
3 cm noise moves the path angle by 0.006 deg between facets 2 and 4 times finer than the cell.
By default it is shrunk out of the surface (:mod:`geo.ground.denoise`) and the RMS height taken
out is given to the Ament factor on the reflected field (``noise="geometry"`` keeps it).

**Convergence.** From one facet per DEM cell, the far-field windows and a few path points are
computed again with the facet sides halved; while that moves the angles by more than
``ANGLE_TOLERANCE_DEG`` or the DDM by more than ``DDM_TOLERANCE``, the whole prediction is taken
at the finer sampling and checked again, up to the cost limit (``MAX_REFINE``, ``MAX_FACETS``).
Then the zones are scaled twice as far (area doubled) once: where that moves the result, the
ground beyond the integration area departs from the plane and matters. ``converged`` records
every step, the verdict and, if not converged, which check failed and why.

A prediction, to be confirmed by flight inspection.

References
----------
.. [1] Beckmann, P. and Spizzichino, A., *The Scattering of Electromagnetic Waves from Rough
       Surfaces*, Pergamon, 1963, ch. 3 (Kirchhoff integral; over a plane it gives the image).
.. [2] Born, M. and Wolf, E., *Principles of Optics*, 7th ed., 1999, app. III (stationary phase).
.. [3] ICAO Annex 10, Volume I, 3.1.5.4 (structure), 3.1.5.6 (DDM 0.0875 at the half-sector).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np

from geo.ground.denoise import Denoised, denoise_heights
from geo.optics.approach_nodes import approach_nodes, facet_points
from geo.optics.kernel import ground_fields
from geo.optics.surface_facets import SurfaceGrid, area_limits, surface_grid
from geo.radio.prediction import ArrayModel, PathPrediction, ddm
from geo.radio.reflection import coherent_roughness_factor
from geo.radio.structure import BEND_FILTER, SegmentBends, segment_structure

__all__ = [
    "FAR_RANGE_M",
    "SurfacePrediction",
    "predict_surface",
    "surface_fields",
    "surface_far_ddm",
    "surface_heights",
]

#: Range of the far-field receivers (from the foot of the mast). [m]
FAR_RANGE_M = 200_000.0
#: Largest spacing of the approach samples the integral is taken at (evenly, 10 NM to the threshold). [m]
APPROACH_STEP_M = 20.0
#: The path angle where aircraft fly: a straight line through the path heights between these
#: distances before the threshold (2 and 10 NM). [m]
FIT_FROM_M = 2 * 1852.0
FIT_TO_M = 10 * 1852.0
#: Cost limit of the convergence: facet sides at most this many times finer than the DEM cell, and
#: at most this many facets in one grid.
MAX_REFINE = 4.0
MAX_FACETS = 450_000
#: Facets follow the ground's detail: an interval whose ground departs from linear by more than
#: lambda / (DETAIL_DIVISOR sin psi) is cut into up to DETAIL_PARTS parts (32: the Fraunhofer criterion; 64
#: is twice as strict).
DETAIL_DIVISOR = 64.0
DETAIL_PARTS = 4
#: The grazing angle the detail tolerance is set for (twice a 3 deg path). [deg]
DETAIL_GRAZING_DEG = 6.0
#: Half-width of the far-field windows, as a fraction of theta, and points per window.
_WINDOW = 0.06
_WINDOW_POINTS = 9
#: Path points (beyond 1 NM) recomputed for the convergence check.
_CHECK_PATH_POINTS = 6
#: Convergence tolerances: a doubling moves the angles by less than 0.002 deg and the DDM by less than 0.001.
ANGLE_TOLERANCE_DEG = 0.002
DDM_TOLERANCE = 0.001
#: The zones are scaled by this to make the integration area (see geo.optics.surface_facets).
ZONE_FACTOR = 3.0
#: Terrain shadowing of the surface prediction: knife-edge diffraction over the obstacle of each ray.
SHADOWING_DEFAULT = "knife-edge"
VISIBILITY_NOTE = (
    "shadowing by knife-edge diffraction (ITU-R P.526 single edge, the Fresnel integrals): each facet's "
    "illumination and its view of the receivers weighted by the diffraction factor over the highest ground "
    "above the plane on the ray (antenna side: a horizon sweep outward from the antenna; receiver side: along "
    "the course, the receivers lying within about 20 deg of it); prediction.surface.unshadowed gives the "
    "angles with no shadowing"
)


@dataclass(frozen=True)
class SurfacePrediction:
    """The path over the DEM surface.

    Attributes
    ----------
    path_angle_deg, half_sector_below_deg, half_sector_above_deg : float
        Far field, as :class:`geo.radio.prediction.PathPrediction`. [deg]
    along_m : numpy.ndarray
        The points of ``path.csv`` (negative on the approach). [m]
    ddm_nominal, ddm_image : numpy.ndarray
        DDM on the designed path over the surface and by image theory.
    path_z_m : numpy.ndarray
        The path (DDM = 0) to first order: the image path moved by the DDM difference over the
        local DDM slope of image theory. [m]
    straight_fit : tuple of float
        (intercept at the threshold, slope) of a line through ``path_z_m`` from 2 to 10 NM. [m]
    structure : list of SegmentBends
    bend_distance_m, bend_ddm : numpy.ndarray
        The bends on their uniform grid (distance before the threshold). [m], [-]
    converged : dict
        Changes with the sampling doubled and the area doubled, and the verdict.
    facets : int
    area_m : tuple of float
        (u0, u1, w0, w1) of the integration box. [m]
    off_dem_fraction : float
        Share of the area's nodes off the DEM (counted as the plane).
    method : str
    below_path : geo.radio.below_path.BelowPathCheck, str or None
        The DDM below the path over the surface (far field; course signal); a str says why it was
        not computed.
    fitted_angle_deg : float
        The path angle where aircraft fly: the elevation of a straight line through ``path_z_m``
        between ``fit_range_m`` before the threshold (the far-field ``path_angle_deg`` at
        ``FAR_RANGE_M`` is kept for comparison). [deg]
    fit_range_m : tuple of float
        [m]
    approach_along_m, approach_ddm, approach_ddm_image : numpy.ndarray
        The even samples the integral is taken at (at most ``APPROACH_STEP_M`` apart), the DDM
        over the surface and by image theory there. [m], [-], [-]
    noise : {"roughness", "geometry"}
        How the DEM's cell-scale noise was treated (:mod:`geo.ground.denoise`).
    noise_sigma_m, roughness_m : float
        The noise level estimated and the RMS height taken out of the geometry, given to the
        Ament factor. [m]
    unshadowed : dict or None
        Far-field path angle and half-sectors with no terrain shadowing, at one facet per DEM
        cell (the first sampling). [deg]
    shadowing : {"knife-edge", "hard", "none"}
        The terrain shadowing used.
    """

    path_angle_deg: float
    half_sector_below_deg: float
    half_sector_above_deg: float
    along_m: np.ndarray
    ddm_nominal: np.ndarray
    ddm_image: np.ndarray
    path_z_m: np.ndarray
    straight_fit: tuple[float, float]
    structure: list[SegmentBends]
    bend_distance_m: np.ndarray
    bend_ddm: np.ndarray
    converged: dict = field(default_factory=dict)
    facets: int = 0
    area_m: tuple = ()
    off_dem_fraction: float = 0.0
    method: str = "difference"
    notes: tuple = (VISIBILITY_NOTE, BEND_FILTER)
    below_path: object = None
    fitted_angle_deg: float = math.nan
    fit_range_m: tuple = (FIT_FROM_M, FIT_TO_M)
    approach_along_m: np.ndarray | None = None
    approach_ddm: np.ndarray | None = None
    approach_ddm_image: np.ndarray | None = None
    noise: str = "roughness"
    noise_sigma_m: float | None = None
    roughness_m: float = 0.0
    unshadowed: dict | None = None
    shadowing: str = SHADOWING_DEFAULT


def _plane_z(model: ArrayModel, u, w):
    n = model.normal
    return -(n[0] * np.asarray(u) + n[1] * np.asarray(w)) / n[2]


def _above_plane(model: ArrayModel, points):
    p = np.atleast_2d(points)
    return np.column_stack([p[:, 0], p[:, 1], p[:, 2] - _plane_z(model, p[:, 0], p[:, 1])])


def surface_fields(
    model: ArrayModel,
    grid: SurfaceGrid,
    receivers_m,
    method: str = "difference",
    visibility: bool | str = True,
    rx_index=None,
    far: bool = False,
    roughness_m: float = 0.0,
    along_m=None,
) -> tuple[np.ndarray, np.ndarray]:
    """CSB and SBO fields at receivers over the surface of ``grid`` (see the module notes).

    Parameters
    ----------
    model : ArrayModel
        Antennas, feeds, plane and ground constants.
    grid : SurfaceGrid
        The surface (its ``z_m`` may hold NaN off the DEM: the plane there).
    receivers_m : array_like, shape (R, 3)
        (u, w, Z). [m]
    method : {"difference", "raw"}
    visibility : bool or {"knife-edge", "hard", "none"}
        Terrain shadowing of the surface facets: ``"hard"`` (True) drops what lies below the
        horizon; ``"knife-edge"`` weights each facet's illumination and its view of each receiver
        by the knife-edge factor over the obstacle of the ray; ``"none"`` (False) sees everything
        (:meth:`SurfaceGrid.antenna_weights`, :meth:`SurfaceGrid.horizon_obstacles`).
    rx_index : array_like of int, optional
        Each receiver's index among the receivers ``grid.limits`` was made for: its own area
        (:meth:`AreaLimits.pair_weights`). None: the whole box for every receiver.
    far : bool
        ``receivers_m`` are unit directions of distant receivers; the fields are in the units of
        :meth:`ArrayModel.far_fields`.
    roughness_m : float
        RMS height of roughness not in the geometry: the reflected field (image and bracket) is
        scaled by the Ament factor at each receiver's grazing angle seen from the mast's foot
        (:func:`geo.radio.reflection.coherent_roughness_factor`; method "difference" only). [m]
    along_m : array_like, optional
        The receivers' distances along the path they lie on, in equal steps (method "difference",
        near receivers): the bracket is integrated at the nodes of :mod:`geo.optics.approach_nodes`
        only and read between them by band-limited interpolation. [m]

    Returns
    -------
    csb, sbo : numpy.ndarray of complex
        In the units of :meth:`ArrayModel.fields` (or ``far_fields``).
    """
    rx = np.atleast_2d(np.asarray(receivers_m, float))
    plane_nodes = _plane_z(model, *np.meshgrid(grid.u_m, grid.w_m))
    z = np.where(np.isfinite(grid.z_m), grid.z_m, plane_nodes)
    if along_m is not None and method == "difference" and not far:
        plan = approach_nodes(along_m, rx, facet_points(grid.u_m, grid.w_m, z), model.wavelength_m)
        if plan.nodes.size < rx.shape[0]:
            index = plan.nodes if rx_index is None else np.asarray(rx_index)[plan.nodes]
            po = _bracket(model, grid, rx[plan.nodes], visibility, index, z, plane_nodes)
            return _with_image(model, rx, plan.spread(po), far, roughness_m)
    if method == "raw":
        po, _, _ = _scattered(model, grid, rx, visibility, rx_index, z, far)
        direct = _direct(model, rx, far)
        return model.csb @ (direct + po), model.sbo @ (direct + po)
    if method != "difference":
        raise ValueError(f"method {method!r} is not one of 'difference', 'raw'")
    po = _bracket(model, grid, rx, visibility, rx_index, z, plane_nodes, far)
    return _with_image(model, rx, po, far, roughness_m)


def _scattered(model: ArrayModel, grid: SurfaceGrid, rx, visibility, rx_index, z, far: bool = False):
    """PO of the surface ``z`` (S, R) at ``rx``, the facets counted and the kernel options (:func:`surface_fields`)."""
    surface = SurfaceGrid(grid.u_m, grid.w_m, z, grid.limits)
    own_areas = rx_index is not None  # each receiver's own area and foot ramp, in the pair weights
    facets = surface.facets(foot=not own_areas)
    shadowing = {True: "hard", False: "none"}.get(visibility, visibility)
    n = model.normal
    slope = (-n[0] / n[2], -n[1] / n[2])
    vis, receiver_side = _shading(grid, surface, model.positions_m, shadowing, model.wavelength_m, slope)
    options = dict(far=far)
    counted = slice(None)
    if rx_index is not None:  # only the facets in some receiver's area: the others weigh 0 for every receiver
        u_mid, w_mid, _ = surface._centres()
        counted = np.flatnonzero(grid.limits.within_areas(u_mid, w_mid, rx_index).ravel())
        facets = facets.subset(counted)
        if vis is not None:
            vis = vis[:, counted]
            receiver_side = {
                key: tuple(a[counted] for a in v) if isinstance(v, tuple) else v[counted]
                for key, v in receiver_side.items()
            }
        # the same weights for the surface and the plane: their facets share (u, w)
        options["pair_weight"] = _receiver_weights(grid.limits, facets.centres_m, rx_index)
    consts = (model.wavelength_m, model.relative_permittivity, model.conductivity_s_m)
    options.update(_layer(model))
    gain = _element_weights(model, facets)  # the element's pattern toward each facet, on the source side
    vis = gain if vis is None else (vis if gain is None else vis * gain)
    po = ground_fields(model.positions_m, facets, rx, *consts, source_visible=vis, **receiver_side, **options)
    return po, counted, options


def _layer(model: ArrayModel) -> dict:
    """The kernel's ``reflection`` where the ground carries a layer (dry snow): the model's own coefficient."""
    return {"reflection": model.ground_reflection} if model.layer is not None else {}


def _bracket(model: ArrayModel, grid: SurfaceGrid, rx, visibility, rx_index, z, plane_nodes, far: bool = False):
    """``PO(surface) - PO(plane)`` (S, R) at ``rx``, with the same facets and weights (module notes)."""
    po, counted, options = _scattered(model, grid, rx, visibility, rx_index, z, far)
    plane = SurfaceGrid(grid.u_m, grid.w_m, plane_nodes, grid.limits).facets(foot=rx_index is None).subset(counted)
    consts = (model.wavelength_m, model.relative_permittivity, model.conductivity_s_m)
    plane_gain = _element_weights(model, plane)
    return po - ground_fields(model.positions_m, plane, rx, *consts, source_visible=plane_gain, **options)


def _with_image(model: ArrayModel, rx, po, far: bool, roughness_m: float):
    """CSB and SBO: the image fields plus the bracket ``po`` (S, R), the reflected part under the Ament factor."""
    if far:
        elevation = np.arcsin(np.clip(rx[:, 2], -1.0, 1.0))
        csb, sbo = model.far_fields(elevation)
    else:
        csb, sbo = model.fields(rx)
    if roughness_m <= 0.0:
        return csb + model.csb @ po, sbo + model.sbo @ po
    grazing = np.arcsin(np.clip(rx[:, 2], -1.0, 1.0)) if far else np.arctan2(rx[:, 2], np.hypot(rx[:, 0], rx[:, 1]))
    keep = coherent_roughness_factor(roughness_m, grazing, model.wavelength_m)
    direct = _direct(model, rx, far)
    csb_direct, sbo_direct = model.csb @ direct, model.sbo @ direct
    return (
        csb_direct + keep * (csb - csb_direct + model.csb @ po),
        sbo_direct + keep * (sbo - sbo_direct + model.sbo @ po),
    )


def _direct(model: ArrayModel, rx: np.ndarray, far: bool) -> np.ndarray:
    """Direct waves of each antenna at the receivers (S, R), in the units of ``fields`` / ``far_fields``."""
    k = 2.0 * math.pi / model.wavelength_m
    if far:
        return np.exp(1j * k * model.positions_m @ rx.T) * model.element_field(rx)
    d = rx[None, :, :] - model.positions_m[:, None, :]
    r = np.linalg.norm(d, axis=2)
    return np.exp(-1j * k * r) / r * model.element_field(d)


def _element_weights(model: ArrayModel, facets) -> np.ndarray | None:
    """The element's field from each antenna toward each facet centre (S, P), the kernel's source-side weights.

    None for point sources (:attr:`ArrayModel.element`), which leaves the kernel's call as it was.
    """
    if model.element is None or model.element.is_isotropic:
        return None
    return model.element_field(facets.centres_m[None, :, :] - model.positions_m[:, None, :])


def _receiver_weights(limits, centres_m, rx_index):
    """The ``pair_weight`` of :func:`geo.optics.kernel.ground_fields`: each receiver's own area (its taper)."""
    lo, hi = (v[rx_index] for v in limits.receiver_spans())
    index = np.asarray(rx_index)
    cache = {}

    def pair_weight(sl):
        key = (sl.start, sl.stop)
        if key not in cache:
            u = centres_m[sl, 0]
            local = np.flatnonzero((lo <= u.max()) & (hi >= u.min()))
            weights = limits.pair_weights(u, centres_m[sl, 1], index[local])
            used = np.any(weights > 0.0, axis=0)
            cache[key] = (local[used], weights[:, used].astype(np.float32))
        return cache[key]

    return pair_weight


_SHADING_CACHE: list = []


def _shading(grid: SurfaceGrid, surface: SurfaceGrid, antennas_m, shadowing: str, wavelength_m: float, plane_slope):
    """The antenna side's weights (S, P) and the receiver side's ``ground_fields`` options for ``grid``'s surface.

    ``shadowing`` as :func:`surface_fields`; ``"none"``: ``(None, {})``. ``plane_slope``: (along,
    across) of the reflecting plane, which the knife-edge obstacles are measured from (the same
    for every grid, so that a receiver's weights do not depend on the box it is computed in). The last result is kept
    (with its grid, so it cannot be mistaken for another): the path and the far-field receivers
    of one evaluation share it.
    """
    if shadowing == "none":
        return None, {}
    for held_grid, held_antennas, held_shadowing, result in _SHADING_CACHE:
        if held_grid is grid and held_shadowing == shadowing and np.array_equal(held_antennas, antennas_m):
            return result
    slope = tuple(float(v) for v in plane_slope)
    weights = surface.antenna_weights(antennas_m, wavelength_m, shadowing, slope)  # checks shadowing
    if shadowing == "hard":
        receiver_side = {"horizon_tan": surface.horizon_tangents()}
    else:
        receiver_side = {"horizon_obstacle": surface.horizon_obstacles(wavelength_m, slope[0])}
    result = (weights, receiver_side)
    _SHADING_CACHE[:] = [(grid, np.array(antennas_m), shadowing, result)]
    return result


def _far_receivers(elevation_rad):
    e = np.asarray(elevation_rad, float)
    return FAR_RANGE_M * np.column_stack([np.cos(e), np.zeros(e.size), np.sin(e)])


def _roots(elevation_rad, values, target, near_rad=None):
    """Where the DDM crosses the target (NaN if it does not). [rad]

    The cubic through the four samples around the sign change nearest ``near_rad`` (by default
    the window's middle).
    """
    x, y = np.asarray(elevation_rad, float), np.asarray(values, float) - target
    change = np.flatnonzero(np.sign(y[:-1]) != np.sign(y[1:]))
    if change.size == 0:
        return math.nan
    near = x[x.size // 2] if near_rad is None else near_rad
    i = int(change[np.argmin(np.abs(x[change] - near))])
    lo = min(max(i - 1, 0), x.size - 4)
    xs, ys = x[lo : lo + 4], y[lo : lo + 4]
    scale = xs[-1] - xs[0]
    roots = np.roots(np.polyfit((xs - x[i]) / scale, ys, 3))
    roots = roots[np.abs(roots.imag) < 1e-9].real * scale + x[i]
    roots = roots[(roots >= x[i] - 1e-12) & (roots <= x[i + 1] + 1e-12)]
    if roots.size == 0:  # fall back on the chord
        return float(x[i] - y[i] * (x[i + 1] - x[i]) / (y[i + 1] - y[i]))
    return float(roots[0])


def _windows(image: PathPrediction, angle_deg: float) -> np.ndarray:
    """Far-field elevations: three windows (half-sector below, path, half-sector above). (3, points) [rad]"""
    theta = math.radians(angle_deg)
    centres = [
        math.radians(image.path_angle_deg - image.half_sector_below_deg),
        math.radians(image.path_angle_deg),
        math.radians(image.path_angle_deg + image.half_sector_above_deg),
    ]
    return np.array([np.linspace(c - _WINDOW * theta, c + _WINDOW * theta, _WINDOW_POINTS) for c in centres])


def _sector(windows: np.ndarray, far_ddm: np.ndarray) -> tuple[float, float, float]:
    """Path angle and half-sectors from the DDM in the three windows. [deg]"""
    from geo.radio.prediction import DDM_AT_HALF_SECTOR

    values = far_ddm.reshape(windows.shape)
    below = _roots(windows[0], values[0], DDM_AT_HALF_SECTOR)
    path = _roots(windows[1], values[1], 0.0)
    above = _roots(windows[2], values[2], -DDM_AT_HALF_SECTOR)
    return math.degrees(path), math.degrees(path - below), math.degrees(above - path)


def _wide_sector(model, heights, cell_m, image, angle_deg, scale, method, visibility, zone_factor):
    """Path angle and half-sectors from one window of 0.5 to 1.6 theta. [deg]

    Used when the three narrow windows about image theory's roots miss a crossing (ground far
    from the plane).
    """
    from geo.radio.prediction import DDM_AT_HALF_SECTOR

    theta = math.radians(angle_deg)
    elevations = np.linspace(0.5 * theta, 1.6 * theta, 45)
    receivers = _far_receivers(elevations)
    grid = _grid(model, heights, cell_m, receivers, zone_factor=zone_factor)
    index = np.arange(elevations.size)
    c, s = surface_fields(model, grid, receivers / FAR_RANGE_M, method, visibility, rx_index=index, far=True)
    values = ddm(c, s, scale)
    reference = [image.path_angle_deg - image.half_sector_below_deg, image.path_angle_deg]
    reference.append(image.path_angle_deg + image.half_sector_above_deg)
    below, path, above = (
        _roots(elevations, values, target, math.radians(ref))
        for target, ref in zip((DDM_AT_HALF_SECTOR, 0.0, -DDM_AT_HALF_SECTOR), reference)
    )
    return math.degrees(path), math.degrees(path - below), math.degrees(above - path)


class AreaTooLarge(ValueError):
    """The receivers' integration area needs more facets than allowed."""


def surface_far_ddm(
    model,
    heights,
    cell_m,
    elevation_rad,
    sbo_scale: float,
    zone_factor=ZONE_FACTOR,
    max_facets: int = 2_000_000,
    noise: str = "roughness",
) -> np.ndarray:
    """Far-field DDM over the surface at elevations on the course (the contract of :mod:`geo.radio.below_path`).

    Parameters
    ----------
    model : ArrayModel
    heights : callable
        ``heights(u, w) -> Z`` of the ground (NaN off the DEM). [m]
    cell_m : float
        DEM cell. [m]
    elevation_rad : array_like
        [rad]
    sbo_scale : float
        The image prediction's SBO scale.
    zone_factor : float
        Each receiver's area: its first Fresnel zones scaled by this.
    max_facets : int
        Largest number of facets computed (low receivers over ground rising toward the approach
        have very long zones).

    Returns
    -------
    numpy.ndarray
        DDM, positive below the path.

    Raises
    ------
    AreaTooLarge
        When the area needs more than ``max_facets`` facets.
    """
    e = np.atleast_1d(np.asarray(elevation_rad, dtype=float))
    receivers = _far_receivers(e)
    heights = surface_heights(heights, cell_m, noise)
    grid = _grid(model, heights, cell_m, receivers, zone_factor=zone_factor)
    facets = (grid.u_m.size - 1) * (grid.w_m.size - 1)
    if facets > max_facets:
        raise AreaTooLarge(f"{facets:,} facets (more than {max_facets:,})")
    index = np.arange(e.size)
    rough = getattr(heights, "removed_rms_m", 0.0)
    c, s = surface_fields(
        model, grid, receivers / FAR_RANGE_M, visibility=SHADOWING_DEFAULT, rx_index=index, far=True, roughness_m=rough
    )
    _SHADING_CACHE.clear()
    return ddm(c, s, sbo_scale)


def surface_heights(heights, cell_m: float, noise: str = "roughness"):
    """The heights the facets follow: with the DEM's noise shrunk away (``"roughness"``) or as they are.

    The noise level is set by a first call over the ground 0-1 km ahead of the mast, 200 m wide.
    Heights already shrunk (a :class:`geo.ground.denoise.Denoised`, e.g. of the same study's
    prediction) are used as they are, so that the path and the DDM below it see one surface.
    """
    if noise not in ("roughness", "geometry"):
        raise ValueError(f"noise {noise!r} is not one of 'roughness', 'geometry'")
    if noise == "geometry" or isinstance(heights, Denoised):  # already shrunk: the same surface again
        return heights
    denoised = denoise_heights(heights, cell_m)
    u, w = np.meshgrid(np.arange(0.0, 1000.0, cell_m), np.arange(-100.0, 100.0 + cell_m, cell_m))
    denoised(u, w)
    return denoised


def _approach_points(image: PathPrediction, setback_m: float, offset_m: float):
    """The designed path sampled evenly, at most ``APPROACH_STEP_M`` apart, from 10 NM to the threshold.

    Returns the distances (negative on the approach) and the receivers (u, w, Z). [m]
    """
    along = image.along_m
    count = int(math.ceil((along[-1] - along[0]) / APPROACH_STEP_M)) + 1
    dense = np.linspace(along[0], along[-1], count)
    z = np.interp(dense, along, image.nominal_z_m)  # the designed path is a straight line: exact
    return dense, np.column_stack([setback_m - dense, np.full(dense.size, offset_m), z])


def _grid(model, heights, cell_m, receivers, refine=1.0, zone_factor=ZONE_FACTOR, detail=True, grading=None):
    """The graded grid of the receivers' areas; ``detail``: refined where the ground departs from linear.

    ``grading``: the receivers the facet sizes are graded for (default ``receivers``). Grids of
    subsets graded for the same receivers share their nodes, so a receiver's result does not
    depend on the receivers computed with it.
    """
    lam = model.wavelength_m
    ants = _above_plane(model, model.positions_m)
    limits = area_limits(ants, _above_plane(model, receivers), lam, zone_factor)
    graded = receivers if grading is None else grading
    tolerance = _detail_tolerance_m(model, graded) if detail else None
    return surface_grid(limits, heights, lam, cell_m, model.positions_m, graded, refine, tolerance, DETAIL_PARTS)


def _detail_tolerance_m(model, receivers=None) -> float:
    """Departure from linear that the facets must follow: lambda / (DETAIL_DIVISOR sin psi). [m]

    The Fraunhofer criterion of a smooth surface (Ulaby, Moore and Fung 1982, from memory) at the
    grazing angle ``DETAIL_GRAZING_DEG``, steeper than any receiver of a glide path's prediction
    sees from the ground ahead; the same for every set of receivers, so that grids of different
    sets share their nodes.
    """
    return model.wavelength_m / (DETAIL_DIVISOR * math.sin(math.radians(DETAIL_GRAZING_DEG)))


@dataclass
class _Job:
    """What every evaluation of one prediction shares."""

    model: ArrayModel
    heights: object
    cell_m: float
    receivers: np.ndarray  # path points, then the far-field directions times FAR_RANGE_M
    n_path: int
    windows: np.ndarray
    scale: float
    method: str
    visibility: bool | str
    roughness_m: float = 0.0
    along_m: np.ndarray | None = None  # the path points' distances along the approach (even steps) [m]
    image: PathPrediction | None = None
    angle_deg: float = 3.0
    zone_factor: float = ZONE_FACTOR


def _evaluate(job: _Job, index, refine=1.0, zone_factor=ZONE_FACTOR, visibility=None):
    """DDM at the path receivers among ``receivers[index]`` and the sector from its far ones.

    The grid covers the areas of ``receivers[index]`` only. Returns (ddm, sector, facets).
    """
    index = np.asarray(index)
    vis = job.visibility if visibility is None else visibility
    grid = _grid(job.model, job.heights, job.cell_m, job.receivers[index], refine, zone_factor, grading=job.receivers)
    local = np.arange(index.size)
    path = index < job.n_path
    options = dict(method=job.method, visibility=vis, roughness_m=job.roughness_m)
    c = s = np.zeros(0, complex)
    if path.any():
        run = index[path]
        if run.size > 1 and np.all(np.diff(run) == 1):  # consecutive samples of the approach: integrated at nodes
            options["along_m"] = job.along_m[run]
        c, s = surface_fields(job.model, grid, job.receivers[run], rx_index=local[path], **options)
        options.pop("along_m", None)
    far_index = index[~path]
    far_elev = job.windows.ravel()[far_index - job.n_path]
    directions = job.receivers[far_index] / FAR_RANGE_M
    sector = ()
    if far_index.size:
        c_far, s_far = surface_fields(job.model, grid, directions, rx_index=local[~path], far=True, **options)
        sector = _sector(far_elev.reshape(3, -1), ddm(c_far, s_far, job.scale))
    _SHADING_CACHE.clear()
    return ddm(c, s, job.scale), sector, (grid.u_m.size - 1) * (grid.w_m.size - 1), grid


def _checked(job: _Job, chosen):
    """Receivers of the convergence checks: ``chosen`` path points and every other far elevation."""
    far_index = job.n_path + np.arange(job.windows.size).reshape(job.windows.shape)[:, ::2].ravel()
    return np.concatenate([chosen, far_index])


def _angle_changes(other, base) -> tuple:
    """Moves of the path angle and of the larger half-sector between two sectors (None: a crossing lost). [deg]"""
    if not (len(other) and all(math.isfinite(v) for v in (*other, *base))):
        return None, None  # a crossing fell outside the check's windows (the angles moved more than 0.06 theta)
    return abs(other[0] - base[0]), max(abs(other[1] - base[1]), abs(other[2] - base[2]))


def _step(refine: float, facets: int, angles=(0.0, 0.0), ddm_change: float = 0.0, **more) -> dict:
    """One convergence check's record: its sampling and grid, the angles' moves and the DDM's."""
    return {"refine": refine, **more, "facets": facets, "path_angle_change_deg": angles[0],
            "half_sector_change_deg": angles[1], "ddm_change_max": ddm_change}  # fmt: skip


def _change(job, chosen, ddm_base, sector_base, refine, zone_factor):
    """Changes of the angles and the DDM of the checked receivers at ``refine`` / ``zone_factor``."""
    index = _checked(job, chosen)
    again, other, facets, _ = _evaluate(job, index, refine, zone_factor)
    if refine == 1.0 and not all(math.isfinite(v) for v in other):  # the crossings left the windows: a wide one
        other = _wide_sector(job.model, job.heights, job.cell_m, job.image, job.angle_deg, job.scale, job.method,
                             job.visibility, zone_factor)  # fmt: skip
    ddm_change = float(np.max(np.abs(again[: chosen.size] - ddm_base[chosen]))) if chosen.size else 0.0
    step = _step(refine, facets, _angle_changes(other, sector_base), ddm_change, zone_factor=zone_factor)
    return {**step, "path_points_checked": int(chosen.size)}


def _within(change: dict) -> bool:
    angles = (change["path_angle_change_deg"], change["half_sector_change_deg"])
    return all(a is not None and a <= ANGLE_TOLERANCE_DEG for a in angles) and change["ddm_change_max"] <= DDM_TOLERANCE


@dataclass
class _Band:
    """Receivers refined together: the path points nearest one check point, or the far-field windows."""

    name: str
    members: np.ndarray  # indices into the job's receivers
    checked: np.ndarray  # the members the doubling is checked at
    refine: float = 1.0
    steps: list = field(default_factory=list)
    passed: bool = False


def _bands(job: _Job, along_dense, chosen) -> list[_Band]:
    """The path points by their nearest check point (beyond 1 NM), then the far-field receivers."""
    nearest = np.argmin(np.abs(along_dense[:, None] - along_dense[chosen][None, :]), axis=1)
    out = []
    for i, point in enumerate(chosen):
        members = np.flatnonzero(nearest == i)
        far_m, near_m = -along_dense[members].min(), max(-along_dense[members].max(), 0.0) + 0.0  # no -0
        out.append(_Band(f"path {near_m:.0f}-{far_m:.0f} m before the threshold", members, np.array([point])))
    far = job.n_path + np.arange(job.windows.size)
    every_other = job.n_path + np.arange(job.windows.size).reshape(job.windows.shape)[:, ::2].ravel()
    out.append(_Band("far field (path angle and half-sectors)", far, every_other))
    return out


def _checks(job: _Job, bands: list[_Band], ddm_path, sector, refine: float, zone_factor: float) -> list[dict]:
    """The checked receivers of ``bands`` again at ``refine``, in one evaluation.

    The receivers do not depend on each other. Per band: the move of its DDM (path bands) or of the
    angles (the far-field band).
    """
    index = np.concatenate([band.checked for band in bands])
    again, other, facets, _ = _evaluate(job, index, refine, zone_factor)
    out, k = [], 0
    for band in bands:
        if band.checked[0] >= job.n_path:
            out.append(_step(refine, facets, _angle_changes(other, sector)))
        else:
            n = band.checked.size
            out.append(
                _step(refine, facets, ddm_change=float(np.max(np.abs(again[k : k + n] - ddm_path[band.checked]))))
            )
            k += n
    return out


def _refine_bands(job: _Job, bands: list[_Band], ddm_path, sector, zone_factor: float):
    """Each band refined until the doubling no longer moves it, or the cost limit (see :func:`_refined`)."""
    reason = None
    for band, step in zip(bands, _checks(job, bands, ddm_path, sector, 2.0, zone_factor)):  # every band's first
        band.steps.append(step)
        band.passed = _within(step)
    for band in bands:
        while not band.passed:
            facets = band.steps[-1]["facets"]
            if 4.0 * band.refine > MAX_REFINE or 4.0 * facets > MAX_FACETS:
                reason = (
                    f"the cost limit: {band.name} would need a check at facets {4.0 * band.refine:g} times finer "
                    f"than the DEM cell, beyond the limit of {MAX_REFINE:g} times or {MAX_FACETS:,} facets"
                )
                break
            band.refine *= 2.0
            values, found, _, _ = _evaluate(job, band.members, band.refine, zone_factor)
            if band.members[0] >= job.n_path:
                sector = found
            else:
                ddm_path = ddm_path.copy()
                ddm_path[band.members] = values
            step = _checks(job, [band], ddm_path, sector, 2.0 * band.refine, zone_factor)[0]
            band.steps.append(step)
            band.passed = _within(step)
    return ddm_path, sector, reason


def _windows_on_own_roots(job: _Job) -> tuple:
    """The sector where the narrow windows about image theory's roots miss a crossing (ground far from the plane).

    One wide window finds the surface's own roots (:func:`_wide_sector`); the far-field windows are
    then centred on them (in ``job``, so that the convergence checks use them too) and the sector
    taken there again. Returns the sector (NaN where even the wide window finds no crossing). [deg]
    """
    m, image = job.model, job.image
    found = _wide_sector(m, job.heights, job.cell_m, image, job.angle_deg, job.scale, job.method, job.visibility,
                         job.zone_factor)  # fmt: skip
    if not all(math.isfinite(v) for v in found):
        return found
    moved = replace(image, path_angle_deg=found[0], half_sector_below_deg=found[1], half_sector_above_deg=found[2])
    job.windows = _windows(moved, job.angle_deg)
    job.receivers[job.n_path :] = _far_receivers(job.windows.ravel())
    _, sector, _, _ = _evaluate(job, job.n_path + np.arange(job.windows.size), 1.0, job.zone_factor)
    return sector if all(math.isfinite(v) for v in sector) else found


def _refined(job: _Job, along_dense, check: bool, zone_factor: float):
    """The prediction at the coarsest sampling that doubling no longer moves, band by band (see the module notes).

    From one facet per DEM cell (``refine`` 1) everywhere, each band of receivers (the path points
    nearest each of the ``_CHECK_PATH_POINTS`` check points beyond 1 NM, and the far-field windows)
    is checked with the facet sides halved; while that moves its DDM by more than
    ``DDM_TOLERANCE`` or its angles by more than ``ANGLE_TOLERANCE_DEG``, the band alone is taken
    at the finer sampling and checked again: the facets are refined only for the receivers that
    ask for it. A check finer than ``MAX_REFINE`` times the cell, or a grid beyond ``MAX_FACETS``
    facets, is not made (the cost limit). The area doubled is checked once, at the first
    sampling. Returns (ddm, sector, facets, grid, converged).
    """
    everything = np.arange(job.receivers.shape[0])
    ddm_path, sector, facets, grid = _evaluate(job, everything, 1.0, zone_factor)
    if not all(math.isfinite(v) for v in sector):
        sector = _windows_on_own_roots(job)
    if not check:
        return ddm_path, sector, facets, grid, {}
    beyond = np.flatnonzero(along_dense <= -1852.0)
    chosen = beyond[np.linspace(0, beyond.size - 1, min(_CHECK_PATH_POINTS, beyond.size)).astype(int)]
    # The area is checked at the first sampling: what the ground beyond adds hardly depends on it.
    area = _change(job, chosen, ddm_path, sector, 1.0, 2.0 * zone_factor)
    bands = _bands(job, along_dense, chosen)
    ddm_path, sector, reason = _refine_bands(job, bands, ddm_path, sector, zone_factor)
    last = [band.steps[-1] for band in bands]
    sampling = {
        "refine": max(step["refine"] for step in last),
        "facets": max(step["facets"] for step in last),
        "path_angle_change_deg": last[-1]["path_angle_change_deg"],
        "half_sector_change_deg": last[-1]["half_sector_change_deg"],
        "ddm_change_max": max(step["ddm_change_max"] for step in last),
        "path_points_checked": int(chosen.size),
    }
    sampling_ok, area_ok = all(band.passed for band in bands), _within(area)
    if sampling_ok and not area_ok:
        reason = "the area: doubling it moves the result, so the ground beyond it departs from the plane and matters"
    elif not sampling_ok and reason is None:
        reason = "the sampling: a crossing left the check's windows"
    converged = {
        "refine": max(band.refine for band in bands),
        "bands": [{"receivers": b.name, "refine": b.refine, "steps": b.steps, "converged": b.passed} for b in bands],
        "sampling_doubled": sampling,
        "area_doubled": area,
        "converged": bool(sampling_ok and area_ok),
        "not_converged_because": reason,
        "tolerances": {"angle_deg": ANGLE_TOLERANCE_DEG, "ddm": DDM_TOLERANCE},
        "cost_limit": {"max_refine": MAX_REFINE, "max_facets": MAX_FACETS},
    }
    return ddm_path, sector, facets, grid, converged


def _fitted_angle(along_m, path_z_m) -> tuple[float, float, float]:
    """Path angle from a straight line through the path heights from FIT_FROM_M to FIT_TO_M. [deg]

    Returns (angle, intercept at the threshold, slope); the heights are taken against the
    horizontal distance before the threshold, so the angle is the elevation of that line.
    """
    part = (along_m <= -FIT_FROM_M) & (along_m >= -FIT_TO_M)
    slope, intercept = np.polyfit(-along_m[part], path_z_m[part], 1)
    return math.degrees(math.atan(slope)), float(intercept), float(slope)


def _path_heights(model, points, ddm_image, difference, scale, image_path_z):
    """First-order path heights: the image path moved by the DDM difference over the DDM slope. [m]"""
    dz = 0.05 * np.maximum(np.abs(points[:, 2]), 1.0)
    up = np.column_stack([0.0 * dz, 0.0 * dz, dz])
    c_hi, s_hi = model.fields(points + up)
    c_lo, s_lo = model.fields(points - up)
    slope = (ddm(c_hi, s_hi, scale) - ddm(c_lo, s_lo, scale)) / (2 * dz)
    return image_path_z - difference / np.where(slope != 0.0, slope, -np.inf)


def predict_surface(
    model: ArrayModel,
    image: PathPrediction,
    heights,
    cell_m: float,
    angle_deg: float,
    setback_m: float,
    offset_m: float,
    segments,
    method: str = "difference",
    visibility: bool | str = "knife-edge",
    check: bool = True,
    zone_factor: float = ZONE_FACTOR,
    noise: str = "roughness",
) -> SurfacePrediction:
    """Predict the path over the surface (see the module notes).

    Parameters
    ----------
    model : ArrayModel
        The array of the image prediction (same feeds, plane and ground constants).
    image : PathPrediction
        The image prediction: its SBO scale, its points along the approach, its roots.
    heights : callable
        ``heights(u, w) -> Z`` of the ground (NaN off the DEM). [m]
    cell_m : float
        DEM cell. [m]
    angle_deg : float
        Design path angle. [deg]
    setback_m, offset_m : float
        Mast position. [m]
    segments : list of geo.radio.structure_limits.Segment
        Approach segments and their bend limits.
    method : {"difference", "raw"}
    visibility : bool or {"knife-edge", "hard", "none"}
        Terrain shadowing, as :func:`surface_fields` (default ``SHADOWING_DEFAULT``: knife-edge).
    check : bool
        Refine until converged (sampling doubled, area doubled; see :func:`_refined`).
    zone_factor : float
        Each receiver's area: its first Fresnel zones scaled by this (:func:`area_limits`).
    noise : {"roughness", "geometry"}
        The DEM's cell-scale noise shrunk out of the surface and counted as roughness (the Ament
        factor, :mod:`geo.ground.denoise`), or kept as geometry.

    Returns
    -------
    SurfacePrediction
    """
    ground = surface_heights(heights, cell_m, noise)
    dense, points = _approach_points(image, setback_m, offset_m)
    windows = _windows(image, angle_deg)
    receivers = np.vstack([points, _far_receivers(windows.ravel())])
    job = _Job(model, ground, cell_m, receivers, dense.size, windows, image.sbo_scale, method, visibility,
               image=image, angle_deg=angle_deg, zone_factor=zone_factor)  # fmt: skip
    job.roughness_m = float(getattr(ground, "removed_rms_m", 0.0))
    job.along_m = dense
    ddm_dense, sector, facets, grid, converged = _refined(job, dense, check, zone_factor)
    c, s = model.fields(points)
    ddm_dense_image = ddm(c, s, job.scale)
    difference = ddm_dense - ddm_dense_image
    image_path_z = np.interp(dense, image.along_m, image.path_z_m)
    path_z = _path_heights(model, points, ddm_dense_image, difference, job.scale, image_path_z)
    fitted, intercept, slope = _fitted_angle(dense, path_z)
    structure, grid_m, bend = segment_structure(segments, -dense, ddm_dense, ddm_dense_image)
    unshadowed = _unshadowed(job, zone_factor) if visibility not in (False, "none") else None
    u, w = grid.u_m, grid.w_m
    return SurfacePrediction(
        sector[0],
        sector[1],
        sector[2],
        image.along_m,
        image.ddm_nominal + np.interp(image.along_m, dense, difference),
        image.ddm_nominal,
        np.interp(image.along_m, dense, path_z),
        (intercept, slope),
        structure,
        grid_m,
        bend,
        converged,
        facets,
        (float(u[0]), float(u[-1]), float(w[0]), float(w[-1])),
        float(np.mean(~np.isfinite(grid.z_m))),
        method,
        below_path=None,
        fitted_angle_deg=fitted,
        fit_range_m=(FIT_FROM_M, FIT_TO_M),
        approach_along_m=dense,
        approach_ddm=ddm_dense,
        approach_ddm_image=ddm_dense_image,
        noise=noise,
        noise_sigma_m=getattr(ground, "noise_sigma_m", None),
        roughness_m=job.roughness_m,
        unshadowed=unshadowed,
        shadowing={True: "hard", False: "none"}.get(visibility, visibility),
    )


def _unshadowed(job: _Job, zone_factor: float) -> dict:
    """Path angle and half-sectors (far field) with no terrain shadowing, at one facet per DEM cell. [deg]"""
    far = job.n_path + np.arange(job.windows.size)
    _, sector, _, _ = _evaluate(job, far, 1.0, zone_factor, visibility=False)
    keys = ("path_angle_deg", "half_sector_below_deg", "half_sector_above_deg")
    return dict(zip(keys, (float(v) for v in sector)))
