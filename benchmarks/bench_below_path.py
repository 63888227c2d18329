"""Below-path figures, the two-carrier detector against a simulated receiver, roughness per family.

Prints, never fails: for every array on flat ground (332 MHz, 3 deg, mast 300 m / 120 m) the angle
where the DDM reaches 0.22 and the lowest DDM in the band (Annex 10 Vol I 3.1.5.6.5, from memory);
for the capture-effect array the course carrier at 0.45 theta and the combined course and clearance
figures; the largest difference between the detector model and an FFT of a simulated envelope
detector over random two-carrier cases; the grazing angle of each receiver family at the demo; and
the time the checks add to a study.
"""

from __future__ import annotations

import time
from pathlib import Path

import numpy as np

from geo.radio.arrays import ARRAY_TYPES, antenna_heights_m, proximity_shifts_m
from geo.radio.below_path import check_below_path
from geo.radio.clearance import assess_capture_effect, detected_ddm
from geo.radio.prediction import ArrayModel, far_field_ddm, predict_path
from geo.site.channels import wavelength_m

DEMO = Path(__file__).resolve().parents[1] / "demo_airfield" / "site.toml"


def flat_figures() -> None:
    lam = wavelength_m(332.0)
    for array, t in ARRAY_TYPES.items():
        heights = antenna_heights_m(array, lam, 3.0)
        model = ArrayModel.build(
            heights, proximity_shifts_m(heights, 120.0), t.csb_feed, t.sbo_feed, lam, phase_for_angle_deg=3.0
        )
        p = predict_path(model, 3.0, 300.0, 120.0)
        for down_to in (0.45, 0.30):
            c = check_below_path(
                lambda e, m=model, k=p.sbo_scale: far_field_ddm(m, e, k),
                3.0,
                p.path_angle_deg,
                down_to,
                carrier_of_elevation=lambda e, m=model: np.abs(m.far_fields(e)[0]),
            )
            print(
                f"{array:19s} down to {down_to:.2f} theta: 0.22 at {c.reach_deg:.4f} deg "
                f"({c.reach_fraction:.4f} theta), "
                f"lowest {c.lowest_ddm:.4f} at {c.lowest_at_deg:.4f} deg, DDM at edge {c.ddm_at_down_to:.4f}, "
                f"carrier at edge {c.carrier_at_down_to_db:.2f} dB, pass {c.passed}"
            )
        if t.clearance_csb_feed:
            for down_to in (0.45, 0.30):
                a = assess_capture_effect(
                    model, p.sbo_scale, 3.0, p.path_angle_deg, t.clearance_csb_feed, t.clearance_sbo_feed, 0.12, down_to
                )
                c, d = a.combined, a.design
                print(
                    f"  with clearance, down to {down_to:.2f}: weak course carrier below "
                    f"{a.course_only.weak_carrier_below_deg:.4f} deg; clearance CSB {abs(d.csb_feed[1]):.4f}, "
                    f"SBO {abs(d.sbo_feed[0]):.4f}, margin {d.capture_margin_db:.2f} dB; combined 0.22 at "
                    f"{c.reach_deg:.4f} deg ({c.reach_fraction:.4f} theta), lowest {c.lowest_ddm:.4f}, "
                    f"DDM at edge {c.ddm_at_down_to:.4f} (course {a.course_ddm_at_down_to:.4f}, clearance "
                    f"{a.clearance_ddm_at_down_to:.4f}), path {a.combined_path_angle_deg:.5f} deg, "
                    f"half-sector DDM {a.combined_ddm_at_half_sector:.5f}, pass {c.passed}"
                )


def fft_check() -> None:
    fs = n = 1_000_000
    t = np.arange(n) / fs
    a, b = np.sin(2 * np.pi * 90 * t), np.sin(2 * np.pi * 150 * t)
    rng = np.random.default_rng(3)
    worst = 0.0
    for x in (0.05, 0.2, 0.5, 0.9, 1.0, 1.3, 3.0, 10.0):
        for _ in range(3):
            r1 = rng.uniform(-0.3, 0.3) * np.exp(1j * rng.uniform(-0.3, 0.3))
            r2 = rng.uniform(-0.5, 0.5) * np.exp(1j * rng.uniform(-0.3, 0.3))
            c1, c2 = np.exp(1j * rng.uniform(0, 6)), x * np.exp(1j * rng.uniform(0, 6))
            sig = c1 * (1 + 0.4 * (a + b)) + c1 * r1 * (b - a)
            sig = sig + (c2 * (1 + 0.4 * (a + b)) + c2 * r2 * (b - a)) * np.exp(2j * np.pi * 8000 * t)
            sp = np.abs(np.fft.rfft(np.abs(sig))) / n
            measured = 2 * (sp[150] - sp[90]) / sp[0]
            worst = max(worst, abs(measured - detected_ddm(c1, c1 * r1, 1.0, c2, c2 * r2, 1.0)[0]))
    print(
        "two-carrier detector against the FFT of a simulated envelope detector: "
        f"worst |error| {worst:.2e} DDM (24 cases)"
    )


def demo_families() -> None:
    from geo.site.site_file import load_site
    from geo.study.site_study import run_study

    spec = load_site(DEMO)
    start = time.perf_counter()
    result = run_study(spec)
    total = time.perf_counter() - start
    for f in result.roughness_families:
        r = f.verdicts[0]
        print(
            f"demo {f.name:20s} grazing {f.grazing_deg:.4f} deg, zone share {f.zone_share:.3f}, judged {f.judged}, "
            f"Rayleigh limit {r.limit_m:.4f} m"
        )
    c = result.below_path
    print(f"demo below path: 0.22 at {c.reach_deg:.4f} deg ({c.reach_fraction:.4f} theta), lowest {c.lowest_ddm:.4f}")
    print(f"demo study {total:.2f} s in all")


def main() -> None:
    flat_figures()
    fft_check()
    demo_families()


if __name__ == "__main__":
    main()
