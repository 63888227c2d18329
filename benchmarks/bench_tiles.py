"""The demo study on its DEM as one file and cut into four tiles, with and without a datum conversion.

Prints the median study time of each (library call, 5 runs); never fails by timing.
"""

from __future__ import annotations

import statistics
import tempfile
import time
from pathlib import Path

import rasterio
from rasterio.windows import Window

from geo.site.site_file import load_site
from geo.study.site_study import run_study

ROOT = Path(__file__).resolve().parents[1]
SITE = ROOT / "demo_airfield" / "site.toml"
DEM = ROOT / "demo_airfield" / "dem.tif"


def cut_in_four(folder: Path) -> list[str]:
    names = []
    with rasterio.open(DEM) as ds:
        rows, cols = [0, ds.height // 2, ds.height], [0, ds.width // 2, ds.width]
        for i in range(2):
            for j in range(2):
                w = Window(cols[j], rows[i], cols[j + 1] - cols[j], rows[i + 1] - rows[i])
                profile = ds.profile | {"width": w.width, "height": w.height, "transform": ds.window_transform(w)}
                name = f"tile_{i}_{j}.tif"
                with rasterio.open(folder / name, "w", **profile) as dst:
                    dst.write(ds.read(1, window=w), 1)
                names.append(name)
    return names


def median_s(path: Path, runs: int = 5) -> float:
    spec = load_site(path)
    run_study(spec)  # warm caches (transformers, imports)
    times = []
    for _ in range(runs):
        t0 = time.perf_counter()
        run_study(spec)
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        names = cut_in_four(folder)
        text = SITE.read_text(encoding="utf-8")
        tiled = text.replace('dem = "dem.tif"', "dem = [" + ", ".join(f'"{n}"' for n in names) + "]")
        (folder / "tiles.toml").write_text(tiled, encoding="utf-8")
        (folder / "one.toml").write_text(text.replace('dem = "dem.tif"', f'dem = "{DEM}"'), encoding="utf-8")
        print(f"study, one file:        {median_s(folder / 'one.toml'):.3f} s")
        print(f"study, four tiles:      {median_s(folder / 'tiles.toml'):.3f} s")
        undulation = tiled.replace("width = 45\n", 'width = 45\nvertical_datum = "WGS84"\ngeoid_undulation = -20.5\n')
        undulation = undulation.replace("[terrain]\n", '[terrain]\nvertical_datum = "EGM96"\n')
        undulation = undulation.replace("612.0", "591.5").replace("606.4", "585.9").replace("611.4", "590.9")
        (folder / "undulation.toml").write_text(undulation, encoding="utf-8")
        print(f"four tiles + published undulation: {median_s(folder / 'undulation.toml'):.3f} s")
        grid = undulation.replace("geoid_undulation = -20.5\n", "")
        (folder / "grid.toml").write_text(grid, encoding="utf-8")
        try:
            print(f"four tiles + EGM96 grid:           {median_s(folder / 'grid.toml'):.3f} s")
        except Exception as exc:  # no grid here: say so
            print(f"four tiles + EGM96 grid: not run ({exc})")


if __name__ == "__main__":
    main()
