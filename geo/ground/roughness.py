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
.. [3] Beckmann, P. and Spizzichino, A., *The Scattering of Electromagnetic Waves from Rough
       Surfaces*, Pergamon, 1963, ch. 3 (the grazing angle of the specular ray; image of the
       source in the mean plane).
.. [4] ICAO Annex 10, Volume I, 3.1.5.3.1 (coverage 0.45 theta to 1.75 theta, to 10 NM).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

__all__ = [
    "CRITERIA",
    "RoughnessVerdict",
    "roughness_limit_m",
    "roughness_verdicts",
    "FAMILY_SHARE_JUDGED",
    "ReceiverFamily",
    "specular_grazing_deg",
    "far_field_grazing_deg",
    "roughness_by_family",
    "strictest_family",
]

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


#: A family is judged by the fitted zone's RMS when at least this share of its own first Fresnel
#: zone lies in the fitted zone: mastplan's choice, no source.
FAMILY_SHARE_JUDGED = 0.5


def _unit_normal(forward_gradient: float, lateral_gradient: float):
    import numpy as np

    n = np.array([-forward_gradient, -lateral_gradient, 1.0])
    return n / np.linalg.norm(n)


def specular_grazing_deg(
    antenna_height_m: float, receiver_uwz_m, forward_gradient: float = 0.0, lateral_gradient: float = 0.0
) -> float:
    """Grazing angle of the ray from an antenna to a receiver, reflected once by the plane [3]_.

    The plane ``z = gu u + gw w`` passes through the foot of the mast (the origin); the antenna
    stands ``antenna_height_m`` above it at the origin. With ``a`` and ``r`` the heights of
    antenna and receiver along the plane's normal and ``d`` the distance between their feet on
    the plane, the specular point divides ``d`` as ``a : r`` and ``tan(psi) = (a + r) / d``.

    Parameters
    ----------
    antenna_height_m : float
        Height of the antenna above the plane at the mast (vertical). [m]
    receiver_uwz_m : array_like, shape (3,)
        Receiver ``(u, w, z)``, ``z`` its height above the plane (vertical), as
        :func:`geo.radio.zones.path_receivers` gives it. [m]
    forward_gradient, lateral_gradient : float
        The plane's rise toward the approach and toward the runway. [m/m]

    Returns
    -------
    float
        [deg]
    """
    import numpy as np

    n = _unit_normal(forward_gradient, lateral_gradient)
    u, w, z = (float(v) for v in receiver_uwz_m)
    antenna = np.array([0.0, 0.0, antenna_height_m])
    receiver = np.array([u, w, z + forward_gradient * u + lateral_gradient * w])
    a, r = antenna @ n, receiver @ n
    d = np.linalg.norm((receiver - r * n) - (antenna - a * n))
    return math.degrees(math.atan2(a + r, d))


def far_field_grazing_deg(elevation_deg: float, forward_gradient: float = 0.0, lateral_gradient: float = 0.0) -> float:
    """Grazing angle over the plane of a distant receiver on the course at ``elevation_deg``. [deg]"""
    e = math.radians(elevation_deg)
    n = _unit_normal(forward_gradient, lateral_gradient)
    return math.degrees(math.asin(math.cos(e) * n[0] + math.sin(e) * n[2]))


@dataclass(frozen=True)
class ReceiverFamily:
    """Roughness judged for one family of receivers with its own grazing angle.

    Attributes
    ----------
    name : str
        ``"path-far-field"``, ``"path-at-threshold"``, ``"coverage-0.45-theta"`` or
        ``"coverage-1.75-theta"``.
    description : str
    grazing_deg : float
        Specular grazing angle over the plane for the lowest antenna. [deg]
    zone_share : float
        Share of the family's first Fresnel zone (lowest antenna) inside the fitted zone. [-]
    judged : bool
        ``zone_share >= FAMILY_SHARE_JUDGED``: the fitted zone's RMS speaks for this family.
    verdicts : list of RoughnessVerdict
    """

    name: str
    description: str
    grazing_deg: float
    zone_share: float
    judged: bool
    verdicts: list[RoughnessVerdict]


def roughness_by_family(
    rms_m: float,
    wavelength_m: float,
    angle_deg: float,
    antenna_height_m: float,
    setback_m: float,
    offset_m: float,
    forward_gradient: float,
    lateral_gradient: float,
    fitted_zone=None,
) -> list[ReceiverFamily]:
    """Rayleigh, Fraunhofer and IEV verdicts per receiver family, each with its own grazing angle.

    The families (mastplan's choice): the path in the far field (what the existing verdicts use);
    the path at the threshold, the nearest receiver of the zone the plane is fitted in and so the
    steepest specular ray there; and the coverage edges 0.45 theta and 1.75 theta in the far field
    [4]_, where coverage is flown and checked. Coverage near the threshold is left out: above the
    path there no approach is flown. Each family's first Fresnel zone (lowest antenna; a receiver
    at 10 NM for the far-field families) is compared with ``fitted_zone``; the families that
    share at least half of it are judged with the fitted zone's RMS.

    Parameters
    ----------
    rms_m : float
        RMS height of the ground about the plane in the fitted zone. [m]
    wavelength_m : float
        [m]
    angle_deg : float
        Path angle theta. [deg]
    antenna_height_m : float
        Lowest antenna above the plane. [m]
    setback_m, offset_m : float
        Mast position. [m]
    forward_gradient, lateral_gradient : float
        Plane gradients. [m/m]
    fitted_zone : shapely geometry, optional
        The zone the plane was fitted in (mast plane coordinates); without it every family is
        judged (share 1).

    Returns
    -------
    list of ReceiverFamily
    """
    from geo.radio.zones import RANGE_M, antenna_zone, path_receivers

    threshold = path_receivers(setback_m, offset_m, angle_deg, 2, forward_gradient, lateral_gradient, fractions=(1.0,))[
        0
    ]
    far = [
        ("path-far-field", "on the path (theta) in the far field", 1.0),
        ("coverage-0.45-theta", "lower edge of coverage (0.45 theta) in the far field", 0.45),
        ("coverage-1.75-theta", "upper edge of coverage (1.75 theta) in the far field", 1.75),
    ]
    rows = []
    for name, text, fraction in far:
        e = fraction * angle_deg
        grazing = far_field_grazing_deg(e, forward_gradient, lateral_gradient)
        u = setback_m + RANGE_M
        z = math.tan(math.radians(e)) * math.hypot(u, offset_m) - forward_gradient * u - lateral_gradient * offset_m
        rows.append((name, text, grazing, (u, offset_m, z)))
    grazing = specular_grazing_deg(antenna_height_m, threshold, forward_gradient, lateral_gradient)
    rows.insert(1, ("path-at-threshold", "on the path at the threshold, the nearest receiver", grazing, threshold))
    out = []
    for name, text, grazing, receiver in rows:
        share = 1.0
        if fitted_zone is not None:
            import numpy as np

            own = antenna_zone(antenna_height_m, 0.0, np.array([receiver], dtype=float), wavelength_m).polygon
            share = float(own.intersection(fitted_zone).area / own.area) if own.area > 0 else 0.0
        judged = share >= FAMILY_SHARE_JUDGED
        out.append(ReceiverFamily(name, text, grazing, share, judged, roughness_verdicts(rms_m, wavelength_m, grazing)))
    return out


def strictest_family(families: list[ReceiverFamily]) -> ReceiverFamily | None:
    """The judged family with the largest grazing angle (the smallest limits), or ``None``."""
    judged = [f for f in families if f.judged]
    return max(judged, key=lambda f: f.grazing_deg) if judged else None
