"""A direct evaluation of the physical-optics sum of geo.optics.kernel' module notes, for the tests.

Written from the formulas, not from the kernel: every facet-receiver pair on its own, in double
precision, with the vector products as written (no component form, no tables, no chunks)::

    E_s = -(j k / 4 pi) sum_p F_p A_p w_p S(g.a_p) S(g.b_p) exp(-j k (r1 + r2)) / (r1 r2)
    F_p = (s1 . e_r)(n . e) - t (r2 . e)(n . e_r) + (e . e_r)(|n . s1| + |n . r2|)

(Knott, Shaeffer and Tuley, Radar Cross Section, 2nd ed., 1993, ch. 5; Balanis, Advanced
Engineering Electromagnetics, 1989, sec. 7.10), with ``F -> -Gamma F`` on lossy ground at the mean
grazing angle (Beckmann and Spizzichino, 1963, ch. 3), Gamma from geo.radio.reflection at each pair.
"""

from __future__ import annotations

import math

import numpy as np

from geo.radio.reflection import reflection_coefficient_h


def _horizontal(d):
    e = np.array([-d[1], d[0], 0.0])
    return e / np.linalg.norm(e)


def reference_fields(
    sources,
    facets,
    receivers,
    wavelength_m,
    eps=None,
    sigma=None,
    source_visible=None,
    horizon_tan=None,
    weights=None,
    far=False,
):
    """Field per source and receiver (S, R); ``weights`` (P, R) a real factor per pair."""
    k = 2.0 * math.pi / wavelength_m
    sources, receivers = np.atleast_2d(sources), np.atleast_2d(receivers)
    out = np.zeros((len(sources), len(receivers)), dtype=complex)
    w_facet = np.ones(len(facets)) if facets.weights is None else facets.weights
    for s, src in enumerate(sources):
        for p in range(len(facets)):
            c, a, b = facets.centres_m[p], facets.edge_a_m[p], facets.edge_b_m[p]
            normal = np.cross(a, b)
            area = np.linalg.norm(normal)
            n = normal / area
            s1 = (c - src) / np.linalg.norm(c - src)
            r1 = np.linalg.norm(c - src)
            if facets.two_sided and n @ s1 > 0.0:
                n = -n  # turned toward the source
            if n @ s1 >= 0.0 or (source_visible is not None and not source_visible[s, p]):
                continue  # not lit
            e = _horizontal(s1)
            for j, q in enumerate(receivers):
                if far:
                    r2_hat, wave = q, np.exp(1j * k * (q @ c))
                else:
                    r2 = np.linalg.norm(q - c)
                    r2_hat, wave = (q - c) / r2, np.exp(-1j * k * r2) / r2
                nr2 = n @ r2_hat
                if not facets.two_sided and nr2 <= 0.0:
                    continue  # a ground facet radiates only upward
                if horizon_tan is not None and r2_hat[2] <= horizon_tan[p] * math.hypot(r2_hat[0], r2_hat[1]):
                    continue
                e_r = _horizontal(r2_hat)
                t = 1.0 if nr2 > 0.0 else -1.0
                f = (s1 @ e_r) * (n @ e) - t * (r2_hat @ e) * (n @ e_r) + (e @ e_r) * (abs(n @ s1) + abs(nr2))
                if eps is not None:
                    psi = 0.5 * (math.asin(min(abs(n @ s1), 1.0)) + math.asin(min(abs(nr2), 1.0)))
                    f = -reflection_coefficient_h(psi, eps, sigma, wavelength_m) * f
                g = k * (s1 - r2_hat)
                shape = np.sinc((g @ a) / (2.0 * math.pi)) * np.sinc((g @ b) / (2.0 * math.pi))  # S(t) = sinc(t / 2 pi)
                pair = 1.0 if weights is None else weights[p, j]
                out[s, j] += f * area * w_facet[p] * pair * shape * np.exp(-1j * k * r1) / r1 * wave
    return -1j * k / (4.0 * math.pi) * out
