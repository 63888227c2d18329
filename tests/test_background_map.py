"""The writer processes of a full run: the plots in one, the map and the GeoPackage in another."""

from __future__ import annotations

from tests_support import file_digests

from geo.outputs.background import BackgroundWriter
from geo.outputs.write import write_study
from geo.site import load_site
from geo.study import run_study


def test_map_and_gpkg_in_their_worker_are_the_same_bytes(tmp_path):
    # Independent method: every output written in this one process, against the same outputs
    # with the plots in one worker process and the map and the GeoPackage in another.
    from demo_airfield import SITE_FILE

    result = run_study(load_site(SITE_FILE))
    alone = write_study(result, tmp_path / "alone")
    with BackgroundWriter(["plots", "map", "gpkg"]) as background:
        assert [w.outputs for w in background._workers] == [("plots",), ("map", "gpkg")]
        beside = write_study(result, tmp_path / "beside", background=background)
    digest = file_digests(beside)
    assert file_digests(alone) == digest
    assert {"map.html", "site.gpkg", "path.png", "profile.png", "surface.png"} <= set(digest)


def test_every_worker_ends_when_stopped():
    writer = BackgroundWriter(["plots", "map", "gpkg"])
    procs = [worker.proc for worker in writer._workers]
    assert len(procs) == 2
    writer.stop()
    assert not any(proc.is_alive() for proc in procs)
