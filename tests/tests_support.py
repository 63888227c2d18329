"""Paths and texts shared by tests (invented test values)."""

import dataclasses
import os
import subprocess
import sys
import time
from pathlib import Path

DEMO_SITE = Path(__file__).resolve().parents[1] / "demo_airfield" / "site.toml"

#: A valid site file on flat ground (invented test values).
BASE_SITE = """
units = "m"
[site]
name = "Test strip"
[runway]
threshold = { lat = -35.41, lon = 148.92, elevation = 512.0 }
end = { lat = -35.42, lon = 148.95, elevation = 515.0 }
width = 45
[glide_path]
angle_deg = 3.0
localizer_mhz = 109.30
array = "null-reference"
[mast]
side = "right"
offset = 130
setback = 290
base_elevation = 511.2
"""

#: A flat site in feet (invented values): the mast 1,000 ft past the threshold, 400 ft from the centre line.
FEET_SITE = """
units = "ft"
[site]
name = "Flat strip in feet"
[runway]
threshold = { lat = -35.41, lon = 148.92, elevation = 1680 }
end = { lat = -35.42, lon = 148.95, elevation = 1690 }
width = 150
code = 4
[glide_path]
angle_deg = 3.0
localizer_mhz = 109.30
array = "null-reference"
[mast]
side = "right"
offset = 400
setback = 1000
"""


#: A site file's table that turns the surface prediction off, for the tests that do not look at it: it is
#: the study's slowest part (most of a study's time on the demo; tests/optics/test_surface_*.py test it).
NO_SURFACE = "\n[prediction]\nsurface = false\n"


def without_surface(spec):
    """The site ``spec`` with the surface prediction off (``prediction.surface = false``)."""
    return dataclasses.replace(spec, prediction=dataclasses.replace(spec.prediction, surface=False))


def demo_site_without_surface(folder: Path) -> Path:
    """The demo site file copied into ``folder``, its DEM named by absolute path, the surface prediction off."""
    text = DEMO_SITE.read_text(encoding="utf-8")
    dem = (DEMO_SITE.parent / "dem.tif").as_posix()
    assert 'dem = "dem.tif"' in text and "[prediction]" not in text
    path = Path(folder) / "demo_site.toml"
    path.write_text(text.replace('dem = "dem.tif"', f'dem = "{dem}"') + NO_SURFACE, encoding="utf-8")
    return path


#: Run before mastplan by ``on_a_terminal(..., ticking_clock=True)``: click's progress bar reads a clock that
#: advances one second at each reading. click shows the time left only once a second has passed since its
#: last estimate (``click._termui_impl.ProgressBar.make_step``), so without it the time left appears or not
#: by the machine's speed; with it, it appears at the first step whatever the speed.
_TICKING_CLOCK = """
import itertools, time, types
import click._termui_impl
ticks = itertools.count(time.time())
click._termui_impl.time = types.SimpleNamespace(time=lambda: float(next(ticks)))
from cli.main import entry
entry()
"""


def on_a_terminal(*args, ticking_clock: bool = False):
    """Run mastplan with stderr on a pseudo-terminal; return (exit code, what the terminal showed).

    ``ticking_clock``: click's progress bar reads a clock that advances a second at each reading
    (:data:`_TICKING_CLOCK`), so that it shows the time left from its first step.
    """
    import pty

    command = ["-c", _TICKING_CLOCK] if ticking_clock else ["-m", "cli.main"]
    master, slave = pty.openpty()
    proc = subprocess.run(
        [sys.executable, *command, *map(str, args)], stdout=subprocess.PIPE, stderr=slave, timeout=300
    )
    os.close(slave)
    data = b""
    while True:
        try:
            chunk = os.read(master, 4096)
        except OSError:
            break
        if not chunk:
            break
        data += chunk
    os.close(master)
    return proc.returncode, data


def computed_once(tmp_path_factory, name: str, compute):
    """``compute()``, computed by one pytest-xdist worker of the session and shared with the others.

    For a costly fixture of a module whose tests the workers may share between them (``--dist
    worksteal``): the first worker to need it computes it and leaves it pickled beside the workers'
    temporary folders; a worker that needs it meanwhile waits on the file lock until it is there.
    Without xdist it is simply computed. The value must pickle and not refer to a worker's state.
    """
    import fcntl
    import pickle

    if not os.environ.get("PYTEST_XDIST_WORKER"):
        return compute()
    shared = tmp_path_factory.getbasetemp().parent  # one folder per session, above each worker's own
    path = shared / f"{name}.pickle"
    with open(shared / f"{name}.lock", "w") as lock:
        fcntl.flock(lock, fcntl.LOCK_EX)
        if path.exists():
            return pickle.loads(path.read_bytes())
        value = compute()
        partial = path.with_suffix(".partial")
        partial.write_bytes(pickle.dumps(value))
        partial.replace(path)
        return value


def wait_for_path(path: str) -> None:
    """Return once ``path`` exists: a task that keeps a writer process busy until the test creates it."""
    while not os.path.exists(path):
        time.sleep(0.01)


def file_digests(folder: Path) -> dict:
    """SHA-256 of every file under ``folder``, by relative path (to compare output folders byte by byte)."""
    import hashlib

    return {
        str(p.relative_to(folder)): hashlib.sha256(p.read_bytes()).hexdigest()
        for p in sorted(folder.rglob("*"))
        if p.is_file()
    }
