"""Ticks fixed before drawing: the same pixels as matplotlib's own ticks, fewer tick objects."""

import numpy as np
import pytest

from geo.outputs.plots import _figure, _fix_major_ticks, _log_reversed_x


def _draw(build, fix: bool):
    fig, axes = _figure(6, 4, rows=2)
    build(axes)
    if fix:
        for ax in axes:
            _fix_major_ticks(ax.xaxis)
            _fix_major_ticks(ax.yaxis)
    fig.canvas.draw()
    pixels = np.asarray(fig.canvas.buffer_rgba()).copy()
    ticks = sum(len(ax.xaxis.majorTicks) + len(ax.yaxis.majorTicks) for ax in axes)
    return pixels, ticks, axes


def _linear(axes):
    x = np.linspace(-1234.5, 5678.9, 50)
    axes[0].plot(x, np.sin(x / 300.0) * 37.0 + 12.0)
    axes[0].grid(alpha=0.3)
    axes[1].plot(x, -x * 1e-3)
    axes[1].invert_xaxis()


def _log(axes):
    nm = np.geomspace(0.05, 9.8, 60)
    for ax in axes:
        ax.plot(nm, np.cos(nm) * 0.1)
        _log_reversed_x(ax)
        ax.grid(alpha=0.3)


def _offset(axes):
    x = np.linspace(0.0, 1.0, 20)
    axes[0].plot(x, 1e6 + x)  # ScalarFormatter puts an offset beside the axis
    axes[1].plot(x, x * 1e-7)  # and an exponent here


@pytest.mark.parametrize("build", [_linear, _log, _offset], ids=["linear", "log", "offset"])
def test_fixed_ticks_draw_the_same_pixels(build):
    # Independent method: matplotlib drawing the same figure with its own locators and formatters.
    reference, ticks_before, _ = _draw(build, fix=False)
    pixels, ticks_after, axes = _draw(build, fix=True)
    assert np.array_equal(pixels, reference)
    assert ticks_after <= ticks_before


def test_ticks_outside_the_limits_are_not_made():
    # matplotlib's locators return a tick beyond each limit here (drawn figures, counted above).
    _, ticks_before, _ = _draw(_linear, fix=False)
    _, ticks_after, axes = _draw(_linear, fix=True)
    assert ticks_after < ticks_before
    for ax in axes:
        for axis in (ax.xaxis, ax.yaxis):
            lo, hi = sorted(axis.get_view_interval())
            locs = axis.get_majorticklocs()
            assert np.all((locs >= lo - 1e-9 * (hi - lo)) & (locs <= hi + 1e-9 * (hi - lo)))


def test_an_axis_with_an_offset_keeps_its_own_formatter():
    from matplotlib.ticker import ScalarFormatter

    _, _, axes = _draw(_offset, fix=True)
    assert isinstance(axes[0].yaxis.get_major_formatter(), ScalarFormatter)
    assert axes[0].yaxis.get_offset_text().get_text() != ""
