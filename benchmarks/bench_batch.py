"""Batch of 100 invented runways from one CSV on 2 processes, as `mastplan batch` runs them.

Prints the wall time; never fails by timing. Requirement for reference: under 60 s on 2 cores.
"""

from __future__ import annotations

import csv
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
from pyproj import Geod

ROOT = Path(__file__).resolve().parents[1]


def write_runways(path: Path, count: int = 100) -> None:
    rng = np.random.default_rng(100)
    geod = Geod(ellps="WGS84")
    columns = [
        "units",
        "site.name",
        "runway.threshold.lat",
        "runway.threshold.lon",
        "runway.threshold.elevation",
        "runway.end.lat",
        "runway.end.lon",
        "runway.end.elevation",
        "runway.width",
        "glide_path.angle_deg",
        "glide_path.frequency_mhz",
        "glide_path.array",
        "mast.side",
        "mast.offset",
        "mast.setback",
    ]
    arrays = ["null-reference", "sideband-reference", "capture-effect"]
    with path.open("w", newline="") as fh:
        writer = csv.writer(fh)
        writer.writerow(columns)
        for i in range(count):
            lat, lon = rng.uniform(-60, 60), rng.uniform(-179, 179)
            bearing, length = rng.uniform(0, 360), rng.uniform(1800, 3500)
            lon2, lat2, _ = geod.fwd(lon, lat, bearing, length)
            elev = rng.uniform(0, 1500)
            writer.writerow(
                [
                    "m",
                    f"Invented runway {i + 1}",
                    round(lat, 6),
                    round(lon, 6),
                    round(elev, 1),
                    round(lat2, 6),
                    round(lon2, 6),
                    round(elev + rng.uniform(-5, 5), 1),
                    45,
                    3.0,
                    [329.15 + 0.15 * k for k in range(40)][i % 40],
                    arrays[i % 3],
                    "left" if i % 2 else "right",
                    round(rng.uniform(90, 180)),
                    round(rng.uniform(250, 350)),
                ]
            )


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        runways = Path(tmp) / "runways.csv"
        write_runways(runways)
        start = time.perf_counter()
        proc = subprocess.run(
            [sys.executable, "-m", "cli.main", "batch", str(runways), "--out", f"{tmp}/out", "-j", "2", "-q"], cwd=ROOT
        )
        elapsed = time.perf_counter() - start
        done = sum(1 for row in csv.DictReader((Path(tmp) / "out" / "index.csv").open()) if row["status"] == "done")
        print(f"batch of 100 runways on 2 processes: {elapsed:.1f} s wall, {done} done (exit code {proc.returncode})")


if __name__ == "__main__":
    main()
