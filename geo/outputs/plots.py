"""Plots of a study (matplotlib, Agg backend; imported only when plots are written)."""

from __future__ import annotations

import re
from functools import cache
from pathlib import Path

import numpy as np

from geo.study.site_study import StudyResult
from geo.units import M_PER_FT

__all__ = ["plot_profile", "plot_residuals", "plot_ddm", "plot_path", "plot_surface_structure", "write_plots"]


#: Pixels per inch of the PNG files.
_DPI = 100


def _figure(width_in: float, height_in: float, rows: int = 1):
    """A figure on the Agg canvas, without pyplot (faster to import, no global state)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=(width_in, height_in), dpi=_DPI)
    FigureCanvasAgg(fig)
    axes = [fig.add_subplot(rows, 1, i + 1) for i in range(rows)]
    return fig, axes


#: Exponents as Unicode superscripts, so that ``10^-1`` is plain text (DejaVu Sans has the glyphs).
_SUPERSCRIPTS = str.maketrans("0123456789-", "\u2070\u00b9\u00b2\u00b3\u2074\u2075\u2076\u2077\u2078\u2079\u207b")
#: A mathtext power of a log axis label: ``$\mathdefault{10^{-1}}$`` or ``$\mathdefault{2\times10^{-1}}$``.
_MATHTEXT_POWER = re.compile(r"\$\\mathdefault\{(-?)(?:([0-9.]+)\\times)?(\d+)\^\{(-?\d+)\}\}\$")


@cache
def _power_formatter_class():
    """The log-axis formatter of matplotlib, its powers written as plain text with superscripts.

    The labels read the same (``10⁻¹``, ``2×10⁻¹``); a mathtext label goes through matplotlib's
    mathtext parser (pyparsing) when it is measured and drawn, a plain one does not.
    """
    from matplotlib.ticker import LogFormatterSciNotation

    class PowerFormatter(LogFormatterSciNotation):
        def __call__(self, x, pos=None):
            text = super().__call__(x, pos)
            match = _MATHTEXT_POWER.fullmatch(text)
            if match is None:
                return text
            sign, coeff, base, exponent = match.groups()
            times = f"{coeff}\u00d7" if coeff else ""
            return f"{sign}{times}{base}{exponent.translate(_SUPERSCRIPTS)}"

    return PowerFormatter


def _log_reversed_x(ax) -> None:
    """A logarithmic x axis running right to left (distance before the threshold), labels in plain text."""
    ax.set_xscale("log")
    ax.xaxis.set_major_formatter(_power_formatter_class()())
    ax.xaxis.set_minor_formatter(_power_formatter_class()(labelOnlyBase=False))
    ax.invert_xaxis()


def _save(fig, path: Path) -> None:
    """Draw a figure once and write it as an RGB PNG (zlib level 3).

    The figure is opaque, so its alpha channel carries nothing; without it, and at level 3 rather
    than 6, the PNG is encoded in about half the time for files a few percent larger.
    """
    from PIL import Image

    for ax in fig.axes:
        if ax.get_xscale() == "log":
            _minor_ticks_as_marks(ax)
        # Axes placed at drawing time (colorbars, secondary axes), boxed to an aspect or sharing
        # an axis may still change size or limits when drawn: their ticks are left as they are.
        shared = len(ax.get_shared_x_axes().get_siblings(ax)) > 1 or len(ax.get_shared_y_axes().get_siblings(ax)) > 1
        if ax.get_axes_locator() is None and ax.get_aspect() == "auto" and not shared:
            _fix_major_ticks(ax.xaxis)
            _fix_major_ticks(ax.yaxis)
    fig.canvas.draw()
    width, height = fig.canvas.get_width_height()
    rgba = Image.frombuffer("RGBA", (width, height), fig.canvas.buffer_rgba(), "raw", "RGBA", 0, 1)
    rgba.convert("RGB").save(path, format="png", compress_level=3, dpi=(_DPI, _DPI))


def _fix_major_ticks(axis) -> None:
    """The major ticks of an axis whose limits are final, fixed at the ones matplotlib will draw.

    matplotlib asks the tick locator and formatter again each time it lays out or draws an axis
    (three times a figure), and makes a tick, with its lines and labels, for every location the
    locator returns, those outside the limits too, which it then leaves out. Here the locator and
    formatter are asked once, as matplotlib asks them, and the ticks within the limits are kept
    with their labels: the same ticks and labels are drawn.
    """
    from matplotlib.ticker import FixedFormatter, FixedLocator, NullLocator

    if isinstance(axis.get_major_locator(), (NullLocator, FixedLocator)):
        return
    locs = np.asarray(axis.get_majorticklocs())
    labels = axis.major.formatter.format_ticks(locs)
    if axis.major.formatter.get_offset():
        return  # an offset or exponent beside the axis: left as it is
    transform = axis.get_transform()
    lo, hi = sorted(transform.transform(np.asarray(axis.get_view_interval(), dtype=float)))
    with np.errstate(all="ignore"):
        where = transform.transform(locs)
    margin = 1e-6 * (hi - lo)  # wider than matplotlib's own test, so no tick it draws is dropped
    keep = np.isfinite(where) & (where >= lo - margin) & (where <= hi + margin)
    axis.set_major_locator(FixedLocator(locs[keep]))
    axis.set_major_formatter(FixedFormatter([label for label, k in zip(labels, keep) if k]))


def _minor_ticks_as_marks(ax) -> None:
    """The minor ticks of a log x axis drawn as one line of tick marks instead of one tick each.

    A log axis has eight minor ticks a decade, and matplotlib builds each as a tick with two lines,
    a grid line and two labels (all hidden but one line); one line of markers at the same places,
    of the same size, width and colour, draws the same marks for a fraction of the time.
    """
    import matplotlib as mpl
    from matplotlib.markers import TICKDOWN
    from matplotlib.ticker import NullLocator

    limits = ax.get_xlim()
    lo, hi = sorted(limits)
    locs = np.asarray(ax.xaxis.get_minorticklocs())
    locs = locs[(locs >= lo) & (locs <= hi)]
    ax.set_xlim(limits)  # the marks below do not move the limits
    ax.plot(
        locs,
        np.zeros_like(locs),
        transform=ax.get_xaxis_transform(),
        ls="none",
        marker=TICKDOWN,
        ms=mpl.rcParams["xtick.minor.size"],
        mew=mpl.rcParams["xtick.minor.width"],
        color=mpl.rcParams["xtick.color"],
        clip_on=False,
        label="_minor ticks",
    )
    ax.xaxis.set_minor_locator(NullLocator())


def _title(ax, text: str) -> None:
    """A title at the top of the axes (placed, not searched for: the search draws every tick once more).

    Above the NM axis when the axes has one (:func:`_distance_axis`, called first).
    """
    ax.set_title(text, y=1.0, pad=34.0 if ax.get_xlabel() == DISTANCE_LABEL else 6.0)


def _feet_axis(ax, label: str = "elevation [ft]") -> None:
    sec = ax.secondary_yaxis("right", functions=(lambda m: m / M_PER_FT, lambda ft: ft * M_PER_FT))
    sec.set_ylabel(label)


#: Metres per kilometre and per nautical mile (1 NM = 1852 m exactly).
_M_PER_KM, _M_PER_NM = 1000.0, 1852.0
#: The label of the distance axis of every plot along the approach.
DISTANCE_LABEL = "distance before the threshold [km] (negative: past it, on the runway)"
NM_LABEL = "distance before the threshold [NM]"


def _band_words(result) -> str:
    """The profile band's half width in the site file's unit first (both units)."""
    from geo.ground.profile import BAND_HALF_WIDTH_M
    from geo.units import format_length

    return format_length(BAND_HALF_WIDTH_M, result.spec.units, 0)


def _km_before(along_m):
    """Distance before the threshold in km from the runway frame's along (negative on the approach)."""
    return -np.asarray(along_m, dtype=float) / _M_PER_KM


def _distance_axis(ax, scale: str = "linear") -> None:
    """The approach's distance axis: km below, NM above, the approach on the left, the threshold right.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
    scale : {"linear", "log"}
        Linear by default; log only for axes whose distances are all before the threshold.
    """
    if scale == "log":
        _log_reversed_x(ax)
    elif not ax.xaxis_inverted():
        ax.invert_xaxis()
    ax.set_xlabel(DISTANCE_LABEL)
    nm = ax.secondary_xaxis(
        "top", functions=(lambda km: km * _M_PER_KM / _M_PER_NM, lambda nm: nm * _M_PER_NM / _M_PER_KM)
    )
    if scale == "log":
        nm.xaxis.set_major_formatter(_power_formatter_class()())
        nm.xaxis.set_minor_formatter(_power_formatter_class()(labelOnlyBase=False))
    nm.set_xlabel(NM_LABEL)


def _distance_scale(result) -> str:
    """The site file's scale of the distance axis along the approach (``[report] distance_axis``)."""
    report = getattr(result.spec, "report", None)
    return getattr(report, "distance_axis", "linear")


def plot_profile(result: StudyResult, path: Path) -> None:
    """Terrain and path along the extended centre line: the whole approach and the runway end of it.

    The terrain is drawn as the line on the centre line with its band: the lowest to the highest
    ground within :data:`geo.ground.profile.BAND_HALF_WIDTH_M` either side.
    """
    prof, terrain, mast = result.profile, result.terrain, result.mast
    zone_near = mast.setback_m - terrain.zone.far_m
    zone_far = mast.setback_m - terrain.zone.near_m
    fig, axes = _figure(11, 8.5, rows=2)
    fig.subplots_adjust(left=0.07, right=0.92, top=0.9, bottom=0.07, hspace=0.55)
    for ax, (lo, hi) in zip(axes, [(prof.along_m[0], prof.along_m[-1]), (-1500.0, mast.setback_m + 700.0)]):
        sel = (prof.along_m >= lo) & (prof.along_m <= hi)
        x = _km_before(prof.along_m[sel])
        ax.plot(x, prof.terrain_m[sel], color="#8c6d31", lw=1.2, label="terrain on the centre line (DEM)")
        if prof.terrain_low_m is not None:
            ax.fill_between(
                x,
                prof.terrain_low_m[sel],
                prof.terrain_high_m[sel],
                color="#8c6d31",
                alpha=0.25,
                lw=0,
                label=f"terrain within {_band_words(result)} either side of the centre line (lowest to highest)",
            )
        ax.plot(x, prof.path_straight_m[sel], color="#1f5fa8", label="straight path (from the RPI)")
        ax.plot(x, prof.path_actual_m[sel], color="#d9480f", ls="--", label="actual path (cone about the mast)")
        ax.axvline(0.0, color="k", lw=0.8)
        ax.annotate(
            "threshold",
            (0.0, 1.0),
            xycoords=("data", "axes fraction"),
            xytext=(3, -12),
            textcoords="offset points",
            fontsize=8,
        )
        ax.plot(_km_before([result.gpip.along_m]), [result.gpip.elevation_m], "v", color="#1f5fa8", label="GPIP")
        top = mast.plane_elevation_m + result.antennas[-1].height_m
        ax.plot(
            _km_before([mast.setback_m, mast.setback_m]),
            [mast.base_elevation_m, top],
            color="#2b8a3e",
            lw=3,
            label=f"mast abeam ({mast.offset_m:.0f} m off the centre line)",
        )
        ax.axvspan(
            *_km_before([zone_near, zone_far]), color="#2b8a3e", alpha=0.12, label="reflection zone used for the plane"
        )
        ax.set_xlim(*_km_before([lo, hi]))
        _distance_axis(ax)
        ax.set_ylabel("elevation [m]")
        _feet_axis(ax)
        ax.grid(alpha=0.3)
    _title(axes[0], f"{result.spec.name}: ground and glide path along the approach")
    axes[0].legend(loc="lower left", fontsize=8)
    _title(axes[1], "Near the runway: ground, glide path and mast")
    _save(fig, path)


def plot_residuals(result: StudyResult, path: Path) -> None:
    """Plan view of the ground about the fitted plane in the reflection zone (cut above, fill below)."""
    t = result.terrain
    sp = t.sample_spacing_m
    iu = np.rint((t.u_m - t.u_m.min()) / sp).astype(int)
    iw = np.rint((t.w_m - t.w_m.min()) / sp).astype(int)
    image = np.full((iw.max() + 1, iu.max() + 1), np.nan)
    image[iw, iu] = t.residual_m
    extent = (t.u_m.min() - sp / 2, t.u_m.max() + sp / 2, t.w_m.min() - sp / 2, t.w_m.max() + sp / 2)
    lim = max(float(np.max(np.abs(t.residual_m))), 0.01)
    fig, (ax,) = _figure(11, 5)
    fig.subplots_adjust(left=0.07, right=0.98, top=0.92, bottom=0.1)
    im = ax.imshow(
        image,
        origin="lower",
        extent=extent,
        cmap="RdBu_r",
        vmin=-lim,
        vmax=lim,
        interpolation="nearest",
        aspect="auto",
    )
    bar = fig.colorbar(im, ax=ax)
    bar.set_label("ground above the plane [m]: red cut, blue fill")
    ax.plot([0.0], [0.0], "^", color="k", ms=9, label="mast")
    ax.set_xlabel("distance in front of the mast, toward the approach [m]")
    ax.set_ylabel("distance across, toward the runway [m]")
    _title(
        ax,
        f"{result.spec.name}: ground about the reflecting plane "
        f"(RMS {t.plane.rms_residual_m:.3f} m, max {t.plane.max_abs_residual_m:.3f} m)",
    )
    ax.legend(loc="upper right")
    ax.grid(alpha=0.3)
    _save(fig, path)


def plot_ddm(result: StudyResult, path: Path) -> None:
    """DDM along the designed path (with and without proximity shifts) and in the far field by elevation."""
    from geo.outputs.path_csv import path_columns

    p = result.prediction
    cols = path_columns(result)
    fig, axes = _figure(11, 8.5, rows=2)
    fig.subplots_adjust(left=0.08, right=0.97, top=0.9, bottom=0.07, hspace=0.55)
    ax = axes[0]
    before = cols["along_m"] < 0.0
    km = _km_before(cols["along_m"][before])
    ax.plot(km, cols["ddm_on_designed"][before], color="#1f5fa8", label="with proximity shifts")
    ax.plot(km, cols["ddm_on_designed_no_shift"][before], color="#d9480f", ls="--", label="antennas not shifted")
    ax.axhline(0.0, color="k", lw=0.8)
    _distance_axis(ax, _distance_scale(result))
    ax.set_ylabel("DDM on the designed straight path (+: 150 Hz)")
    _title(ax, f"{result.spec.name}: DDM along the designed path")
    ax.legend(fontsize=8)
    ax.grid(alpha=0.3)
    ax = axes[1]
    ax.plot(p.far_elevation_deg, p.far_ddm, color="#1f5fa8", label="far field")
    for y in (0.0875, -0.0875):
        ax.axhline(y, color="#868e96", ls=":", lw=1)
    ax.axvline(p.path_angle_deg, color="k", lw=0.8, label=f"path {p.path_angle_deg:.3f} deg")
    ax.axvspan(
        p.path_angle_deg - p.half_sector_below_deg,
        p.path_angle_deg + p.half_sector_above_deg,
        color="#74c0fc",
        alpha=0.2,
        label="half-sectors (DDM 0.0875)",
    )
    ax.set_xlabel("elevation angle [deg]")
    ax.set_ylabel("DDM (+: 150 Hz, below the path)")
    ax.set_ylim(-0.4, 0.4)
    _title(ax, "DDM against the elevation angle, far from the runway")
    ax.legend(fontsize=8)
    ax.grid(alpha=0.3)
    _save(fig, path)


def plot_path(result: StudyResult, path: Path) -> None:
    """Predicted path against the geometric path, the whole approach and near the threshold."""
    from geo.outputs.path_csv import path_columns

    cols = path_columns(result)
    fig, axes = _figure(11, 8.5, rows=2)
    fig.subplots_adjust(left=0.08, right=0.92, top=0.9, bottom=0.07, hspace=0.55)
    along = cols["along_m"]
    x = _km_before(along)
    for ax, near in zip(axes, (False, True)):
        sel = along >= -1500.0 if near else np.ones(along.size, dtype=bool)
        _distance_axis(ax)
        if near:
            ax.plot(
                x[sel],
                cols["predicted_height_m"][sel] - cols["geometric_actual_height_m"][sel],
                color="#1f5fa8",
                label="predicted with shifts minus geometric (cone)",
            )
            ax.plot(
                x[sel],
                cols["predicted_height_no_shift_m"][sel] - cols["geometric_actual_height_m"][sel],
                color="#d9480f",
                ls="--",
                label="predicted without shifts minus geometric",
            )
            ax.axhline(0.0, color="k", lw=0.8)
            ax.set_ylabel("height difference [m]")
            _title(ax, "Near the threshold: how much the proximity shifts change the path")
        else:
            ax.plot(x, cols["designed_height_m"], color="#868e96", label="designed straight path")
            ax.plot(x, cols["geometric_actual_height_m"], color="#2b8a3e", ls=":", label="geometric actual path (cone)")
            ax.plot(x, cols["predicted_height_m"], color="#1f5fa8", label="predicted path (DDM = 0)")
            ax.set_ylabel("height above the threshold [m]")
            _feet_axis(ax, "height above the threshold [ft]")
            _title(ax, f"{result.spec.name}: predicted glide path against the designed one")
        ax.legend(fontsize=8)
        ax.grid(alpha=0.3)
    _save(fig, path)


def _segment_labels(ax, labels: list[tuple[float, float, str]]) -> list:
    """Label each segment above its limit line; a label that would overlap another moves up a line.

    The axes' limits must be final. Each label is centred on its segment, kept inside the axes
    across, and measured as drawn (the figure's renderer); it is raised by its own height until its
    box meets none of those placed before it.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
    labels : list of (float, float, str)
        Each label's x and y (data) and its text.

    Returns
    -------
    list of matplotlib.text.Annotation
    """
    renderer = ax.figure.canvas.get_renderer()
    frame = ax.get_window_extent(renderer)
    placed = []
    for x, y, text in labels:
        note = ax.annotate(
            text, (x, y), xytext=(0, 4), textcoords="offset points", ha="center", fontsize=7, gid="segment-label"
        )
        box = note.get_window_extent(renderer)
        shift_x = max(frame.x0 + 2 - box.x0, 0.0) + min(frame.x1 - 2 - box.x1, 0.0)
        shift_y = 0.0
        while any(box.translated(shift_x, shift_y).overlaps(other.get_window_extent(renderer)) for other in placed):
            shift_y += box.height + 1.0
        points = 72.0 / ax.figure.dpi
        note.xyann = (shift_x * points, 4 + shift_y * points)
        placed.append(note)
    return placed


def plot_surface_structure(result: StudyResult, path: Path) -> None:
    """DDM on the designed path over the DEM surface beside image theory, and the bends against the limits."""
    sp = result.surface
    scale = _distance_scale(result)
    fig, axes = _figure(11, 8.5, rows=2)
    fig.subplots_adjust(left=0.08, right=0.97, top=0.9, bottom=0.07, hspace=0.55)
    before = sp.along_m < 0.0
    km = _km_before(sp.along_m[before])
    ax = axes[0]
    ax.plot(km, sp.ddm_image[before], color="#1f5fa8", label="image theory over the plane")
    ax.plot(km, sp.ddm_nominal[before], color="#d9480f", lw=0.9, label="physical optics over the DEM surface")
    ax.axhline(0.0, color="k", lw=0.8)
    _distance_axis(ax, scale)
    ax.set_ylabel("DDM on the designed straight path (+: 150 Hz)")
    _title(
        ax, f"{result.spec.name}: DDM along the approach over the real ground (a prediction; flight inspection decides)"
    )
    ax.legend(fontsize=8)
    ax.grid(alpha=0.3)
    ax = axes[1]
    ax.plot(np.asarray(sp.bend_distance_m) / _M_PER_KM, sp.bend_ddm, color="#d9480f", lw=0.9, label="bends")
    labels = []
    for seg in sp.structure:
        x = np.array([seg.from_m, seg.to_m]) / _M_PER_KM
        for sign in (1.0, -1.0):
            ax.plot(x, [sign * seg.limit_ddm] * 2, color="#c92a2a", ls="--", lw=1)
        departure = "" if seg.departure_95_ddm is None else f", departure {seg.departure_95_ddm:.4f}"
        middle = float(np.sqrt(x[0] * x[1])) if scale == "log" and x.min() > 0 else float(x.mean())
        labels.append((middle, seg.limit_ddm, f"{seg.segment}: 95 % {seg.bend_95_ddm:.4f}{departure}"))
    _distance_axis(ax, scale)
    highest = max([abs(seg.limit_ddm) for seg in sp.structure] + [float(np.nanmax(np.abs(sp.bend_ddm)))])
    ax.set_ylim(-1.2 * highest, 1.2 * highest + 0.04 * len(labels) * highest)
    ax.set_xlim(ax.get_xlim())
    ax.set_ylabel("bend: filtered DDM minus the segment's line or mean")
    _title(ax, "Path bends against the Annex 10 limits (dashed; values from memory, confirm the edition)")
    ax.legend(fontsize=8, loc="lower left")
    ax.grid(alpha=0.3)
    _segment_labels(ax, labels)
    _save(fig, path)


def write_plots(result: StudyResult, folder: Path) -> None:
    """Draw every plot of a study into ``folder``: the profile, residuals and surface (with a DEM), DDM, path."""
    if result.profile is not None:
        plot_profile(result, folder / "profile.png")
        plot_residuals(result, folder / "residuals.png")
    plot_ddm(result, folder / "ddm.png")
    plot_path(result, folder / "path.png")
    if result.surface is not None:
        plot_surface_structure(result, folder / "surface.png")


def write_surface_plot(result: StudyResult, folder: Path) -> None:
    """Draw the one plot that needs the surface prediction (after :func:`write_plots` of the study without it)."""
    if result.surface is not None:
        plot_surface_structure(result, folder / "surface.png")
