"""Electrical constants of the ground and of snow near the glide path band (about 330 MHz).

Ground
    ITU-R P.527 gives the relative permittivity and conductivity of typical surfaces against
    frequency (Fig. 1 of P.527-3: curve B wet ground, D medium dry ground, E very dry ground) [1]_.
    The values here are read near 330 MHz **from memory** of those curves, not checked against the
    recommendation: confirm them against the edition in force (P.527-4 onward computes soils from
    their moisture instead).

    ======  ===============  =====================  ==================
    ground  P.527-3 curve    relative permittivity  conductivity [S/m]
    ======  ===============  =====================  ==================
    wet     B, wet ground    30                     0.02
    medium  D, medium dry    15                     0.005
    dry     E, very dry      3                      0.0001
    ======  ===============  =====================  ==================

Snow
    Dry snow is a mixture of ice and air, nearly lossless; its permittivity rises with density,
    ``eps' = 1 + 1.7 rho + 0.7 rho^2`` (``rho`` in g/cm^3) after Tiuri et al. [2]_ (formula **from
    memory**), taken here at a settled density of 0.3 g/cm^3 (our choice): eps' about 1.57. The
    carrier goes through it and reflects at the ground below, so dry snow is a layer
    (:func:`geo.radio.reflection.layered_reflection_coefficient_h`).

    Wet snow holds liquid water, which raises the permittivity and the loss; it is taken to reflect
    at its own surface (the antennas stand ``d`` lower above the reflecting plane) with
    eps' = 2.5 and a loss of eps'' = 0.15, values **from memory** for a few per cent of liquid water
    by volume near 300 MHz (Hallikainen, Ulaby and Abdelrazik [3]_).

References
----------
.. [1] ITU-R Recommendation P.527-3, "Electrical characteristics of the surface of the Earth",
       1992, Annex 1, Fig. 1 (values read from memory).
.. [2] Tiuri, M., Sihvola, A., Nyfors, E. and Hallikainen, M., "The complex dielectric constant of
       snow at microwave frequencies", IEEE J. Oceanic Eng. OE-9 (1984) 377-382 (from memory).
.. [3] Hallikainen, M., Ulaby, F. T. and Abdelrazik, M., "Dielectric properties of snow in the
       3 to 37 GHz range", IEEE Trans. Antennas Propag. AP-34 (1986) 1329-1340 (from memory; the
       value near 300 MHz is our extrapolation).
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = [
    "GROUND_CLASSES",
    "GROUND_SOURCE",
    "SNOW_KINDS",
    "SNOW_SOURCE",
    "DRY_SNOW_DENSITY_G_CM3",
    "GroundConstants",
    "ground_constants",
    "dry_snow_permittivity",
    "WET_SNOW_PERMITTIVITY",
]

GROUND_SOURCE = (
    "ITU-R P.527-3 Fig. 1 (curves B wet, D medium dry, E very dry ground) near 330 MHz, values from memory: "
    "confirm against the edition in force"
)
SNOW_SOURCE = (
    "dry snow: eps' = 1 + 1.7 rho + 0.7 rho^2 (Tiuri et al. 1984, from memory) at rho = 0.3 g/cm3, lossless, "
    "a layer over the ground; wet snow: eps = 2.5 - j0.15 (Hallikainen et al. 1986, from memory), reflecting "
    "at its surface"
)
#: Snow kinds a condition may name.
SNOW_KINDS = ("dry", "wet")
#: Density of the dry snow layer (settled snow; our choice, no source). [g/cm^3]
DRY_SNOW_DENSITY_G_CM3 = 0.3
#: Wet snow's complex relative permittivity near 300 MHz (from memory, see the module notes).
WET_SNOW_PERMITTIVITY = complex(2.5, -0.15)


@dataclass(frozen=True)
class GroundConstants:
    """One ground class.

    Attributes
    ----------
    name : str
        ``"dry"``, ``"medium"`` or ``"wet"``.
    relative_permittivity : float
    conductivity_s_m : float
        [S/m]
    """

    name: str
    relative_permittivity: float
    conductivity_s_m: float


#: The ground classes of ITU-R P.527 a condition may name [1]_ (from memory).
GROUND_CLASSES: dict[str, GroundConstants] = {
    g.name: g
    for g in (
        GroundConstants("dry", 3.0, 1e-4),
        GroundConstants("medium", 15.0, 0.005),
        GroundConstants("wet", 30.0, 0.02),
    )
}


def ground_constants(name: str) -> GroundConstants:
    """The constants of the ground class ``name`` [1]_.

    Raises
    ------
    ValueError
        Naming the classes that exist.
    """
    try:
        return GROUND_CLASSES[name]
    except KeyError:
        allowed = ", ".join(f'"{n}"' for n in GROUND_CLASSES)
        raise ValueError(f"{name!r} is not a ground class; use one of {allowed}") from None


def dry_snow_permittivity(density_g_cm3: float = DRY_SNOW_DENSITY_G_CM3) -> complex:
    """Dry snow's relative permittivity, lossless: ``1 + 1.7 rho + 0.7 rho^2`` [2]_ (from memory).

    Parameters
    ----------
    density_g_cm3 : float
        [g/cm^3]

    Returns
    -------
    complex

    Examples
    --------
    >>> round(dry_snow_permittivity(0.3).real, 3)
    1.573
    """
    rho = density_g_cm3
    return complex(1.0 + 1.7 * rho + 0.7 * rho * rho, 0.0)
