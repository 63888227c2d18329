"""Siting sweep: many candidate mast positions evaluated at once, with their own terrain.

Every candidate (side, setback, offset) gets its own reflecting plane fitted in its own zone,
slope-corrected heights and shifts, RDH, GPIP, path over the threshold, roughness margins, the
smallest clearance on the approach, grading volumes and the mast's clearance below the Annex 14
surfaces; then feasibility and a score.

It is vectorised across candidates. The DEM is sampled onto the runway-frame grid of
:mod:`geo.ground.zone_grid` (one per side, grown when a zone reaches past it): the same points a single
study samples. A candidate's zone is taken row by row there (:func:`geo.ground.zone_grid.zone_rows`, the
study's rule), so the plane fit needs only sums over intervals, which prefix sums along each row
give at once for all candidates. The forward slope is solved with the heights by
:func:`geo.ground.plane_solve.solve_forward_slope`, the study's solve, so a candidate and the study at
its position find the same plane. Grading volumes visit the cells.

The steps of :func:`run_sweep`: check the candidates, solve every candidate's plane on the DEM
grids (or take level ground), grade, clear the approach, work out the path figures, the reasons
for infeasibility, the score and the columns.

References
----------
.. [1] Bjorck, A., *Numerical Methods for Least Squares Problems*, SIAM, 1996, ch. 1 (normal
       equations of a linear least-squares fit).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from geo.airfield.surfaces import SurfaceSpec, mast_clearance
from geo.errors import SiteFileError
from geo.ground.plane_solve import heights_for_slopes, solve_forward_slope
from geo.ground.roughness import CRITERIA
from geo.ground.zone_grid import FrameGrid, ZoneRows, zone_rows
from geo.radio.arrays import antenna_heights_m, array_type, path_setting_antennas
from geo.site.channels import wavelength_m
from geo.site.site_file import SiteSpec
from geo.study.sweep_choice import CRITERION_NAMES, clearance_reasons
from geo.units import format_length

__all__ = ["SweepOptions", "SweepResult", "run_sweep", "candidate_grid", "best_site", "candidate_site"]


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
    paired : bool
        ``True``: ``sides``, ``setbacks_m`` and ``offsets_m`` have one entry per candidate (as the
        solved setbacks of :func:`geo.study.solved_setbacks.solve_setbacks` give them) instead of a grid.
    surface_top : int
        How many of the best feasible candidates (by rank) the surface prediction re-judges, when the
        site has a DEM and ``prediction.surface`` is on (:func:`geo.study.sweep_surface.rejudge_over_surface`);
        0 for none.
    """

    setbacks_m: tuple[float, ...]
    offsets_m: tuple[float, ...]
    sides: tuple[str, ...] = ("left", "right")
    rdh_band_m: tuple[float, float] = (15.0, 18.0)
    rdh_target_m: float | None = None
    roughness_criterion: str = "fraunhofer"
    surfaces: SurfaceSpec | None = None
    paired: bool = False
    surface_top: int = 10


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
    if options.paired:
        sign = np.array([1.0 if s == "right" else -1.0 for s in options.sides])
        return sign, np.asarray(options.setbacks_m, float), np.asarray(options.offsets_m, float)
    sides = np.array([1.0 if s == "right" else -1.0 for s in options.sides])
    sign, setback, offset = np.meshgrid(
        sides, np.asarray(options.setbacks_m, float), np.asarray(options.offsets_m, float), indexing="ij"
    )
    return sign.ravel(), setback.ravel(), offset.ravel()


class _SideGrid:
    """DEM heights on the runway-frame grid of one side, with prefix sums along each row.

    Heights are relative to ``z_ref`` (the threshold) so that float32 keeps well under a millimetre.
    """

    def __init__(self, grid: FrameGrid):
        self.grid = grid
        self.reads = -1

    def cover(self, zone: ZoneRows) -> None:
        """Make the grid hold every cell of the zones; rebuild the sums after a new read."""
        self.grid.cover(*zone.bounds())
        if self.grid.reads != self.reads:
            self.reads = self.grid.reads
            self._sums()

    def _sums(self) -> None:
        g = self.grid
        self.sp = g.sp
        self.along = g.along_m
        self.a0 = float(self.along[0])
        z = g.z
        nj = z.shape[0]
        self.z = z
        self.z32 = z.astype(np.float32)
        valid = np.isfinite(z)
        zf = np.where(valid, z, 0.0)
        rel = (self.along - self.a0)[None, :]
        a = rel * valid
        zero = np.zeros((nj, 1))
        self.p_n = np.hstack([zero, np.cumsum(valid, axis=1)])
        self.p_missing = np.hstack([zero, np.cumsum(~valid, axis=1)])
        self.p_a = np.hstack([zero, np.cumsum(a, axis=1)])
        self.p_aa = np.hstack([zero, np.cumsum(a * rel, axis=1)])
        self.p_z = np.hstack([zero, np.cumsum(zf, axis=1)])
        self.p_zz = np.hstack([zero, np.cumsum(zf * zf, axis=1)])
        self.p_az = np.hstack([zero, np.cumsum(zf * rel, axis=1)])

    def local(self, zone: ZoneRows):
        """The zone's rows and column intervals as indices into this grid (empty rows: 0, -1).

        Cells past the grid (see :data:`geo.ground.zone_grid.MAX_CELLS`) are left out and counted in
        :attr:`past`, per candidate.
        """
        nj, ni = self.z.shape
        rows = zone.rows - self.grid.j0
        i_lo = np.maximum(zone.i_lo - self.grid.i0, 0)
        i_hi = np.minimum(zone.i_hi - self.grid.i0, ni - 1)
        inside = (zone.lengths > 0) & (rows >= 0) & (rows < nj) & (i_hi >= i_lo)
        self.past = (zone.lengths - np.where(inside, i_hi - i_lo + 1, 0)).sum(axis=1)
        rows = np.where(inside, rows, 0)
        i_lo = np.where(inside, i_lo, 0)
        i_hi = np.where(inside, i_hi, -1)
        return rows, i_lo, i_hi, zone.w_m


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


class _SweepPlanes:
    """``g`` of every candidate for :func:`geo.ground.plane_solve.solve_forward_slope`.

    The plane fitted by prefix sums in the zone of the heights for a trial slope (cells off the DEM
    left out, counted).
    """

    def __init__(self, grids: dict, sign, setback, offset, array: str, lam: float, theta: float, on_fit=None):
        self.grids, self.sign, self.setback, self.offset = grids, sign, setback, offset
        self.array, self.lam, self.theta = array, lam, theta
        self.on_fit, self.fits = on_fit, 0

    def fit(self, slope_deg, lateral_gradient, index):
        """Per side: (candidates, grid, local zone rows, (a, b, c, rms, n, missing))."""
        self.fits += 1
        if self.on_fit is not None:
            self.on_fit(self.fits)
        low = heights_for_slopes(self.array, self.lam, self.theta, slope_deg)[
            :, list(path_setting_antennas(self.array))
        ]
        gu = np.tan(np.radians(slope_deg))
        out = []
        for sg, grid in self.grids.items():
            pick = self.sign[index] == sg
            if not pick.any():
                continue
            idx = index[pick]
            zone = zone_rows(
                low[pick],
                self.setback[idx],
                self.offset[idx],
                sg,
                self.theta,
                self.lam,
                gu[pick],
                lateral_gradient[pick],
                grid.grid.sp,
            )
            grid.cover(zone)
            rows = grid.local(zone)
            a, b, c, rms, n, miss = _fit(grid, *rows, self.setback[idx])
            out.append((pick, grid, rows, (a, b, c, rms, n, miss + grid.past)))
        return out

    def __call__(self, slope_deg, lateral_gradient, index):
        forward = np.full(index.size, np.nan)
        lateral = np.full(index.size, np.nan)
        for pick, _grid, _rows, (_a, b, c, *_rest) in self.fit(slope_deg, lateral_gradient, index):
            forward[pick], lateral[pick] = b, c
        return forward, lateral


@dataclass
class _Ground:
    """Each candidate's reflecting plane and what rests on it (arrays of shape (C,))."""

    gu: np.ndarray
    gw: np.ndarray
    plane_at_mast: np.ndarray
    rms: np.ndarray
    samples: np.ndarray
    missing: np.ndarray
    ground: np.ndarray
    heights: np.ndarray
    cut: np.ndarray
    fill: np.ndarray
    area: np.ndarray
    min_clearance: np.ndarray
    rpi: np.ndarray
    spacing: float | None = None


def _checked_candidates(options: SweepOptions, runway, units: str) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The candidates of the options, refused when one is on the runway or past its ends."""
    sign, setback, offset = candidate_grid(options)
    if np.any(offset <= runway.width_m / 2.0):
        raise SiteFileError(
            "--offset", f"offsets must exceed the runway half-width {format_length(runway.width_m / 2, units, 1)}"
        )
    if np.any((setback <= 0.0) | (setback >= runway.length_m)):
        raise SiteFileError(
            "--setback", f"setbacks must lie between 0 and the runway length {format_length(runway.length_m, units, 1)}"
        )
    return sign, setback, offset


def _level_ground(spec: SiteSpec, setback, lam: float, theta: float) -> _Ground:
    """Without a DEM: a level plane at the site file's mast ground (else the threshold)."""
    c = setback.size
    thr = spec.threshold.elevation_m
    plane = np.full(c, spec.mast.base_elevation_m if spec.mast.base_elevation_m is not None else thr)
    zeros = np.zeros(c)
    heights = np.array([antenna_heights_m(spec.array, lam, theta)] * c)
    return _Ground(
        zeros.copy(), zeros.copy(), plane, zeros.copy(), np.zeros(c, dtype=np.int64), zeros.copy(), plane.copy(),
        heights, zeros.copy(), zeros.copy(), zeros.copy(), np.full(c, np.nan), plane.copy(),
    )  # fmt: skip


def _solve_planes(planes: _SweepPlanes, spec: SiteSpec, lam: float, theta: float, c: int):
    """Every candidate's plane by the study's solve, then the zone and fit at the end it chose."""
    solve = solve_forward_slope(planes, spec.array, lam, theta, c)
    slope = np.where(np.isfinite(solve.slope_deg), solve.slope_deg, 0.0)
    lateral = np.where(np.isfinite(solve.lateral_gradient), solve.lateral_gradient, 0.0)
    n_roles = len(array_type(spec.array).roles)
    heights = np.full((c, n_roles), np.nan)
    served = solve.served & np.isfinite(solve.plane_slope_deg) & (solve.plane_slope_deg < theta - 0.5)
    heights[served] = heights_for_slopes(spec.array, lam, theta, solve.plane_slope_deg[served])
    return solve, planes.fit(slope, lateral, np.arange(c)), heights


def _ground_on_dem(
    spec: SiteSpec, runway, sign, setback, offset, lam: float, theta: float, criterion: float, progress=None
) -> _Ground:
    """Planes, heights, grading and approach clearance of every candidate on the site's DEM.

    ``progress(done, total)`` is called after each evaluation of the planes (counted against
    :data:`_EXPECTED_EVALUATIONS`, a typical count) and after each side's grading.
    """
    from geo.ground.dem import Dem
    from geo.ground.profile import approach_profile

    frame = runway.frame
    thr = spec.threshold.elevation_m
    tan = math.tan(math.radians(theta))
    c = setback.size
    t = spec.terrain
    with Dem.open(t) as dem:
        spacing = min(dem.cell_size_m(frame), 5.0)
        grids = {sg: _SideGrid(FrameGrid(dem, frame, spacing, thr)) for sg in np.unique(sign)}
        total = _EXPECTED_EVALUATIONS + len(grids)
        planes = _SweepPlanes(
            grids, sign, setback, offset, spec.array, lam, theta,
            lambda n: _report(progress, min(n, _EXPECTED_EVALUATIONS - 1), total),
        )  # fmt: skip
        _solve, fits, heights = _solve_planes(planes, spec, lam, theta, c)
        _report(progress, _EXPECTED_EVALUATIONS, total)
        ground = dem.sample_frame(frame, setback, sign * offset)
        prof = approach_profile(dem, frame, runway.length_m, 0.0, 0.0, 0.0, theta, min(dem.cell_size_m(frame), 10.0))
    gu, gw, plane_at_mast, rms = np.zeros(c), np.zeros(c), np.full(c, np.nan), np.full(c, np.nan)
    samples, missing = np.zeros(c, dtype=np.int64), np.zeros(c)
    cut, fill, area = np.zeros(c), np.zeros(c), np.zeros(c)
    for done, (pick, grid, rows, (a, b, cc, r, n, miss)) in enumerate(fits, start=_EXPECTED_EVALUATIONS + 1):
        sel = np.flatnonzero(pick)
        gu[sel], gw[sel] = np.nan_to_num(b), np.nan_to_num(cc)
        plane_at_mast[sel], rms[sel], samples[sel], missing[sel] = a + thr, r, n, miss
        cut[sel], fill[sel], area[sel] = _grade(grid, rows, setback[sel], a, gu[sel], gw[sel], theta, lam, criterion)
        _report(progress, done, total)
    rpi = plane_at_mast + gw * offset
    # Clearance at x: rpi + (s - x) tan(theta) - T(x); its minimum over the approach.
    approach = prof.along_m <= 0.0
    worst = np.nanmin(-prof.along_m[approach] * tan - prof.terrain_m[approach])
    min_clearance = rpi + setback * tan + worst
    return _Ground(
        gu, gw, plane_at_mast, rms, samples, missing, ground, heights, cut, fill, area, min_clearance, rpi, spacing
    )


def _grade(grid: _SideGrid, rows, setback, a, gu, gw, theta: float, lam: float, criterion: float):
    """Cut, fill and worked area of each candidate's zone against its plane, within the criterion's tolerance."""
    psi = theta - np.degrees(np.arctan(gu))
    tol = lam / (criterion * np.sin(np.radians(psi)))
    return _grading(grid, *rows, setback, a, gu, gw, tol)


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
    from geo.study.site_study import channel_of, runway_of

    channel = channel_of(spec)
    lam = wavelength_m(channel.glide_path_mhz)
    runway = runway_of(spec)
    theta = spec.angle_deg
    sign, setback, offset = _checked_candidates(options, runway, spec.units)
    c = setback.size
    criterion = dict((name, k) for name, k, _ in CRITERIA)[options.roughness_criterion]
    if spec.terrain is not None:
        ground = _ground_on_dem(spec, runway, sign, setback, offset, lam, theta, criterion, progress)
    else:
        ground = _level_ground(spec, setback, lam, theta)
    figures = _path_figures(spec, options, runway, ground, setback, offset, lam, theta)
    reasons = _feasibility_reasons(
        spec, options, runway, c, ground.missing, ground.heights, figures["rdh"], figures["margins"],
        figures["clearance"], ground.min_clearance, figures["gpip"],
    )  # fmt: skip
    feasible = np.array([r == "" for r in reasons])
    low, high = options.rdh_band_m
    target = options.rdh_target_m if options.rdh_target_m is not None else (spec.target_rdh_m or 15.5)
    score = _score(
        feasible,
        figures["rdh"],
        target,
        (high - low) / 2.0,
        ground.cut + ground.fill,
        figures["margins"][options.roughness_criterion],
        lam / (criterion * np.sin(np.radians(figures["grazing"]))),
    )
    best = int(np.nanargmax(np.where(feasible, score, -np.inf))) if feasible.any() else None
    columns = _columns(sign, setback, offset, ground, figures, feasible, score)
    return SweepResult(columns, reasons, best, lam, ground.spacing)


def _path_figures(spec: SiteSpec, options: SweepOptions, runway, ground: _Ground, setback, offset, lam, theta) -> dict:
    """RDH, path over the threshold, GPIP, grazing angle, roughness margins and mast clearance."""
    tan = math.tan(math.radians(theta))
    thr = spec.threshold.elevation_m
    heights, rpi = ground.heights, ground.rpi
    shifts_top = (heights[:, -1] ** 2 - heights[:, 0] ** 2) / (2.0 * offset)
    rdh = rpi + setback * tan - thr
    forward = np.degrees(np.arctan(ground.gu))
    grazing = theta - forward
    surf = options.surfaces or spec.surfaces
    return {
        "shifts_top": shifts_top,
        "rdh": rdh,
        "over": rpi + tan * np.hypot(setback, offset) - thr,
        "gpip": rdh / (tan + runway.gradient),
        "forward": forward,
        "grazing": grazing,
        "margins": {name: lam / (k * np.sin(np.radians(grazing))) - ground.rms for name, k, _ in CRITERIA},
        "clearance": mast_clearance(
            offset - shifts_top,
            ground.plane_at_mast + heights[:, -1] + surf.mast_allowance_m,
            thr + runway.gradient * setback,
            surf,
            setback_m=setback,
            runway_length_m=runway.length_m,
            runway_gradient=runway.gradient,
        ),
    }


def _feasibility_reasons(
    spec, options, runway, c, missing, heights, rdh, margins, clearance, min_clearance, gpip
) -> list[str]:
    """Why each candidate is infeasible ("" when it is feasible)."""
    required = spec.terrain.min_clearance_m if spec.terrain is not None else 0.0
    units = spec.units
    surf = options.surfaces or spec.surfaces
    low, high = options.rdh_band_m
    reasons = []
    for k in range(c):
        why = []
        if missing[k] > 0:
            why.append("zone off the DEM")
        if not np.all(np.isfinite(heights[k])):
            why.append("ground too steep for an image array")
        if not low <= rdh[k] <= high:
            band = f"{format_length(low, units)} to {format_length(high, units)}"
            why.append(f"RDH {format_length(rdh[k], units)} outside {band}")
        if margins[options.roughness_criterion][k] < 0:
            why.append(
                f"rough by the {CRITERION_NAMES[options.roughness_criterion]} criterion "
                f"(margin {format_length(margins[options.roughness_criterion][k], units, 3, signed=True)})"
            )
        why += clearance_reasons(clearance, k, surf, units)
        if np.isfinite(min_clearance[k]) and min_clearance[k] < required:
            why.append(
                f"approach terrain too close to the path ({format_length(min_clearance[k], units)} "
                f"against {format_length(required, units)} required)"
            )
        if not 0.0 <= gpip[k] <= runway.length_m:
            why.append(f"GPIP off the runway ({format_length(gpip[k], units, 1)} from the threshold)")
        reasons.append("; ".join(why))
    return reasons


def _columns(sign, setback, offset, ground: _Ground, figures: dict, feasible, score) -> dict[str, np.ndarray]:
    """The columns of ``sweep.csv``, in their order."""
    clearance = figures["clearance"]
    margins = figures["margins"]
    return {
        "side": np.where(sign > 0, "right", "left"),
        "setback_m": setback,
        "offset_m": offset,
        "rdh_m": figures["rdh"],
        "path_height_over_threshold_m": figures["over"],
        "gpip_along_m": figures["gpip"],
        "forward_slope_deg": figures["forward"],
        "lateral_slope_deg": np.degrees(np.arctan(ground.gw)),
        "plane_elevation_at_mast_m": ground.plane_at_mast,
        "ground_at_mast_m": ground.ground,
        "rpi_elevation_m": ground.rpi,
        "lower_height_m": ground.heights[:, 0],
        "upper_height_m": ground.heights[:, -1],
        "upper_shift_m": figures["shifts_top"],
        "rms_residual_m": ground.rms,
        "samples": ground.samples,
        "rayleigh_margin_m": margins["rayleigh"],
        "fraunhofer_margin_m": margins["fraunhofer"],
        "iev_margin_m": margins["iev"],
        "cut_m3": ground.cut,
        "fill_m3": ground.fill,
        "graded_area_m2": ground.area,
        "mast_top_height_m": clearance.top_height_m,
        "inner_transitional_margin_m": clearance.inner_transitional_margin_m,
        "transitional_margin_m": clearance.transitional_margin_m,
        "in_strip": clearance.in_strip,
        "min_clearance_m": ground.min_clearance,
        "feasible": feasible,
        "score": score,
    }


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
    """The site file's inputs with the mast moved to the best candidate (for a full study).

    The study gets the candidate's setback as given, without the site file's target RDH: the sweep
    has weighed the target in its score, and the study at the candidate's position finds the same
    plane and RDH as its sweep row (the same grid, zone rule and solve).
    """
    if sweep.best is None:
        return None
    return candidate_site(spec, sweep, sweep.best)


def candidate_site(spec: SiteSpec, sweep: SweepResult, k: int) -> SiteSpec:
    """The site file's inputs with the mast moved to candidate ``k`` (as :func:`best_site`)."""
    import dataclasses

    from geo.site.site_file import MastSpec

    c = sweep.columns
    mast = MastSpec(
        side=str(c["side"][k]),
        offset_m=float(c["offset_m"][k]),
        setback_m=float(c["setback_m"][k]),
        base_elevation_m=spec.mast.base_elevation_m if spec.terrain is None else None,
    )
    return dataclasses.replace(spec, mast=mast, target_rdh_m=None)


#: Plane evaluations a sweep's solve typically takes (median 11, seen up to 62 on real ground), for
#: the progress bar's estimate only.
_EXPECTED_EVALUATIONS = 16


def _report(progress, done: int, total: int) -> None:
    if progress is not None:
        progress(done, total)
