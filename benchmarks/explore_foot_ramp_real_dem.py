"""Exploration: the surface's far-field DDM at one elevation against the other elevations computed with it.

Each receiver of the surface integral has its own area and its own foot ramp, the taper at the
foot of the mast over half the distance to its nearest specular point
(geo.optics.surface_facets.AreaLimits.pair_weights). Until 2026-12 the ramp was common to all the
receivers of one call (the smallest of them, which the highest elevation set), so on rough real
ground, where the ground under the mast is far from the plane, the DDM at one elevation moved
with the set it was computed in (0.178, 0.188 and 0.260 at 0.45 theta for the three sets below).
Now the three figures must agree; the smallest ramp of each set (the old common one) is printed
beside them.

Site: matplotlib's real sample DEM (tests/jacksboro.py), relief scaled by 0.1, a runway along the
meridian 84.25 W with its threshold at 36.60 N (the rough site of tests/optics/test_surface_real_dem.py),
null-reference array 120 m right, 300 m past the threshold. Prints the DDM at 0.45 theta (the
lower edge of the below-path band, Annex 10 Vol I 3.1.5.6.5, from memory) computed alone, in the
study's below-path set (0.30 theta to the path), and in a set reaching 1.8 theta, with each set's
foot ramp. Never fails.
"""

from __future__ import annotations

import math
import sys
import tempfile
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests"))  # the sample DEM's reader, shared with the real-DEM tests

from jacksboro import jacksboro_sheet, site_text  # noqa: E402

from geo.ground.dem import Dem  # noqa: E402
from geo.optics.surface_facets import area_limits  # noqa: E402
from geo.optics.surface_prediction import FAR_RANGE_M, surface_far_ddm  # noqa: E402
from geo.site.site_file import load_site  # noqa: E402
from geo.study.array_setup import array_model  # noqa: E402
from geo.study.site_study import run_study  # noqa: E402


def main() -> None:
    sheet = jacksboro_sheet()
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        original, _, lon = sheet.meridian_pair(folder, 0.1, 196, 60)
        threshold, end = sheet.runway(sheet.scaled(0.1), 36.60, lon, 180.0)
        path = folder / "site.toml"
        path.write_text(site_text(original, "Jacksboro rough site", threshold, end))
        r = run_study(load_site(path))
        t, mast = r.terrain, r.mast
        shifts = [a.shift_toward_runway_m for a in r.antennas]
        gradients = (t.plane.forward_gradient, t.plane.lateral_gradient)
        model = array_model(r.spec, t.heights_m, shifts, r.feeds, r.wavelength_m, *gradients)
        theta = math.radians(r.spec.angle_deg)
        edge = 0.45 * theta
        top = math.radians(r.surface.path_angle_deg)
        sets = {
            "alone": np.array([edge]),
            "below-path set (0.30 theta to the path)": np.unique(np.r_[np.linspace(0.3 * theta, top, 61), edge]),
            "0.30 to 1.8 theta": np.linspace(0.3 * theta, 1.8 * theta, 61),
        }
        n = model.normal
        angle = r.surface.path_angle_deg
        print(f"rough real site: plane RMS {t.plane.rms_residual_m:.2f} m, surface path angle {angle:.4f} deg")
        print("set                                      smallest ramp m   DDM at 0.45 theta")
        with Dem.open(r.spec.terrain) as dem:

            def heights(u, w):
                ground = dem.sample_frame(r.runway.frame, mast.setback_m - np.asarray(u), mast.offset_m - np.asarray(w))
                return ground - t.plane.elevation_at_mast_m

            for name, e in sets.items():
                rx = FAR_RANGE_M * np.column_stack([np.cos(e), 0 * e, np.sin(e)])
                rx[:, 2] += (n[0] * rx[:, 0] + n[1] * rx[:, 1]) / n[2]  # height above the plane
                ants = model.positions_m.copy()
                ants[:, 2] += (n[0] * ants[:, 0] + n[1] * ants[:, 1]) / n[2]
                ramp = area_limits(ants, rx, model.wavelength_m).foot_ramp_m
                values = surface_far_ddm(model, heights, t.cell_size_m, e, r.prediction.sbo_scale)
                print(f"{name:40} {ramp:14.1f}   {float(np.interp(edge, e, values)):.4f}")


if __name__ == "__main__":
    main()
