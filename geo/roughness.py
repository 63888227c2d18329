"""Roughness criteria for the reflecting ground.

A surface reflects specularly when its height irregularities are small
against ``lambda / sin(psi)`` at grazing angle ``psi``. Three criteria of
different strictness are in use; they differ by more than ten times, so all
three are reported.

References
----------
.. [1] Ulaby, F. T., Moore, R. K. and Fung, A. K., *Microwave Remote Sensing*,
       Vol. II, Addison-Wesley, 1982, sec. 12-2 (Rayleigh criterion
       ``s < lambda / (8 cos(theta_i))``, Fraunhofer criterion
       ``s < lambda / (32 cos(theta_i))``, ``s`` the RMS height and
       ``theta_i`` the incidence angle from the normal, so
       ``cos(theta_i) = sin(psi)``); from memory.
.. [2] IEC 60050-705, International Electrotechnical Vocabulary, 705-04-15
       (specular reflection when ``h sin(psi) / lambda < 1/100``).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

__all__ = ["CRITERIA", "RoughnessVerdict", "roughness_limit_m", "roughness_verdicts"]

#: (name, divisor k in lambda / (k sin psi), source)
CRITERIA = (
    ("rayleigh", 8.0, "Rayleigh criterion, Ulaby, Moore & Fung (1982) Vol. II sec. 12-2"),
    ("fraunhofer", 32.0, "Fraunhofer criterion, Ulaby, Moore & Fung (1982) Vol. II sec. 12-2"),
    ("iev", 100.0, "IEC 60050-705 IEV 705-04-15"),
)


@dataclass(frozen=True)
class RoughnessVerdict:
    """One criterion applied to a surface.

    Attributes
    ----------
    criterion : str
        ``"rayleigh"``, ``"fraunhofer"`` or ``"iev"``.
    limit_m : float
        Largest RMS height that counts as smooth. [m]
    rms_m : float
        RMS height of the surface about its plane. [m]
    margin_m : float
        ``limit - rms``; negative when rough. [m]
    smooth : bool
    source : str
    """

    criterion: str
    limit_m: float
    rms_m: float
    margin_m: float
    smooth: bool
    source: str


def roughness_limit_m(wavelength_m: float, grazing_deg: float, divisor: float) -> float:
    """Smoothness limit ``lambda / (k sin(psi))`` [1]_ [2]_. [m]"""
    return wavelength_m / (divisor * math.sin(math.radians(grazing_deg)))


def roughness_verdicts(rms_m: float, wavelength_m: float, grazing_deg: float) -> list[RoughnessVerdict]:
    """All three criteria for a surface of RMS height ``rms_m`` at grazing angle ``psi``."""
    out = []
    for name, divisor, source in CRITERIA:
        limit = roughness_limit_m(wavelength_m, grazing_deg, divisor)
        out.append(RoughnessVerdict(name, limit, rms_m, limit - rms_m, rms_m < limit, source))
    return out
