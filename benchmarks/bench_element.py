"""The antenna element: what the generic element pattern moves on the demo, against isotropic elements.

The demo site (its DEM, the surface prediction with its convergence check) run twice, with
``[prediction] element = "generic"`` (the default) and ``"isotropic"``: the image prediction's path
angle and half-sectors, the RDH of its straight fit, and the surface prediction's fitted and
far-field path angles, half-sectors and RDH. Requirement for reference (the element issue): the
image prediction's path angle and half-sectors move by at most 0.001 deg.

Prints figures; never fails by timing. Takes a few minutes (two full studies).
"""

from __future__ import annotations

import dataclasses
import time
from pathlib import Path

from geo.site.site_file import load_site
from geo.study.site_study import run_study

SITE = Path(__file__).resolve().parents[1] / "demo_airfield" / "site.toml"


def figures(element: str) -> dict:
    spec = load_site(SITE)
    spec = dataclasses.replace(spec, prediction=dataclasses.replace(spec.prediction, element=element))
    start = time.perf_counter()
    result = run_study(spec)
    took = time.perf_counter() - start
    p, s, sector = result.prediction, result.surface, result.surface_sector
    thr = spec.threshold.elevation_m
    return {
        "image path angle [deg]": p.path_angle_deg,
        "image half-sector below [deg]": p.half_sector_below_deg,
        "image half-sector above [deg]": p.half_sector_above_deg,
        "image RDH of the 2-10 NM fit [m]": p.straight_fit[0] + result.mast.plane_elevation_m - thr,
        "surface fitted path angle [deg]": sector.fitted_angle_deg if sector else float("nan"),
        "surface far-field path angle [deg]": sector.far_angle_deg if sector else float("nan"),
        "surface half-sector below [deg]": s.half_sector_below_deg if s else float("nan"),
        "surface half-sector above [deg]": s.half_sector_above_deg if s else float("nan"),
        "surface RDH [m]": sector.rdh_m if sector else float("nan"),
        "study time [s]": took,
    }


def main() -> None:
    generic, isotropic = figures("generic"), figures("isotropic")
    print("Demo site, generic element against isotropic elements:")
    for key in generic:
        g, i = generic[key], isotropic[key]
        print(f"  {key:40s} generic {g:.6f}  isotropic {i:.6f}  moved {g - i:+.6f}")


if __name__ == "__main__":
    main()
