"""The writer processes of a full run: the map, the GeoPackage and the plots shared between two workers."""

from __future__ import annotations

import hashlib

from geo.outputs.background import BackgroundWriter
from geo.outputs.write import OUTPUTS, write_study
from geo.site import load_site
from geo.study import run_study


def _digest(folder):
    return {
        str(p.relative_to(folder)): hashlib.sha256(p.read_bytes()).hexdigest()
        for p in sorted(folder.rglob("*"))
        if p.is_file()
    }


def test_map_gpkg_and_shared_plots_in_workers_are_the_same_bytes(tmp_path):
    # Independent method: every output written in this one process, against the same outputs
    # with the map, the GeoPackage and the plots written by two worker processes.
    from demo_airfield import SITE_FILE

    result = run_study(load_site(SITE_FILE))
    alone = write_study(result, tmp_path / "alone")
    with BackgroundWriter(["plots", "map", "gpkg"]) as background:
        assert background.shares("plots") == 2 and background.shares("map") == 1
        beside = write_study(result, tmp_path / "beside", outputs=OUTPUTS, background=background)
    digest = _digest(beside)
    assert _digest(alone) == digest
    assert {"map.html", "site.gpkg", "path.png", "profile.png", "surface.png"} <= set(digest)


def test_every_worker_ends_when_stopped():
    writer = BackgroundWriter(["plots", "map", "gpkg"])
    procs = [worker.proc for worker in writer._workers]
    assert len(procs) == 2
    writer.stop()
    assert not any(proc.is_alive() for proc in procs)
