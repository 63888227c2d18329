"""Output files: summary keys and twins, RFC 7946 GeoJSON, atomic writing."""

import json
import shutil
import textwrap

import pytest
from tests_support import BASE_SITE, file_digests, without_surface

from geo.errors import OutputError
from geo.outputs.geojson import ring_is_ccw
from geo.outputs.write import write_study
from geo.site.site_file import load_site
from geo.study.site_study import run_study
from geo.units import M_PER_FT


@pytest.fixture(scope="module")
def written(tmp_path_factory):
    """The test site's study and every output of it, written once for the module: the tests read the
    folder or write elsewhere; the one that writes over an existing folder takes a copy."""
    folder = tmp_path_factory.mktemp("written")
    site = folder / "site.toml"
    site.write_text(textwrap.dedent(BASE_SITE), encoding="utf-8")
    result = run_study(load_site(site))
    return result, write_study(result, folder / "out")


def _walk(obj):
    if isinstance(obj, dict):
        yield obj
        for v in obj.values():
            yield from _walk(v)
    elif isinstance(obj, list):
        for v in obj:
            yield from _walk(v)


def test_summary_has_the_contract_keys_and_foot_twins(written):
    _, out = written
    s = json.loads((out / "summary.json").read_text())
    for key in (
        "frequency_mhz",
        "wavelength_m",
        "path_angle_deg",
        "array",
        "rdh_m",
        "path_height_over_threshold_m",
        "findings",
    ):
        assert key in s
    for key in ("true_bearing_deg", "length_m"):
        assert key in s["runway"]
    for key in ("lat", "lon", "setback_m", "offset_m", "base_elevation_m"):
        assert key in s["mast"]
    for key in ("along_m", "lat", "lon"):
        assert key in s["gpip"]
    assert [a["role"] for a in s["antennas"]] == ["lower", "upper"]
    for a in s["antennas"]:
        assert {"role", "height_m", "shift_toward_runway_m", "lat", "lon"} <= set(a)
    twins = 0
    for table in _walk(s):
        for key, value in table.items():
            if key.endswith("_m") and isinstance(value, (int, float)):
                assert table[key[:-2] + "_ft"] == pytest.approx(value / M_PER_FT, abs=2e-4)
                twins += 1
    assert twins >= 15


def test_geojson_layers_follow_rfc_7946(written):
    # RFC 7946: no "crs" member (sec. 4), lon/lat order (sec. 3.1.1), CCW exterior rings (3.1.6).
    result, out = written
    names = sorted(p.stem for p in (out / "layers").glob("*.geojson"))
    assert names == sorted(
        ["runway", "centreline", "threshold", "extended_centreline", "mast", "antennas", "gpip", "reflection_zones"]
    )
    for path in (out / "layers").glob("*.geojson"):
        fc = json.loads(path.read_text())
        assert fc["type"] == "FeatureCollection" and "crs" not in fc
        for f in fc["features"]:
            geom = f["geometry"]
            if geom["type"] == "Polygon":
                assert ring_is_ccw(geom["coordinates"][0])
                assert geom["coordinates"][0][0] == geom["coordinates"][0][-1]
    thr = json.loads((out / "layers" / "threshold.geojson").read_text())["features"][0]
    assert thr["geometry"]["coordinates"] == [148.92, -35.41]
    ant = json.loads((out / "layers" / "antennas.geojson").read_text())["features"]
    assert ant[1]["properties"]["shift_toward_runway_m"] == pytest.approx(
        result.antennas[1].shift_toward_runway_m, abs=1e-4
    )


def test_existing_folder_needs_overwrite_and_survives_a_refusal(tmp_path, written):
    result, shared = written
    out = tmp_path / "out"
    shutil.copytree(shared, out)
    before = (out / "summary.json").read_bytes()
    with pytest.raises(OutputError, match="--overwrite"):
        write_study(result, out)
    assert (out / "summary.json").read_bytes() == before
    write_study(result, out, overwrite=True)
    assert (out / "summary.json").read_bytes() == before  # reproducible: same bytes
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".out.")]


def test_input_file_inside_the_output_folder_is_never_replaced(tmp_path, site_text):
    folder = tmp_path / "work"
    folder.mkdir()
    site = folder / "site.toml"
    site.write_text(site_text)
    result = run_study(load_site(site))
    with pytest.raises(OutputError, match="holds the input"):
        write_study(result, folder, overwrite=True)
    assert site.read_text() == site_text


def test_failed_writer_leaves_nothing_behind(tmp_path, written, monkeypatch):
    import geo.outputs.write as w

    result, _ = written

    def broken(result, folder, *args, **kwargs):
        (folder / "half.txt").write_text("half")
        raise RuntimeError("disk full")

    monkeypatch.setattr(w, "fill_study", broken)
    with pytest.raises(RuntimeError):
        w.write_study(result, tmp_path / "fresh")
    assert not (tmp_path / "fresh").exists()
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".fresh.")]


def test_zone_layers_have_ccw_rings_seven_decimals_and_zone_figures(written):
    # RFC 7946 sec. 3.1.6 (exterior rings counter-clockwise) and 11.2 (precision: 7 decimals ~ 1 cm).
    result, out = written
    fc = json.loads((out / "layers" / "reflection_zones.geojson").read_text())
    assert {(f["properties"]["antenna"], f["properties"]["kind"]) for f in fc["features"]} == {
        (a, k) for a in ("lower", "upper", "all") for k in ("path", "coverage")
    }
    for f in fc["features"]:
        polys = [f["geometry"]["coordinates"]] if f["geometry"]["type"] == "Polygon" else f["geometry"]["coordinates"]
        for rings in polys:
            assert ring_is_ccw(rings[0])
            for x, y in rings[0]:
                assert round(x, 7) == x and round(y, 7) == y and -180 <= x <= 180 and -90 <= y <= 90
        props = f["properties"]
        assert props["area_ft2"] == pytest.approx(props["area_m2"] / M_PER_FT**2, rel=1e-6)
        assert props["far_m"] > props["near_m"] >= 0
    summary = json.loads((out / "summary.json").read_text())
    assert len(summary["reflection_zones"]) == 6
    assert {"antenna", "kind", "near_m", "far_m", "max_half_width_m", "area_m2", "area_ft2"} <= set(
        summary["reflection_zones"][0]
    )


def test_protected_areas_layer_and_cover(tmp_path, write_site, site_text):
    text = site_text + (
        "\n[[protected_area]]\nname = 'everything'\nkind = 'critical'\nahead = 5000\nbehind = 100\n"
        "toward_runway = 2000\naway = 2000\n"
        "\n[[protected_area]]\nname = 'sliver'\nkind = 'sensitive'\noutline = [[0, 0], [10, 0], [10, 5]]\n"
    )
    result = run_study(load_site(write_site(text)))
    covers = {c.kind: c for c in result.zone_covers}
    assert covers["path"].outside_percent == pytest.approx(0.0, abs=1e-9)
    out = write_study(result, tmp_path / "o")
    layer = json.loads((out / "layers" / "protected_areas.geojson").read_text())
    areas = {f["properties"]["name"]: f["properties"]["area_m2"] for f in layer["features"]}
    # Rectangle (5000 + 100) x (2000 + 2000) m; triangle 10 x 5 / 2 m.
    assert areas == {"everything": pytest.approx(5100 * 4000), "sliver": pytest.approx(25.0)}
    small = run_study(
        load_site(
            write_site(
                site_text
                + (
                    "\n[[protected_area]]\nname = 'far away'\nkind = 'critical'\n"
                    "outline = [[-900, 500], [-800, 500], [-800, 600]]\n"
                ),
                "small.toml",
            )
        )
    )
    assert small.zone_covers[0].outside_percent == pytest.approx(100.0)


def test_a_background_writer_writes_the_same_bytes(tmp_path):
    # Independent method: the same outputs written in one process, against plots and GeoPackage
    # written in the worker process. Without the surface prediction (surface.png, drawn in a worker, is
    # compared in tests/outputs/test_background_map.py).
    from demo_airfield import SITE_FILE
    from geo.outputs.background import BackgroundWriter

    result = run_study(without_surface(load_site(SITE_FILE)))
    alone = write_study(result, tmp_path / "alone")
    with BackgroundWriter(["plots", "gpkg"]) as background:
        beside = write_study(result, tmp_path / "beside", background=background)
    assert file_digests(alone) == file_digests(beside) and "profile.png" in file_digests(beside)


def _broken_plots(result, folder):
    (folder / "half.png").write_bytes(b"half")
    raise OSError(28, "No space left on device")


def test_an_error_in_the_background_writer_leaves_nothing_behind(tmp_path, written, monkeypatch):
    import geo.outputs.plots as plots
    from geo.outputs.background import BackgroundWriter

    result, _ = written
    monkeypatch.setattr(plots, "write_plots", _broken_plots)  # the forked worker runs this one
    with BackgroundWriter(["plots"]) as background:
        with pytest.raises(OSError, match="No space left"):
            write_study(result, tmp_path / "fresh", background=background)
    assert not (tmp_path / "fresh").exists()
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".fresh.")]


def test_a_background_writer_stopped_at_once_ends(tmp_path):
    # A study that fails right after the writer starts stops it within microseconds of the fork:
    # the stop must end the worker every time (a lost SIGTERM once left the caller waiting). What
    # is checked is the state after each stop, not how long the stops took.
    from geo.outputs.background import BackgroundWriter

    for _ in range(20):
        writer = BackgroundWriter(["plots", "gpkg"])
        writer.stop()
        assert not writer._proc.is_alive()


def test_writers_import_folium_and_pyogrio_without_pandas(tmp_path):
    # In a fresh process: the map and the GeoPackage writer's libraries come without pandas, and
    # pandas stays importable for anyone else afterwards.
    import subprocess
    import sys

    code = (
        "import sys\n"
        "from geo.outputs.imports import import_without_dataframes\n"
        "folium = import_without_dataframes('folium')\n"
        "raw = import_without_dataframes('pyogrio.raw')\n"
        "assert 'pandas' not in sys.modules and 'geopandas' not in sys.modules, sorted(sys.modules)\n"
        "import folium.utilities\n"
        "assert folium.utilities.pd is None and callable(raw.write)\n"
        "import pandas\n"
        "assert pandas.DataFrame({'a': [1]}).shape == (1, 1)\n"
        "print('ok')\n"
    )
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0 and proc.stdout.strip() == "ok", proc.stderr


def test_what_does_not_pickle_runs_in_this_process(tmp_path):
    from geo.outputs.background import BackgroundWriter

    ran = []
    with BackgroundWriter(["plots"]) as background:
        background.submit(lambda x: ran.append(x), 7)  # a lambda does not pickle: it runs here
        background.wait()
    assert ran == [7]
