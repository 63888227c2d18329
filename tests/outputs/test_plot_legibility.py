"""The plots read plainly: distance in km and NM on a linear axis, titles, labels that do not overlap."""

import dataclasses
from types import SimpleNamespace

import numpy as np
import pytest
from tests_support import DEMO_SITE, NO_SURFACE

import geo.outputs.plots as plots
from geo.errors import SiteFileError
from geo.site.site_file import load_site
from geo.study.site_study import run_study


@pytest.fixture(scope="module")
def demo_result(tmp_path_factory):
    folder = tmp_path_factory.mktemp("site")
    site = folder / "site.toml"
    text = DEMO_SITE.read_text(encoding="utf-8").replace(
        'dem = "dem.tif"', f'dem = "{DEMO_SITE.with_name("dem.tif").as_posix()}"'
    )
    site.write_text(text + NO_SURFACE, encoding="utf-8")
    return run_study(load_site(site))


def _figures(monkeypatch, draw):
    """The figures a drawing function saves, as they were when written."""
    saved = []
    real = plots._save

    def keep(fig, path):
        real(fig, path)
        saved.append(fig)

    monkeypatch.setattr(plots, "_save", keep)
    draw()
    return saved


def _distance_axes(figs):
    return [ax for fig in figs for ax in fig.axes if ax.get_xlabel() == plots.DISTANCE_LABEL]


def _nm_labels(ax):
    return [child.get_xlabel() for child in ax.child_axes]


def test_every_plot_has_titles_and_km_and_nm_on_a_linear_axis(demo_result, tmp_path, monkeypatch):
    figs = _figures(monkeypatch, lambda: plots.write_plots(demo_result, tmp_path))
    assert len(figs) == 4  # profile, residuals, DDM, path (no surface prediction here)
    for fig in figs:
        for ax in fig.axes:
            if ax.get_label() != "<colorbar>":
                assert ax.get_title().strip(), ax.get_ylabel()
    along = _distance_axes(figs)
    assert len(along) == 5  # the profile's two panels, the DDM along the path, the path's two panels
    for ax in along:
        assert ax.get_xscale() == "linear"
        assert "[km]" in ax.get_xlabel() and plots.NM_LABEL in _nm_labels(ax)
        left, right = ax.get_xlim()
        assert left > right  # the approach on the left, the threshold to the right


def test_the_log_axis_is_an_option_of_the_site_file(demo_result, tmp_path, monkeypatch):
    report = dataclasses.replace(demo_result.spec.report, distance_axis="log")
    result = dataclasses.replace(demo_result, spec=dataclasses.replace(demo_result.spec, report=report))
    figs = _figures(monkeypatch, lambda: plots.plot_ddm(result, tmp_path / "ddm.png"))
    (ax,) = _distance_axes(figs)
    assert ax.get_xscale() == "log" and plots.NM_LABEL in _nm_labels(ax)


def test_a_distance_axis_other_than_linear_or_log_is_refused(tmp_path, write_site, site_text):
    with pytest.raises(SiteFileError, match="report.distance_axis"):
        load_site(write_site(site_text + '\n[report]\ndistance_axis = "logarithmic"\n'))
    assert load_site(write_site(site_text)).report.distance_axis == "linear"


def _segment(name, from_m, to_m, limit):
    return SimpleNamespace(
        segment=name, from_m=from_m, to_m=to_m, limit_ddm=limit, bend_95_ddm=0.01234, departure_95_ddm=0.02345
    )


def _surface_result(scale="linear"):
    """A surface prediction's figures (invented): Cat I segments, crowded near the threshold."""
    along = np.linspace(-18520.0, 500.0, 400)
    bend_km = np.linspace(18.52, 0.03, 300)
    surface = SimpleNamespace(
        along_m=along,
        ddm_image=0.01 * np.sin(along / 900.0),
        ddm_nominal=0.012 * np.sin(along / 700.0),
        bend_distance_m=bend_km * 1000.0,
        bend_ddm=0.02 * np.sin(bend_km * 5.0),
        structure=[
            _segment("coverage to A", 18520.0, 7408.0, 0.035),
            _segment("A to B", 7408.0, 1050.0, 0.035),
            _segment("B to C", 1050.0, 30.0, 0.023),
        ],
    )
    spec = SimpleNamespace(name="Invented airfield", report=SimpleNamespace(distance_axis=scale))
    return SimpleNamespace(spec=spec, surface=surface)


def _overlaps(boxes):
    return [(i, j) for i in range(len(boxes)) for j in range(i + 1, len(boxes)) if boxes[i].overlaps(boxes[j])]


@pytest.mark.parametrize("scale", ["linear", "log"])
def test_segment_labels_of_the_structure_plot_do_not_overlap(tmp_path, monkeypatch, scale):
    (fig,) = _figures(monkeypatch, lambda: plots.plot_surface_structure(_surface_result(scale), tmp_path / "s.png"))
    renderer = fig.canvas.get_renderer()
    labels = [t for ax in fig.axes for t in ax.texts if t.get_gid() == "segment-label"]
    assert len(labels) == 3
    boxes = [t.get_window_extent(renderer) for t in labels]
    assert _overlaps(boxes) == []
    frame = fig.axes[1].get_window_extent(renderer)
    assert all(frame.x0 <= b.x0 and b.x1 <= frame.x1 for b in boxes)  # inside the axes across
    for ax in fig.axes:
        assert ax.get_title().strip()
    assert len(_distance_axes([fig])) == 2 and all(ax.get_xscale() == scale for ax in _distance_axes([fig]))


def test_the_invented_segments_would_overlap_if_each_sat_at_its_middle(tmp_path, monkeypatch):
    # The case above is a real test: labels centred on their segments, unmoved, overlap on it.
    def centred(ax, labels):
        return [
            ax.annotate(
                t, (x, y), xytext=(0, 4), textcoords="offset points", ha="center", fontsize=7, gid="segment-label"
            )
            for x, y, t in labels
        ]

    monkeypatch.setattr(plots, "_segment_labels", centred)
    (fig,) = _figures(monkeypatch, lambda: plots.plot_surface_structure(_surface_result(), tmp_path / "s.png"))
    renderer = fig.canvas.get_renderer()
    boxes = [t.get_window_extent(renderer) for ax in fig.axes for t in ax.texts if t.get_gid() == "segment-label"]
    frame = fig.axes[1].get_window_extent(renderer)
    assert _overlaps(boxes) or any(b.x0 < frame.x0 or b.x1 > frame.x1 for b in boxes)
