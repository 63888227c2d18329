"""The writer processes of a full run: the plots in one, the map and the GeoPackage in another."""

from __future__ import annotations

from tests_support import file_digests, wait_for_path

from geo.outputs.background import BackgroundWriter
from geo.outputs.write import write_study
from geo.site.site_file import load_site
from geo.study.site_study import run_study


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


def test_busy_says_whether_a_task_still_runs_and_wait_keeps_its_error(tmp_path):
    # BackgroundWriter.busy polls without waiting (cli.run keeps the optics kernel on one thread
    # while it is True); an error reported meanwhile is still raised by wait(). The first task runs
    # until the test creates a file, so it is still running when busy() is asked, however slow the
    # machine (a task of one second could end first on a loaded one).
    import time

    import pytest

    release = tmp_path / "release"
    with BackgroundWriter(["plots"]) as writer:
        assert not writer.busy()
        writer.submit(wait_for_path, str(release), output="plots")
        assert writer.busy()
        writer.submit(int, "not a number", output="plots")
        assert writer.busy()
        release.touch()
        deadline = time.monotonic() + 300.0  # only against a hang: both tasks end at once now
        while writer.busy() and time.monotonic() < deadline:
            time.sleep(0.02)
        assert not writer.busy()
        with pytest.raises(ValueError):
            writer.wait()
        writer.wait()  # the error is raised once


def test_writers_run_below_the_main_process_priority():
    # The main process's study is what a run waits for: the writers are started 5 steps of Unix
    # nice below it (geo.outputs.background._NICENESS), so that the study keeps a core.
    import os
    import time

    writer = BackgroundWriter(["plots", "map", "gpkg"])
    try:
        mine = os.getpriority(os.PRIO_PROCESS, 0)
        deadline = time.monotonic() + 30.0
        wanted = min(mine + 5, 19)
        while time.monotonic() < deadline:
            levels = [os.getpriority(os.PRIO_PROCESS, w.proc.pid) for w in writer._workers]
            if levels == [wanted] * len(levels):
                break
            time.sleep(0.02)
        assert levels == [wanted] * len(levels)
        assert os.getpriority(os.PRIO_PROCESS, 0) == mine  # the main process keeps its own
    finally:
        writer.stop()
