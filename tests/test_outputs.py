"""Output files: summary keys and twins, RFC 7946 GeoJSON, atomic writing."""

import json

import pytest

from geo.errors import OutputError
from geo.outputs.geojson import ring_is_ccw
from geo.outputs.write import write_study
from geo.site import load_site
from geo.study import run_study
from geo.units import M_PER_FT


@pytest.fixture
def written(tmp_path, write_site, site_text):
    result = run_study(load_site(write_site(site_text)))
    return result, write_study(result, tmp_path / "out")


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
        ["runway", "centreline", "threshold", "extended_centreline", "mast", "antennas", "gpip"]
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
    result, out = written
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

    def broken(result, folder):
        (folder / "half.txt").write_text("half")
        raise RuntimeError("disk full")

    monkeypatch.setattr(w, "WRITERS", (broken,))
    with pytest.raises(RuntimeError):
        w.write_study(result, tmp_path / "fresh")
    assert not (tmp_path / "fresh").exists()
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".fresh.")]
