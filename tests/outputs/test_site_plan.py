"""site_plan.png: written beside report.html and shown by it, byte-identical on rerun, to scale, north arrow."""

from __future__ import annotations

import re

import numpy as np
import pytest
from tests_support import FEET_SITE, demo_site_without_surface, file_digests

from geo.outputs.geojson import study_layers
from geo.outputs.site_plan import RUNWAY_GID, SCALE_BAR_GID, SCALE_LABEL_GID, site_plan_figure
from geo.outputs.write import write_study
from geo.site.site_file import load_site
from geo.study.site_study import run_study

#: One international foot in metres (international yard and pound agreement, 1959).
FOOT_M = 0.3048


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    """The demo study (surface prediction off), written twice by the library."""
    folder = tmp_path_factory.mktemp("site_plan")
    result = run_study(load_site(demo_site_without_surface(folder)))
    write_study(result, folder / "a")
    write_study(result, folder / "b")
    return result, folder


@pytest.fixture(scope="module")
def feet(tmp_path_factory):
    """A flat site (no DEM) whose site file is in feet."""
    path = tmp_path_factory.mktemp("feet") / "site.toml"
    path.write_text(FEET_SITE, encoding="utf-8")
    return run_study(load_site(path))


def test_the_site_plan_is_beside_the_report_shown_by_it_and_the_same_on_rerun(demo):
    _, folder = demo
    png = (folder / "a" / "site_plan.png").read_bytes()
    assert png.startswith(b"\x89PNG\r\n\x1a\n")
    assert file_digests(folder / "a") == file_digests(folder / "b")  # site_plan.png among them
    assert png == (folder / "b" / "site_plan.png").read_bytes()
    page = (folder / "a" / "report.html").read_text(encoding="utf-8")
    assert "<img src='site_plan.png'" in page
    assert page.index("<h2>Site plan</h2>") < page.index("<h2>Findings</h2>")
    # no date or version in the PNG: its only chunks are the image's own (W3C PNG spec, 2nd ed., 11.2-11.3)
    assert not {b"tEXt", b"zTXt", b"iTXt", b"tIME"} & set(_chunk_types(png))


def test_no_plots_means_no_site_plan_and_no_reference_to_it(demo, tmp_path):
    result, _ = demo
    out = write_study(result, tmp_path / "out", plots=False)
    assert not (out / "site_plan.png").exists()
    assert "site_plan.png" not in (out / "report.html").read_text(encoding="utf-8")


def _chunk_types(png: bytes) -> list[bytes]:
    """The chunk types of a PNG file in order (length, type, data, CRC each)."""
    types, at = [], 8
    while at < len(png):
        length = int.from_bytes(png[at : at + 4], "big")
        types.append(png[at + 4 : at + 8])
        at += 12 + length
    return types


def _scale_bar(fig) -> tuple[float, str]:
    """The scale bar's drawn length in data units and its label."""
    (ax,) = fig.axes
    segments = [p for p in ax.patches if p.get_gid() == SCALE_BAR_GID]
    assert len(segments) >= 2
    left = min(p.get_x() for p in segments)
    right = max(p.get_x() + p.get_width() for p in segments)
    (label,) = [t for t in ax.texts if t.get_gid() == SCALE_LABEL_GID]
    return right - left, label.get_text()


def _runway_vertices(fig) -> np.ndarray:
    (ax,) = fig.axes
    (runway,) = [p for p in ax.patches if p.get_gid() == RUNWAY_GID]
    return np.unique(np.asarray(runway.get_xy()), axis=0)  # each vertex once (the ring is closed)


def _labelled_m(label: str, unit: str) -> float:
    """The first length of a label, which must be in ``unit``, in metres."""
    match = re.match(r"([\d,.]+) (m|ft) \(([\d,.]+) (m|ft)\)$", label)
    assert match, label
    value, first, _, second = match.groups()
    assert (first, second) == (unit, "ft" if unit == "m" else "m")  # the site file's unit first
    return float(value.replace(",", "")) * (1.0 if unit == "m" else FOOT_M)


@pytest.mark.parametrize("which", ["demo", "feet"])
def test_the_scale_bar_is_as_long_as_its_label_in_the_figure_metres(demo, feet, which):
    result = demo[0] if which == "demo" else feet
    fig = site_plan_figure(result, study_layers(result))
    drawn, label = _scale_bar(fig)
    assert drawn == pytest.approx(_labelled_m(label, result.spec.units), rel=0.01)
    # The figure's data are metres on the ground: the runway's outline spans its diagonal, length
    # and width from the site file (the runway's length a WGS 84 geodesic, pyproj.Geod).
    xy = _runway_vertices(fig)
    span = np.max(np.hypot(*(xy[:, None, :] - xy[None, :, :]).transpose(2, 0, 1)))
    assert span == pytest.approx(np.hypot(result.runway.length_m, result.runway.width_m), rel=0.01)


def test_the_north_arrow_and_the_runway_make_the_runway_s_true_bearing(demo):
    result, _ = demo
    fig = site_plan_figure(result, study_layers(result))
    (ax,) = fig.axes
    (arrow,) = [t for t in ax.texts if getattr(t, "arrow_patch", None) is not None]
    north = np.asarray(arrow.xy, dtype=float) - np.asarray(arrow.xyann, dtype=float)
    xy = _runway_vertices(fig)
    axis = np.linalg.svd(xy - xy.mean(axis=0))[2][0]  # the outline's long axis
    # clockwise angle from the arrow to the runway's axis, against the true bearing (pyproj.Geod, WGS 84)
    angle = np.degrees(np.arctan2(north[0] * axis[1] - north[1] * axis[0], north @ axis)) * -1.0
    difference = (angle - result.runway.true_bearing_deg) % 180.0
    assert min(difference, 180.0 - difference) < 0.05
