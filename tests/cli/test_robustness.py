"""No lost work (runs killed midway), reproducible outputs."""

import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest
from tests_support import DEMO_SITE, file_digests


def _start(out: Path):
    return subprocess.Popen(
        [sys.executable, "-m", "cli.main", "run", str(DEMO_SITE), "--out", str(out), "--overwrite", "-q"],
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
    )


def _wait_for_partial(parent: Path, proc, timeout: float = 60.0) -> bool:
    end = time.monotonic() + timeout
    while time.monotonic() < end and proc.poll() is None:
        if list(parent.glob(".out.partial-*")):
            return True
        time.sleep(0.01)
    return False


@pytest.fixture
def earlier(tmp_path):
    out = tmp_path / "out"
    subprocess.run(
        [sys.executable, "-m", "cli.main", "run", str(DEMO_SITE), "--out", str(out), "-q", "--no-plots"], check=True
    )
    return out, file_digests(out)


@pytest.mark.parametrize("how", [signal.SIGTERM, signal.SIGINT])
def test_a_run_stopped_midway_leaves_the_earlier_results_and_no_partial_folder(tmp_path, earlier, how):
    out, before = earlier
    proc = _start(out)
    assert _wait_for_partial(tmp_path, proc), "the run never began writing"
    proc.send_signal(how)
    _, err = proc.communicate(timeout=60)
    assert proc.returncode in (130, 143) and "earlier results are untouched" in err and "Traceback" not in err
    assert file_digests(out) == before
    assert not list(tmp_path.glob(".out.*"))


def test_a_run_killed_outright_is_cleaned_up_by_the_next(tmp_path, earlier):
    out, before = earlier
    proc = _start(out)
    assert _wait_for_partial(tmp_path, proc)
    proc.kill()  # SIGKILL: nothing can clean up now
    proc.wait(timeout=60)
    assert file_digests(out) == before  # the earlier results are still whole
    subprocess.run(
        [sys.executable, "-m", "cli.main", "run", str(DEMO_SITE), "--out", str(out), "--overwrite", "-q", "--no-plots"],
        check=True,
    )
    assert not list(tmp_path.glob(".out.*"))  # the killed run's temporary folder is gone
    assert (out / "summary.json").exists()


def test_same_inputs_give_byte_identical_outputs(tmp_path):
    for name in ("a", "b"):
        subprocess.run([sys.executable, "-m", "cli.main", "demo", "--out", str(tmp_path / name), "-q"], check=True)
    a, b = file_digests(tmp_path / "a"), file_digests(tmp_path / "b")
    assert a == b and len(a) >= 15
    import json

    summary = json.loads((tmp_path / "a" / "summary.json").read_text())
    assert summary["tool"]["version"] and len(summary["input"]["sha256"]) == 64
