"""Exploration: path bends over a real DEM against the three roughness verdicts at the same sites.

The DEM is matplotlib's sample ``jacksboro_fault_dem.npz`` (a real 3-arc-second USGS-derived DEM,
344 x 403 cells; its ``ymin``/``ymax`` fields are swapped, so the sheet's top is taken from the
larger). Its relief (236-1,076 m) is scaled down about the sheet's mean to airfield-like ground
by a few factors; at three sites a runway of 2.5 km heading west gets a null-reference glide path
(mast 120 m right of the centre line, 300 m past the threshold), and the study reports the
roughness verdicts of the fitted zone (Rayleigh, Fraunhofer, IEV: geo.ground.roughness) beside the
95 % bends per segment of the surface prediction (geo.optics.surface_prediction). Prints a table;
never fails. A 3-arc-second DEM has ~90 m posts, so its bilinear surface holds no detail below
that: the bends come from the larger undulations only.
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests"))  # the sample DEM's reader, shared with the real-DEM tests

from jacksboro import jacksboro_sheet, site_text, write_raster  # noqa: E402

from geo.airfield.frame import geodesic_forward  # noqa: E402
from geo.site.site_file import load_site  # noqa: E402
from geo.study.site_study import run_study  # noqa: E402

SITES = [(36.60, -84.25), (36.55, -84.18), (36.66, -84.32)]  # thresholds (lat, lon) inside the sheet
SCALES = [0.01, 0.04, 0.1, 0.2]


def main() -> None:
    print("site  scale  rms_m  rayleigh fraunhofer iev | bends 95 % (cov-A, A-B, B-C) DDM | surface-image angle deg")
    sheet = jacksboro_sheet()
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        for scale in SCALES:
            z = sheet.scaled(scale)
            dem = write_raster(folder / f"jacksboro_{scale:g}.tif", z, "EPSG:4326", sheet.transform())
            for i, (lat, lon) in enumerate(SITES):
                lat_e, lon_e, _ = geodesic_forward(lat, lon, 270.0, 2500.0)
                ends = (lat, lon, sheet.height_at(lat, lon, z)), (lat_e, lon_e, sheet.height_at(lat_e, lon_e, z))
                text = site_text(dem, f"Jacksboro sheet, scaled {scale}", *ends)  # category I by default
                site = folder / f"site_{i}.toml"
                site.write_text(text)
                t0 = time.process_time()
                try:
                    r = run_study(load_site(site))
                except Exception as exc:  # noqa: BLE001 (an exploration: report and go on)
                    print(f"{i}     {scale:<6g} study failed: {exc}")
                    continue
                verdicts = {v.criterion: ("smooth" if v.smooth else "ROUGH") for v in r.terrain.roughness}
                bends = ", ".join(f"{s.bend_95_ddm:.4f}" for s in r.surface.structure)
                diff = r.surface.path_angle_deg - r.prediction.path_angle_deg
                conv = r.surface.converged
                moves = "/".join(
                    "n/a" if conv[k]["path_angle_change_deg"] is None else f"{conv[k]['path_angle_change_deg']:.4f}"
                    for k in ("sampling_doubled", "area_doubled")
                )
                print(
                    f"{i}     {scale:<6g} {r.terrain.plane.rms_residual_m:5.2f}  {verdicts['rayleigh']:8} "
                    f"{verdicts['fraunhofer']:10} {verdicts['iev']:6} | {bends} | {diff:+.4f} "
                    f"(angle moves {moves} deg with sampling/area doubled, {time.process_time() - t0:.1f} s CPU)"
                )


if __name__ == "__main__":
    main()
