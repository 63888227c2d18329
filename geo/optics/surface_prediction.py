"""The glide path predicted over the DEM surface by physical optics: DDM, path, sector, bends.

Image theory (:mod:`geo.radio.prediction`) reflects each antenna in the fitted plane, so over any ground
it gives a smooth path. Here the reflected wave of each antenna is the physical-optics (Kirchhoff)
integral over the DEM surface in front of the mast (:mod:`geo.optics.kernel`, :mod:`geo.optics.surface_facets`):
facets with their own normals, the Fresnel coefficient at each facet's grazing angle, terrain
shadowing toward the antenna and the receivers. The CSB and SBO feeds, the SBO scale and the
DDM are those of the image prediction, so the two differ only by the ground.

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

**Receivers.** The designed path at the points of ``path.csv`` (10 NM to the threshold; the
integral is taken at points at least ``PATH_STEP_M`` apart and the DDM difference to image theory
is interpolated linearly between them), and distant receivers (plane waves) in elevation windows
around the image theory's path and half-sectors, where a cubic through the samples around each
crossing gives the surface's path angle and half-sectors. Their areas are the zones of receivers
at ``FAR_RANGE_M``.

**Convergence.** The far-field windows and a few path points are computed again with the facet
sides halved (sampling doubled) and with the zones scaled twice as far (area doubled); the
changes of path angle, half-sectors and DDM are reported. With one facet per DEM cell the facets
resample the DEM (their corners are not its posts), so a DEM with cell-scale roughness moves the
path angle by about 0.01 deg when the sampling doubles (the demo); where doubling the area moves
it, the ground beyond the zones departs from the plane and matters (the real-DEM exploration).

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

from geo.optics.kernel import ground_fields
from geo.optics.surface_facets import SurfaceGrid, area_limits, surface_grid
from geo.radio.prediction import ArrayModel, PathPrediction, ddm
from geo.radio.structure import BEND_FILTER, SegmentBends, bends, segment_bends

__all__ = ["FAR_RANGE_M", "SurfacePrediction", "predict_surface", "surface_fields", "surface_far_ddm"]

#: Range of the far-field receivers (from the foot of the mast). [m]
FAR_RANGE_M = 200_000.0
#: Smallest spacing of the path points the integral is taken at. [m]
PATH_STEP_M = 20.0
#: Half-width of the far-field windows, as a fraction of theta, and points per window.
_WINDOW = 0.06
_WINDOW_POINTS = 9
#: Path points (beyond 1 NM) recomputed for the convergence check.
_CHECK_PATH_POINTS = 6
#: Convergence tolerances: those of the flat-plane check of issue 11 (0.002 deg; 1 % of 0.0875 DDM).
ANGLE_TOLERANCE_DEG = 0.002
DDM_TOLERANCE = 0.01 * 0.0875
#: The zones are scaled by this to make the integration area (see geo.optics.surface_facets).
ZONE_FACTOR = 3.0
VISIBILITY_NOTE = (
    "shadowing: facet to antenna by a horizon sweep outward from the antenna; facet to receiver by the facet's "
    "horizon along the course (receivers lie within about 20 deg of it)"
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

    Returns
    -------
    csb, sbo : numpy.ndarray of complex
        In the units of :meth:`ArrayModel.fields` (or ``far_fields``).
    """
    rx = np.atleast_2d(np.asarray(receivers_m, float))
    plane_nodes = _plane_z(model, *np.meshgrid(grid.u_m, grid.w_m))
    z = np.where(np.isfinite(grid.z_m), grid.z_m, plane_nodes)
    surface = SurfaceGrid(grid.u_m, grid.w_m, z, grid.limits)
    own_areas = rx_index is not None  # each receiver's own area and foot ramp, in the pair weights
    facets = surface.facets(foot=not own_areas)
    consts = (model.wavelength_m, model.relative_permittivity, model.conductivity_s_m)
    shadowing = {True: "hard", False: "none"}.get(visibility, visibility)
    vis, receiver_side = _shading(grid, surface, model.positions_m, shadowing, model.wavelength_m)
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
    po = ground_fields(model.positions_m, facets, rx, *consts, source_visible=vis, **receiver_side, **options)
    k = 2.0 * math.pi / model.wavelength_m
    if method == "raw":
        if far:
            direct = np.exp(1j * k * model.positions_m @ rx.T)
        else:
            r = np.linalg.norm(rx[None, :, :] - model.positions_m[:, None, :], axis=2)
            direct = np.exp(-1j * k * r) / r
        return model.csb @ (direct + po), model.sbo @ (direct + po)
    if method != "difference":
        raise ValueError(f"method {method!r} is not one of 'difference', 'raw'")
    plane = SurfaceGrid(grid.u_m, grid.w_m, plane_nodes, grid.limits).facets(foot=not own_areas).subset(counted)
    po = po - ground_fields(model.positions_m, plane, rx, *consts, **options)
    if far:
        elevation = np.arcsin(np.clip(rx[:, 2], -1.0, 1.0))
        csb, sbo = model.far_fields(elevation)
    else:
        csb, sbo = model.fields(rx)
    return csb + model.csb @ po, sbo + model.sbo @ po


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


def _shading(grid: SurfaceGrid, surface: SurfaceGrid, antennas_m, shadowing: str, wavelength_m: float):
    """The antenna side's weights (S, P) and the receiver side's ``ground_fields`` options for ``grid``'s surface.

    ``shadowing`` as :func:`surface_fields`; ``"none"``: ``(None, {})``. The last result is kept
    (with its grid, so it cannot be mistaken for another): the path and the far-field receivers
    of one evaluation share it.
    """
    if shadowing == "none":
        return None, {}
    for held_grid, held_antennas, held_shadowing, result in _SHADING_CACHE:
        if held_grid is grid and held_shadowing == shadowing and np.array_equal(held_antennas, antennas_m):
            return result
    slope = surface.fitted_slope()
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
    model, heights, cell_m, elevation_rad, sbo_scale: float, zone_factor=ZONE_FACTOR, max_facets: int = 2_000_000
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
    grid = _grid(model, heights, cell_m, receivers, zone_factor=zone_factor)
    facets = (grid.u_m.size - 1) * (grid.w_m.size - 1)
    if facets > max_facets:
        raise AreaTooLarge(f"{facets:,} facets (more than {max_facets:,})")
    index = np.arange(e.size)
    c, s = surface_fields(model, grid, receivers / FAR_RANGE_M, rx_index=index, far=True)
    _SHADING_CACHE.clear()
    return ddm(c, s, sbo_scale)


def _path_subset(along_m):
    """Indices of path points at least PATH_STEP_M apart (the first and last always kept)."""
    keep = [0]
    for i in range(1, along_m.size):
        if along_m[i] - along_m[keep[-1]] >= PATH_STEP_M:
            keep.append(i)
    if keep[-1] != along_m.size - 1:
        keep.append(along_m.size - 1)
    return np.asarray(keep)


def _grid(model, heights, cell_m, receivers, refine=1.0, zone_factor=ZONE_FACTOR):
    lam = model.wavelength_m
    ants = _above_plane(model, model.positions_m)
    limits = area_limits(ants, _above_plane(model, receivers), lam, zone_factor)
    return surface_grid(limits, heights, lam, cell_m, model.positions_m, receivers, refine)


def _evaluate(model, grid, receivers, index, n_path, windows, scale, method, visibility, zone_index=None):
    """DDM at the path receivers and the sector, for ``receivers[index]``.

    ``zone_index``: each one's place among the receivers ``grid`` was made for (``index`` when
    the grid was made for all of them).
    """
    zone_index = index if zone_index is None else np.asarray(zone_index)
    path = index < n_path
    c, s = surface_fields(model, grid, receivers[index[path]], method, visibility, rx_index=zone_index[path])
    far_index = index[~path]
    far_elev = windows.ravel()[far_index - n_path]
    directions = receivers[far_index] / FAR_RANGE_M
    c_far, s_far = surface_fields(model, grid, directions, method, visibility, rx_index=zone_index[~path], far=True)
    return ddm(c, s, scale), _sector(far_elev.reshape(3, -1), ddm(c_far, s_far, scale))


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
    visibility: bool = True,
    check: bool = True,
    zone_factor: float = ZONE_FACTOR,
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
    visibility : bool
        Terrain shadowing.
    check : bool
        Run the convergence check (sampling doubled, area doubled).
    zone_factor : float
        Each receiver's area: its first Fresnel zones scaled by this (:func:`area_limits`).

    Returns
    -------
    SurfacePrediction
    """
    along = image.along_m
    points = np.column_stack([setback_m - along, np.full(along.size, offset_m), image.nominal_z_m])
    subset = _path_subset(along)
    windows = _windows(image, angle_deg)
    receivers = np.vstack([points[subset], _far_receivers(windows.ravel())])
    n_path = subset.size
    grid = _grid(model, heights, cell_m, receivers, zone_factor=zone_factor)
    scale = image.sbo_scale
    everything = np.arange(receivers.shape[0])
    ddm_sub, sector = _evaluate(model, grid, receivers, everything, n_path, windows, scale, method, visibility)
    wide = not all(math.isfinite(v) for v in sector)
    if wide:
        sector = _wide_sector(model, heights, cell_m, image, angle_deg, scale, method, visibility, zone_factor)
    difference = np.interp(along, along[subset], ddm_sub - image.ddm_nominal[subset])
    ddm_surface = image.ddm_nominal + difference

    # First-order path heights: move the image path by the DDM difference over the DDM slope.
    dz = 0.05 * np.maximum(np.abs(image.nominal_z_m), 1.0)
    up = np.column_stack([0.0 * dz, 0.0 * dz, dz])
    c_hi, s_hi = model.fields(points + up)
    c_lo, s_lo = model.fields(points - up)
    slope = (ddm(c_hi, s_hi, scale) - ddm(c_lo, s_lo, scale)) / (2 * dz)
    path_z = image.path_z_m - difference / np.where(slope != 0.0, slope, -np.inf)
    far_part = (along <= -2 * 1852.0) & (along >= -10 * 1852.0)
    slope_fit, intercept = np.polyfit(-along[far_part], path_z[far_part], 1)

    grid_m, bend = bends(-along, ddm_surface)
    structure = segment_bends(segments, grid_m, bend)

    converged = {}
    if check:
        if wide and all(math.isfinite(v) for v in sector):  # the check's windows about the surface's own roots
            path, below, above = sector
            found = replace(image, path_angle_deg=path, half_sector_below_deg=below, half_sector_above_deg=above)
            windows = _windows(found, angle_deg)
            receivers = np.vstack([points[subset], _far_receivers(windows.ravel())])
        converged = _convergence(
            model, heights, cell_m, receivers, subset, along, n_path, windows, scale, ddm_sub, sector, method,
            visibility, zone_factor,
        )  # fmt: skip
    _SHADING_CACHE.clear()  # let the grids go
    u, w = grid.u_m, grid.w_m
    return SurfacePrediction(
        sector[0],
        sector[1],
        sector[2],
        along,
        ddm_surface,
        image.ddm_nominal,
        path_z,
        (float(intercept), float(slope_fit)),
        structure,
        grid_m,
        bend,
        converged,
        (u.size - 1) * (w.size - 1),
        (float(u[0]), float(u[-1]), float(w[0]), float(w[-1])),
        float(np.mean(~np.isfinite(grid.z_m))),
        method,
    )


def _convergence(
    model, heights, cell_m, receivers, subset, along, n_path, windows, scale, ddm_sub, sector, method, vis, zone_factor
):
    """Path angle, half-sectors and DDM beyond 1 NM again with the sampling doubled and the area doubled.

    Converged when every change is within the flat-plane tolerances of the checks: 0.002 deg
    for the angles, and 1 % of the half-sector DDM (0.000875) for the DDM. The far-field windows
    are taken at every other elevation; the grids cover the areas of the checked receivers only.
    """
    beyond = np.flatnonzero(along[subset] <= -1852.0)
    chosen = beyond[np.linspace(0, beyond.size - 1, min(_CHECK_PATH_POINTS, beyond.size)).astype(int)]
    far_index = n_path + np.arange(windows.size).reshape(windows.shape)[:, ::2].ravel()
    index = np.concatenate([chosen, far_index])
    base_far_sector = sector
    out = {}
    ok = True
    for name, refine, factor in (("sampling_doubled", 2.0, zone_factor), ("area_doubled", 1.0, 2.0 * zone_factor)):
        grid = _grid(model, heights, cell_m, receivers[index], refine, factor)  # the checked receivers' areas
        local = np.arange(index.size)
        again, other = _evaluate(model, grid, receivers, index, n_path, windows, scale, method, vis, local)
        angle_change = max(abs(a - b) for a, b in zip(other, base_far_sector))
        ddm_change = float(np.max(np.abs(again - ddm_sub[chosen]))) if chosen.size else 0.0
        found = all(math.isfinite(v) for v in (*other, *base_far_sector))
        out[name] = {
            "facets": (grid.u_m.size - 1) * (grid.w_m.size - 1),
            # None: a crossing fell outside the check's windows (the angles moved more than 0.06 theta)
            "path_angle_change_deg": abs(other[0] - sector[0]) if found else None,
            "half_sector_change_deg": max(abs(other[1] - sector[1]), abs(other[2] - sector[2])) if found else None,
            "ddm_change_max": ddm_change,
            "path_points_checked": int(chosen.size),
        }
        ok &= bool(found and angle_change <= ANGLE_TOLERANCE_DEG and ddm_change <= DDM_TOLERANCE)
    out["converged"] = ok
    out["tolerances"] = {"angle_deg": ANGLE_TOLERANCE_DEG, "ddm": DDM_TOLERANCE}
    return out
