"""No lost work (runs killed midway), reproducible outputs."""

import os
import shutil
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest
from tests_support import DEMO_SITE, demo_site_without_surface, file_digests


def _start(out: Path):
    """``mastplan run`` of the demo over ``out``, with SIGINT as an interactive shell gives it to a command.

    A suite started in the background by a non-interactive shell (``pytest &`` in a script) has SIGINT
    ignored, and a child inherits an ignored signal: SIGINT would not stop the run. A handler set here
    instead is reset to the default in the child when it starts, so the run sees SIGINT as after Ctrl-C.
    """
    previous = signal.signal(signal.SIGINT, signal.default_int_handler)
    try:
        return subprocess.Popen(
            [sys.executable, "-m", "cli.main", "run", str(DEMO_SITE), "--out", str(out), "--overwrite", "-q"],
            stdout=subprocess.PIPE,
            stderr=subprocess.PIPE,
            text=True,
        )
    finally:
        signal.signal(signal.SIGINT, previous)


def _midway(parent: Path, out: Path, earlier_inode: int) -> bool:
    """The run has made its temporary folder and not yet begun to replace the earlier results."""
    return (
        bool(list(parent.glob(".out.partial-*")))
        and out.stat().st_ino == earlier_inode
        and not list(parent.glob(".out.old-*"))
    )


def _frozen_midway(proc, parent: Path, out: Path, earlier_inode: int) -> bool:
    """Wait for the run to be midway and stop it there (SIGSTOP), so that a signal sent next lands midway.

    Polls for the state (its temporary folder beside ``out``), stops the process, waits until it has
    stopped, and checks the state again: the process cannot move on meanwhile. Returns False when the
    run got past it first (it is then let go on and waited for); the caller runs it again.
    """
    while proc.poll() is None:
        if list(parent.glob(".out.partial-*")):
            proc.send_signal(signal.SIGSTOP)
            info = os.waitid(os.P_PID, proc.pid, os.WSTOPPED | os.WEXITED | os.WNOWAIT)
            if info.si_code == os.CLD_STOPPED and _midway(parent, out, earlier_inode):
                return True
            proc.send_signal(signal.SIGCONT)
            proc.communicate(timeout=300)
            return False
        time.sleep(0.005)  # polling the folder: no clock decides anything
    proc.communicate(timeout=300)
    return False


def _started_and_frozen_midway(parent: Path, earlier_results: Path, attempts: int = 3):
    """The earlier results copied to ``parent / "out"``, a run over them started and stopped midway."""
    out = parent / "out"
    for _ in range(attempts):
        shutil.rmtree(out, ignore_errors=True)
        shutil.copytree(earlier_results, out)
        proc = _start(out)
        if _frozen_midway(proc, parent, out, out.stat().st_ino):
            return proc, out
    pytest.fail(f"the run was never caught midway in {attempts} runs")


@pytest.fixture(scope="module")
def earlier_results(tmp_path_factory):
    """The demo's results, written once by a real process (``mastplan demo``); the tests take copies, and
    the reproducibility test compares a second run with them."""
    out = tmp_path_factory.mktemp("earlier") / "out"
    subprocess.run([sys.executable, "-m", "cli.main", "demo", "--out", str(out), "-q"], check=True)
    return out


@pytest.mark.parametrize("how", [signal.SIGTERM, signal.SIGINT])
def test_a_run_stopped_midway_leaves_the_earlier_results_and_no_partial_folder(tmp_path, earlier_results, how):
    before = file_digests(earlier_results)
    proc, out = _started_and_frozen_midway(tmp_path, earlier_results)
    proc.send_signal(how)  # pending while the process is stopped: it lands midway
    proc.send_signal(signal.SIGCONT)
    _, err = proc.communicate(timeout=300)
    assert proc.returncode in (130, 143), (proc.returncode, err)
    assert "earlier results are untouched" in err and "Traceback" not in err
    assert file_digests(out) == before
    assert not list(tmp_path.glob(".out.*"))


def test_a_run_killed_outright_is_cleaned_up_by_the_next(tmp_path, earlier_results):
    before = file_digests(earlier_results)
    proc, out = _started_and_frozen_midway(tmp_path, earlier_results)
    proc.kill()  # SIGKILL: nothing can clean up now
    proc.wait(timeout=300)
    assert file_digests(out) == before  # the earlier results are still whole
    assert list(tmp_path.glob(".out.partial-*"))  # and the killed run's temporary folder is left
    # The next run (the demo without its surface prediction, the quicker study) removes it.
    site = demo_site_without_surface(tmp_path)
    subprocess.run(
        [sys.executable, "-m", "cli.main", "run", str(site), "--out", str(out), "--overwrite", "-q", "--no-plots"],
        check=True,
    )
    assert not list(tmp_path.glob(".out.*"))  # the killed run's temporary folder is gone
    assert (out / "summary.json").exists()


def _children(pid: int) -> list[int]:
    """The processes whose parent is ``pid`` (from /proc)."""
    found = []
    for stat in Path("/proc").glob("[0-9]*/stat"):
        try:
            fields = stat.read_text().rsplit(")", 1)[1].split()
        except (OSError, IndexError):
            continue
        if int(fields[1]) == pid:
            found.append(int(stat.parent.name))
    return found


def _alive(pid: int) -> bool:
    """Whether ``pid`` is a process that has not ended (a zombie waiting for its reaper has ended)."""
    try:
        return Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()[0] != "Z"
    except (OSError, IndexError):
        return False


def _writers_at_work(proc, parent: Path) -> list[int]:
    """Wait until a writer process has begun a file in the run's temporary folder; the run's children then."""
    while proc.poll() is None:
        if any(any(folder.iterdir()) for folder in parent.glob(".out.partial-*")):
            return _children(proc.pid)
        time.sleep(0.005)  # polling the folder: no clock decides anything
    return []


@pytest.mark.skipif(not Path("/proc/self/stat").exists(), reason="reads processes from /proc")
def test_writer_processes_end_quietly_when_the_run_is_killed(tmp_path):
    """A run SIGKILLed while its writer processes write: they end by themselves, without a traceback."""
    out = tmp_path / "out"
    for _ in range(3):  # a run that finished before a writer was seen is run again
        proc = _start(out)
        writers = _writers_at_work(proc, tmp_path)
        if writers:
            break
        proc.communicate(timeout=300)
        shutil.rmtree(out, ignore_errors=True)
    else:
        pytest.fail("no writer process was ever seen at work")
    proc.kill()  # SIGKILL: the writers are not told
    proc.wait(timeout=300)
    deadline = time.monotonic() + 300.0  # an upper bound only: fails solely when a writer never ends
    while any(_alive(pid) for pid in writers) and time.monotonic() < deadline:
        time.sleep(0.01)
    left = [pid for pid in writers if _alive(pid)]
    for pid in left:
        os.kill(pid, signal.SIGKILL)
    assert not left, f"writer processes {left} outlived the run"
    err = proc.stderr.read()  # every writer has ended: the pipe is at its end
    assert "Traceback" not in err and "Error" not in err, err
    assert not out.exists()  # nothing reached the output folder; the temporary one is the next run's to remove


def test_same_inputs_give_byte_identical_outputs(tmp_path, earlier_results):
    subprocess.run([sys.executable, "-m", "cli.main", "demo", "--out", str(tmp_path / "b"), "-q"], check=True)
    a, b = file_digests(earlier_results), file_digests(tmp_path / "b")
    assert a == b and len(a) >= 15
    import json

    summary = json.loads((earlier_results / "summary.json").read_text())
    assert summary["tool"]["version"] and len(summary["input"]["sha256"]) == 64
