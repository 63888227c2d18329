"""ILS channels: localizer / glide path frequency pairs and wavelengths.

References
----------
.. [1] ICAO Annex 10, Volume I, 3.1.6.1 (frequency pairing) and 3.1.5.2.1
       (glide path band 328.6-335.4 MHz).
.. [2] FAA Aeronautical Information Manual, 1-1-9, Table 1-1-4
       "Frequency Pairs Allocated for ILS".
.. [3] SI Brochure, 9th ed.: speed of light in vacuum c = 299 792 458 m/s
       (exact).
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = [
    "SPEED_OF_LIGHT_M_S",
    "GLIDE_PATH_BAND_MHZ",
    "CHANNEL_PAIRS_MHZ",
    "Channel",
    "channel_for_localizer",
    "channel_for_glide_path",
    "wavelength_m",
]

#: Speed of light in vacuum, exact by definition [3]_. [m/s]
SPEED_OF_LIGHT_M_S = 299_792_458.0

#: Glide path band [1]_. [MHz]
GLIDE_PATH_BAND_MHZ = (328.6, 335.4)

#: The 40 (localizer MHz, glide path MHz) pairs [1]_ [2]_.
CHANNEL_PAIRS_MHZ: tuple[tuple[float, float], ...] = (
    (108.10, 334.70), (108.15, 334.55), (108.30, 334.10), (108.35, 333.95),
    (108.50, 329.90), (108.55, 329.75), (108.70, 330.50), (108.75, 330.35),
    (108.90, 329.30), (108.95, 329.15), (109.10, 331.40), (109.15, 331.25),
    (109.30, 332.00), (109.35, 331.85), (109.50, 332.60), (109.55, 332.45),
    (109.70, 333.20), (109.75, 333.05), (109.90, 333.80), (109.95, 333.65),
    (110.10, 334.40), (110.15, 334.25), (110.30, 335.00), (110.35, 334.85),
    (110.50, 329.60), (110.55, 329.45), (110.70, 330.20), (110.75, 330.05),
    (110.90, 330.80), (110.95, 330.65), (111.10, 331.70), (111.15, 331.55),
    (111.30, 332.30), (111.35, 332.15), (111.50, 332.90), (111.55, 332.75),
    (111.70, 333.50), (111.75, 333.35), (111.90, 331.10), (111.95, 330.95),
)  # fmt: skip

_TOLERANCE_MHZ = 0.001


@dataclass(frozen=True)
class Channel:
    """A glide path frequency and, when it is one of the 40, its localizer pair.

    Attributes
    ----------
    glide_path_mhz : float
        Glide path carrier frequency. [MHz]
    localizer_mhz : float or None
        Paired localizer frequency; ``None`` when the glide path frequency is
        in the band but not one of the paired channels. [MHz]
    """

    glide_path_mhz: float
    localizer_mhz: float | None

    @property
    def is_paired(self) -> bool:
        """True when the frequency is one of the 40 paired channels."""
        return self.localizer_mhz is not None


def channel_for_localizer(localizer_mhz: float) -> Channel:
    """Look up the glide path paired with a localizer frequency.

    Parameters
    ----------
    localizer_mhz : float
        Localizer frequency. [MHz]

    Returns
    -------
    Channel

    Raises
    ------
    KeyError
        When the frequency is not one of the 40 paired localizer channels.
    """
    for loc, gp in CHANNEL_PAIRS_MHZ:
        if abs(loc - localizer_mhz) < _TOLERANCE_MHZ:
            return Channel(gp, loc)
    raise KeyError(localizer_mhz)


def channel_for_glide_path(glide_path_mhz: float) -> Channel:
    """Describe a glide path frequency, with its localizer pair if it has one.

    Parameters
    ----------
    glide_path_mhz : float
        Glide path frequency. [MHz]

    Returns
    -------
    Channel
        ``localizer_mhz`` is ``None`` for an unpaired in-band frequency.

    Raises
    ------
    ValueError
        When the frequency is outside the glide path band [1]_.
    """
    low, high = GLIDE_PATH_BAND_MHZ
    if not low <= glide_path_mhz <= high:
        raise ValueError(glide_path_mhz)
    for loc, gp in CHANNEL_PAIRS_MHZ:
        if abs(gp - glide_path_mhz) < _TOLERANCE_MHZ:
            return Channel(gp, loc)
    return Channel(glide_path_mhz, None)


def wavelength_m(frequency_mhz: float) -> float:
    """Free-space wavelength of a carrier.

    Parameters
    ----------
    frequency_mhz : float
        Carrier frequency. [MHz]

    Returns
    -------
    float
        Wavelength, lambda = c / f [3]_. [m]

    Examples
    --------
    >>> round(wavelength_m(332.0), 6)
    0.902989
    """
    return SPEED_OF_LIGHT_M_S / (frequency_mhz * 1e6)
