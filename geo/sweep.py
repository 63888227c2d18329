"""Siting sweep: many candidate mast positions evaluated at once, with their own terrain.

Every candidate (side, setback, offset) gets its own reflecting plane fitted in its own zone,
slope-corrected heights and shifts, RDH, GPIP, path over the threshold, roughness margins, the
smallest clearance on the approach, grading volumes and the mast's clearance below the Annex 14
surfaces; then feasibility and a score.

It is vectorised across candidates. The DEM is sampled once onto a grid aligned with the runway
frame (one per side). A candidate's zone (the lowest antenna's exact first Fresnel zones for
receivers on the path, as in :func:`geo.terrain.fit_zone`) is taken row by row: in every grid
row of constant cross-runway distance it is one interval along the runway, found in closed form
from the ellipses' quadratics (the union of one sweep of receivers along the course is one
interval per row). The plane fit then needs only sums over intervals, which prefix sums along
each row give at once for all candidates; grading volumes visit the cells.

References
----------
.. [1] Bjorck, A., *Numerical Methods for Least Squares Problems*, SIAM, 1996, ch. 1 (normal
       equations of a linear least-squares fit).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from geo.arrays import antenna_heights_m, array_type
from geo.channels import wavelength_m
from geo.errors import SiteFileError
from geo.fresnel import exact_ellipses
from geo.roughness import CRITERIA
from geo.site import SiteSpec
from geo.surfaces import SurfaceSpec, mast_clearance
from geo.zones import RANGE_M, path_receivers

__all__ = ["SweepOptions", "SweepResult", "run_sweep", "candidate_grid", "best_site"]

_RECEIVERS = 48
_ITERATIONS = 12
_CHUNK = 48


@dataclass(frozen=True)
class SweepOptions:
    """What to sweep and how to judge it.

    Attributes
    ----------
    setbacks_m, offsets_m : tuple of float
        Candidate setbacks and offsets. [m]
    sides : tuple of str
        ``("left",)``, ``("right",)`` or both.
    rdh_band_m : tuple of float
        Feasible RDH band; default Annex 10 15 m +3 m. [m]
    rdh_target_m : float
        RDH the score prefers; default the site file's target, else 15.5 m. [m]
    roughness_criterion : str
        Criterion the zone must meet and the grading tolerance: ``"rayleigh"``, ``"fraunhofer"``
        or ``"iev"``.
    surfaces : SurfaceSpec or None
        ``None``: the site file's surfaces.
    """

    setbacks_m: tuple[float, ...]
    offsets_m: tuple[float, ...]
    sides: tuple[str, ...] = ("left", "right")
    rdh_band_m: tuple[float, float] = (15.0, 18.0)
    rdh_target_m: float | None = None
    roughness_criterion: str = "fraunhofer"
    surfaces: SurfaceSpec | None = None


@dataclass
class SweepResult:
    """Figures of every candidate, one array per figure (same order).

    Attributes
    ----------
    columns : dict of str to numpy.ndarray
        ``side``, ``setback_m``, ``offset_m``, ``rdh_m``, ``forward_slope_deg``, ``cut_m3``,
        ``fill_m3``, ``feasible``, ``score`` and more (see :func:`run_sweep`).
    reasons : list of str
        Why each infeasible candidate is infeasible ("" when feasible).
    best : int or None
        Index of the best feasible candidate.
    wavelength_m : float
    grid_spacing_m : float or None
        Spacing of the DEM grid; ``None`` on flat ground. [m]
    """

    columns: dict[str, np.ndarray]
    reasons: list[str]
    best: int | None
    wavelength_m: float
    grid_spacing_m: float | None

    def __len__(self) -> int:
        return len(self.reasons)


def candidate_grid(options: SweepOptions) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Every (sign, setback, offset) of the options; sign +1 right, -1 left."""
    sides = np.array([1.0 if s == "right" else -1.0 for s in options.sides])
    sign, setback, offset = np.meshgrid(
        sides, np.asarray(options.setbacks_m, float), np.asarray(options.offsets_m, float), indexing="ij"
    )
    return sign.ravel(), setback.ravel(), offset.ravel()


class _SideGrid:
    """DEM heights on a runway-frame grid for one side, with prefix sums along each row."""

    def __init__(
        self,
        dem,
        frame,
        sign: float,
        along0: float,
        along1: float,
        cross0: float,
        cross1: float,
        spacing: float,
        z_ref: float,
    ):
        sp = spacing
        self.sp, self.sign, self.z_ref = sp, sign, z_ref
        self.a0 = math.floor(along0 / sp) * sp
        self.c0 = math.floor(cross0 / sp) * sp
        ni = int(math.ceil((along1 - self.a0) / sp)) + 1
        nj = int(math.ceil((cross1 - self.c0) / sp)) + 1
        self.along = self.a0 + sp * np.arange(ni)
        self.cross = self.c0 + sp * np.arange(nj)
        ga, gc = np.meshgrid(self.along, self.cross)
        z = dem.sample_frame(frame, ga.ravel(), gc.ravel()).reshape(nj, ni) - z_ref
        self.z = z
        self.z32 = z.astype(np.float32)
        valid = np.isfinite(z)
        zf = np.where(valid, z, 0.0)
        a = (self.along - self.a0)[None, :] * valid
        zero = np.zeros((nj, 1))
        self.p_n = np.hstack([zero, np.cumsum(valid, axis=1)])
        self.p_missing = np.hstack([zero, np.cumsum(~valid, axis=1)])
        self.p_a = np.hstack([zero, np.cumsum(a, axis=1)])
        self.p_aa = np.hstack([zero, np.cumsum(a * (self.along - self.a0)[None, :], axis=1)])
        self.p_z = np.hstack([zero, np.cumsum(zf, axis=1)])
        self.p_zz = np.hstack([zero, np.cumsum(zf * zf, axis=1)])
        self.p_az = np.hstack([zero, np.cumsum(zf * (self.along - self.a0)[None, :], axis=1)])


def _receivers(setback, offset, angle_deg, gu, gw):
    """Receivers on the path at theta for every candidate, as :func:`geo.zones.path_receivers` (C, N, 3)."""
    before = np.geomspace(1.0, RANGE_M + 1.0, _RECEIVERS) - 1.0
    u = setback[:, None] + before[None, :]
    w = np.broadcast_to(offset[:, None], u.shape)
    z = math.tan(math.radians(angle_deg)) * np.hypot(u, w) - gu[:, None] * u - gw[:, None] * w
    return np.stack([u, w, z], axis=-1)


def _zone_rows(heights_low, setback, offset, sign, angle_deg, lam, gu, gw, grid: _SideGrid, count: int | None = None):
    """Per candidate and grid row near it: the along-index interval of the zone (lo > hi: empty).

    Returns
    -------
    rows, i_lo, i_hi : numpy.ndarray of int, shape (C, R)
    w_rows : numpy.ndarray, shape (C, R)
        ``w`` of each row for its candidate. [m]
    """
    if setback.size > _CHUNK:  # keep the (candidates x rows x receivers) arrays small enough for the cache
        parts = [
            _zone_rows(
                heights_low[k : k + _CHUNK],
                setback[k : k + _CHUNK],
                offset[k : k + _CHUNK],
                sign,
                angle_deg,
                lam,
                gu[k : k + _CHUNK],
                gw[k : k + _CHUNK],
                grid,
                count,
            )
            for k in range(0, setback.size, _CHUNK)
        ]
        width = max(p[0].shape[1] for p in parts)
        fills = (0, 1, 0, 0.0)
        return tuple(
            np.concatenate(
                [np.pad(p[m], ((0, 0), (0, width - p[m].shape[1])), constant_values=fills[m]) for p in parts]
            )
            for m in range(4)
        )
    c = setback.size
    receivers = _receivers(setback, offset, angle_deg, gu, gw)
    n = receivers.shape[1]
    ant = np.zeros((c, n, 3))
    ant[:, :, 2] = heights_low[:, None]
    centres, q = exact_ellipses(ant.reshape(-1, 3), receivers.reshape(-1, 3), lam)
    centres, q = centres.reshape(c, n, 2), q.reshape(c, n, 2, 2)
    # Rows whose w = offset - sign * cross lies within each candidate's ellipses.
    det = q[..., 0, 0] * q[..., 1, 1] - q[..., 0, 1] ** 2
    reach = np.sqrt(q[..., 0, 0] / det)
    w_lo = (centres[..., 1] - reach).min(axis=1)
    w_hi = (centres[..., 1] + reach).max(axis=1)
    cross_a, cross_b = sign * (offset - w_lo), sign * (offset - w_hi)
    j0 = np.floor((np.minimum(cross_a, cross_b) - grid.c0) / grid.sp).astype(np.int64)
    needed = int(math.ceil(np.max(w_hi - w_lo) / grid.sp)) + 2
    count = needed if count is None else max(count, needed)
    rows = j0[:, None] + np.arange(count)[None, :]
    outside = (rows < 0) | (rows >= grid.cross.size)
    rows = np.clip(rows, 0, grid.cross.size - 1)
    w_rows = offset[:, None] - sign * grid.cross[rows]
    # On the row w, ellipse (p - c)^T Q (p - c) <= 1 spans u = c_u - (q_uw/q_uu) dw +/- sqrt(g - b dw^2)
    # with g = 1/q_uu and b = det(Q)/q_uu^2 (dw = w - c_w); empty where g < b dw^2.
    # float32 here: near a zone's tips the half-length loses a few centimetres, far below a cell.
    f4 = np.float32
    alpha = (q[..., 0, 1] / q[..., 0, 0]).astype(f4)[:, None, :]
    beta = (det / q[..., 0, 0] ** 2).astype(f4)[:, None, :]
    gamma = (1.0 / q[..., 0, 0]).astype(f4)[:, None, :]
    dw = w_rows.astype(f4)[:, :, None] - centres[:, None, :, 1].astype(f4)  # (C, R, N)
    mid = centres[:, None, :, 0].astype(f4) - alpha * dw
    dw *= dw
    dw *= beta
    np.subtract(gamma, dw, out=dw)  # now the squared half-length, negative where the row misses
    missing = dw < 0.0
    np.sqrt(np.maximum(dw, f4(0.0), out=dw), out=dw)
    lo = np.where(missing, np.inf, mid - dw).min(axis=2).astype(np.float64)
    mid += dw
    mid[missing] = -np.inf
    hi = mid.max(axis=2).astype(np.float64)
    # along = setback - u; grid index i = (along - a0) / sp, cells whose centres are inside.
    i_lo = np.ceil((setback[:, None] - hi - grid.a0) / grid.sp - 1e-9)
    i_hi = np.floor((setback[:, None] - lo - grid.a0) / grid.sp + 1e-9)
    empty = ~np.isfinite(lo) | outside
    if np.any(~empty & ((i_lo < 0) | (i_hi > grid.along.size - 1))) or np.any(outside & np.isfinite(lo)):
        raise RuntimeError("a candidate's zone reaches beyond the sampled grid")  # a bug: the grid is sized for it
    i_lo = np.where(empty, 1, np.clip(i_lo, 0, grid.along.size)).astype(np.int64)
    i_hi = np.where(empty, 0, np.clip(i_hi, -1, grid.along.size - 1)).astype(np.int64)
    return rows, i_lo, i_hi, w_rows


def _interval_sums(p, rows, i_lo, i_hi):
    hi = np.maximum(i_hi + 1, i_lo)
    return p[rows, hi] - p[rows, i_lo]


def _fit(grid: _SideGrid, rows, i_lo, i_hi, w_rows, setback):
    """Plane z = a + b u + c w for every candidate from interval sums (normal equations [1]_)."""
    n_j = _interval_sums(grid.p_n, rows, i_lo, i_hi)
    miss = _interval_sums(grid.p_missing, rows, i_lo, i_hi).sum(axis=1)
    a_j = _interval_sums(grid.p_a, rows, i_lo, i_hi)
    aa_j = _interval_sums(grid.p_aa, rows, i_lo, i_hi)
    z_j = _interval_sums(grid.p_z, rows, i_lo, i_hi)
    zz_j = _interval_sums(grid.p_zz, rows, i_lo, i_hi)
    az_j = _interval_sums(grid.p_az, rows, i_lo, i_hi)
    s = (setback - grid.a0)[:, None]  # u = s - (along - a0)
    n = n_j.sum(1)
    su = (n_j * s - a_j).sum(1)
    suu = (n_j * s * s - 2 * s * a_j + aa_j).sum(1)
    sw = (n_j * w_rows).sum(1)
    sww = (n_j * w_rows**2).sum(1)
    suw = (w_rows * (n_j * s - a_j)).sum(1)
    sz = z_j.sum(1)
    suz = (s * z_j - az_j).sum(1)
    swz = (w_rows * z_j).sum(1)
    szz = zz_j.sum(1)
    m = np.stack([np.stack([n, su, sw], -1), np.stack([su, suu, suw], -1), np.stack([sw, suw, sww], -1)], -2)
    rhs = np.stack([sz, suz, swz], -1)
    good = n >= 3
    coef = np.full((setback.size, 3), np.nan)
    coef[good] = np.linalg.solve(m[good], rhs[good][..., None])[..., 0]
    a, b, c = coef.T
    rss = (
        szz
        - 2 * (a * sz + b * suz + c * swz)
        + a * a * n
        + 2 * a * b * su
        + 2 * a * c * sw
        + b * b * suu
        + 2 * b * c * suw
        + c * c * sww
    )
    rms = np.sqrt(np.maximum(rss, 0.0) / np.maximum(n, 1))
    return a, b, c, rms, n, miss


def _grading(grid: _SideGrid, row_index, i_lo, i_hi, w_rows, setback, a, b, c, tol):
    """Cut and fill volumes and worked area to bring every zone cell within ``tol`` of its plane.

    Residuals in float32: heights are relative to the threshold, so float32 keeps well under a millimetre.
    """
    cut = np.zeros(setback.size)
    fill = np.zeros(setback.size)
    area = np.zeros(setback.size)
    cell = grid.sp * grid.sp
    for k in range(setback.size):
        lengths = np.maximum(i_hi[k] - i_lo[k] + 1, 0)
        total = int(lengths.sum())
        if total == 0 or not np.isfinite(a[k]):
            continue
        rows = np.repeat(row_index[k], lengths)
        cols = np.repeat(i_lo[k] - np.cumsum(lengths) + lengths, lengths) + np.arange(total)
        plane = (a[k] + b[k] * (setback[k] - grid.along)).astype(np.float32)  # along each row, before w
        r = grid.z32[rows, cols] - plane[cols] - np.float32(c[k]) * np.repeat(w_rows[k], lengths).astype(np.float32)
        r = r[np.isfinite(r)]
        t = np.float32(tol[k])
        cut[k] = float(np.maximum(r - t, 0.0).sum()) * cell
        fill[k] = float(np.maximum(-r - t, 0.0).sum()) * cell
        area[k] = np.count_nonzero(np.abs(r) > t) * cell
    return cut, fill, area


def run_sweep(spec: SiteSpec, options: SweepOptions, progress=None) -> SweepResult:
    """Evaluate every candidate of ``options`` for the runway of ``spec``.

    Parameters
    ----------
    spec : SiteSpec
        The site (its [mast] table is ignored; its terrain, channel, array and angle are used).
    options : SweepOptions
    progress : callable, optional
        Called as ``progress(done, total)`` after each step of the terrain work (the command line
        draws a progress bar with it; the library prints nothing).

    Returns
    -------
    SweepResult
    """
    from geo.study import channel_of, runway_of

    channel = channel_of(spec)
    lam = wavelength_m(channel.glide_path_mhz)
    runway = runway_of(spec)
    frame = runway.frame
    theta = spec.angle_deg
    tan = math.tan(math.radians(theta))
    thr = spec.threshold.elevation_m
    sign, setback, offset = candidate_grid(options)
    if np.any(offset <= runway.width_m / 2.0):
        raise SiteFileError("--offset", f"offsets must exceed the runway half-width {runway.width_m / 2:g} m")
    if np.any((setback <= 0.0) | (setback >= runway.length_m)):
        raise SiteFileError("--setback", f"setbacks must lie between 0 and the runway length {runway.length_m:.0f} m")
    kind = array_type(spec.array)
    c = setback.size
    gu = np.zeros(c)
    gw = np.zeros(c)
    plane_at_mast = np.full(c, spec.mast.base_elevation_m if spec.mast.base_elevation_m is not None else thr)
    rms = np.zeros(c)
    samples = np.zeros(c)
    missing = np.zeros(c)
    ground = plane_at_mast.copy()
    cut, fill, area = np.zeros(c), np.zeros(c), np.zeros(c)
    min_clearance = np.full(c, np.nan)
    spacing = None
    heights = np.array([antenna_heights_m(spec.array, lam, theta)] * c)
    criterion = dict((name, k) for name, k, _ in CRITERIA)[options.roughness_criterion]
    if spec.terrain is not None:
        from geo.dem import Dem
        from geo.profile import approach_profile
        from geo.zones import antenna_zone

        t = spec.terrain
        with Dem.open(t.dem_path, t.vertical_offset_m, t.vertical_unit) as dem:
            spacing = min(dem.cell_size_m(frame), 5.0)
            # Extent of the zones: exact zones of the extreme candidates on flat ground, with room for slopes.
            u_max, w_lo, w_hi = 0.0, 0.0, 0.0
            for s in (setback.min(), setback.max()):
                for o in (offset.min(), offset.max()):
                    z = antenna_zone(heights[0, 0], 0.0, path_receivers(s, o, theta, _RECEIVERS, fractions=(1.0,)), lam)
                    u0, w0, u1, w1 = z.polygon.bounds
                    u_max, w_lo, w_hi = max(u_max, u1), min(w_lo, w0), max(w_hi, w1)
            w_lo0, w_hi0 = w_lo, w_hi
            u_max, w_lo, w_hi = 1.6 * u_max, 1.6 * w_lo - 10.0, 1.6 * w_hi + 10.0
            grids = {}
            for sg in np.unique(sign):
                sel = sign == sg
                cross_a = sg * (offset[sel].min() - w_hi)
                cross_b = sg * (offset[sel].max() - w_lo)
                grids[sg] = _SideGrid(
                    dem,
                    frame,
                    sg,
                    setback[sel].min() - u_max,
                    setback[sel].max() + spacing,
                    min(cross_a, cross_b),
                    max(cross_a, cross_b),
                    spacing,
                    thr,
                )
            ground = dem.sample_frame(frame, setback, sign * offset)
            prof = approach_profile(
                dem, frame, runway.length_m, 0.0, 0.0, 0.0, theta, min(dem.cell_size_m(frame), 10.0)
            )
        approach = prof.along_m <= 0.0
        worst = np.nanmin(-prof.along_m[approach] * tan - prof.terrain_m[approach])
        steps, done = len(grids) * (_ITERATIONS + 1), 0
        for sg, grid in grids.items():
            sel = np.flatnonzero(sign == sg)
            # Row slots per candidate: the widest flat-ground zone, with room for the slopes to widen it.
            count = int(math.ceil(1.15 * (w_hi0 - w_lo0) / spacing)) + 2
            rows = np.zeros((sel.size, count), dtype=np.int64)
            i_lo = np.ones((sel.size, count), dtype=np.int64)
            i_hi = np.zeros((sel.size, count), dtype=np.int64)
            w_rows = np.zeros((sel.size, count))
            active = np.arange(sel.size)
            for _ in range(_ITERATIONS):  # heights -> zone -> plane, as geo.terrain.analyse_terrain
                idx = sel[active]
                low = np.nan_to_num(heights[idx, 0], nan=float(np.nanmean(heights[:, 0])))
                zone = _zone_rows(low, setback[idx], offset[idx], sg, theta, lam, gu[idx], gw[idx], grid, count)
                if zone[0].shape[1] > count:  # a zone outgrew the slots: widen them for everyone
                    extra = zone[0].shape[1] - count
                    rows, i_lo, i_hi, w_rows = (
                        np.pad(a, ((0, 0), (0, extra)), constant_values=v)
                        for a, v in ((rows, 0), (i_lo, 1), (i_hi, 0), (w_rows, 0.0))
                    )
                    count = zone[0].shape[1]
                rows[active], i_lo[active], i_hi[active], w_rows[active] = zone
                a, b, cc, r, n, miss = _fit(grid, *zone, setback[idx])
                gu[idx], gw[idx] = np.nan_to_num(b), np.nan_to_num(cc)
                plane_at_mast[idx], rms[idx], samples[idx], missing[idx] = a + thr, r, n, miss
                slope = np.degrees(np.arctan(gu[idx]))
                new = np.array(
                    [
                        antenna_heights_m(spec.array, lam, theta, sl)
                        if sl < theta - 0.5
                        else [np.nan] * len(kind.roles)
                        for sl in slope
                    ]
                )
                moved = np.nan_to_num(np.abs(new - heights[idx]).max(axis=1), nan=0.0)
                heights[idx] = new
                active = active[moved >= 1e-3]
                done += 1
                _report(progress, done, steps)
                if active.size == 0:
                    break
            # Grading in each candidate's last zone, against its fitted plane.
            a, b, cc = plane_at_mast[sel] - thr, gu[sel], gw[sel]
            psi = theta - np.degrees(np.arctan(gu[sel]))
            tol = lam / (criterion * np.sin(np.radians(psi)))
            cut[sel], fill[sel], area[sel] = _grading(grid, rows, i_lo, i_hi, w_rows, setback[sel], a, b, cc, tol)
            done = (done // (_ITERATIONS + 1) + 1) * (_ITERATIONS + 1)  # this side's steps are all done
            _report(progress, done, steps)
        rpi = plane_at_mast + gw * offset
        # Clearance at x: rpi + (s - x) tan(theta) - T(x); its minimum over the approach.
        min_clearance = rpi + setback * tan + worst
    else:
        rpi = plane_at_mast.copy()
    shifts_top = (heights[:, -1] ** 2 - heights[:, 0] ** 2) / (2.0 * offset)
    rdh = rpi + setback * tan - thr
    over = rpi + tan * np.hypot(setback, offset) - thr
    gpip = rdh / (tan + runway.gradient)
    forward = np.degrees(np.arctan(gu))
    grazing = theta - forward
    margins = {name: lam / (k * np.sin(np.radians(grazing))) - rms for name, k, _ in CRITERIA}
    surf = options.surfaces or spec.surfaces
    clearance = mast_clearance(
        offset - shifts_top,
        plane_at_mast + heights[:, -1] + surf.mast_allowance_m,
        thr + runway.gradient * setback,
        surf,
    )
    required = spec.terrain.min_clearance_m if spec.terrain is not None else 0.0
    low, high = options.rdh_band_m
    reasons = []
    for k in range(c):
        why = []
        if missing[k] > 0:
            why.append("zone off the DEM")
        if not np.all(np.isfinite(heights[k])):
            why.append("ground too steep for an image array")
        if not low <= rdh[k] <= high:
            why.append(f"RDH {rdh[k]:.2f} m outside {low:g}-{high:g} m")
        if margins[options.roughness_criterion][k] < 0:
            why.append(f"rough by the {_CRITERION_NAMES[options.roughness_criterion]} criterion")
        if clearance.penetrates[k]:
            why.append("mast penetrates an Annex 14 surface")
        if np.isfinite(min_clearance[k]) and min_clearance[k] < required:
            why.append("approach terrain too close to the path")
        if not 0.0 <= gpip[k] <= runway.length_m:
            why.append("GPIP off the runway")
        reasons.append("; ".join(why))
    feasible = np.array([r == "" for r in reasons])
    target = options.rdh_target_m if options.rdh_target_m is not None else (spec.target_rdh_m or 15.5)
    score = _score(
        feasible,
        rdh,
        target,
        (high - low) / 2.0,
        cut + fill,
        margins[options.roughness_criterion],
        lam / (criterion * np.sin(np.radians(grazing))),
    )
    best = int(np.nanargmax(np.where(feasible, score, -np.inf))) if feasible.any() else None
    columns = {
        "side": np.where(sign > 0, "right", "left"),
        "setback_m": setback,
        "offset_m": offset,
        "rdh_m": rdh,
        "path_height_over_threshold_m": over,
        "gpip_along_m": gpip,
        "forward_slope_deg": forward,
        "lateral_slope_deg": np.degrees(np.arctan(gw)),
        "plane_elevation_at_mast_m": plane_at_mast,
        "ground_at_mast_m": ground,
        "rpi_elevation_m": rpi,
        "lower_height_m": heights[:, 0],
        "upper_height_m": heights[:, -1],
        "upper_shift_m": shifts_top,
        "rms_residual_m": rms,
        "samples": samples,
        "rayleigh_margin_m": margins["rayleigh"],
        "fraunhofer_margin_m": margins["fraunhofer"],
        "iev_margin_m": margins["iev"],
        "cut_m3": cut,
        "fill_m3": fill,
        "graded_area_m2": area,
        "mast_top_height_m": clearance.top_height_m,
        "inner_transitional_margin_m": clearance.inner_transitional_margin_m,
        "transitional_margin_m": clearance.transitional_margin_m,
        "in_strip": clearance.in_strip,
        "min_clearance_m": min_clearance,
        "feasible": feasible,
        "score": score,
    }
    return SweepResult(columns, reasons, best, lam, spacing)


def _score(feasible, rdh, target, half_band, volume, margin, limit):
    """0-100 for feasible candidates, NaN otherwise (see README: how candidates are ranked).

    40 points for the RDH (full at the target, none at the band's half-width from it), 40 for the
    grading (full for the least volume among the feasible, none for the most) and 20 for the
    roughness margin (its share of the limit).
    """
    score = np.full(rdh.size, np.nan)
    if not feasible.any():
        return score
    v = volume[feasible]
    spread = v.max() - v.min()
    rdh_part = np.clip(1.0 - np.abs(rdh - target) / half_band, 0.0, 1.0)
    volume_part = 1.0 - (volume - v.min()) / spread if spread > 0 else np.ones(rdh.size)
    margin_part = np.clip(margin / limit, 0.0, 1.0)
    score[feasible] = (40.0 * rdh_part + 40.0 * volume_part + 20.0 * margin_part)[feasible]
    return score


def best_site(spec: SiteSpec, sweep: SweepResult) -> SiteSpec | None:
    """The site file's inputs with the mast moved to the best candidate (for a full study)."""
    import dataclasses

    from geo.site import MastSpec

    if sweep.best is None:
        return None
    c, k = sweep.columns, sweep.best
    mast = MastSpec(
        side=str(c["side"][k]),
        offset_m=float(c["offset_m"][k]),
        setback_m=float(c["setback_m"][k]),
        base_elevation_m=spec.mast.base_elevation_m if spec.terrain is None else None,
    )
    return dataclasses.replace(spec, mast=mast)


#: The criteria as a reason names them.
_CRITERION_NAMES = {"rayleigh": "Rayleigh", "fraunhofer": "Fraunhofer", "iev": "IEV"}


def _report(progress, done: int, total: int) -> None:
    if progress is not None:
        progress(done, total)
