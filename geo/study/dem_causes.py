"""The likely cause of a DEM that disagrees with the surveyed threshold, as a site-file field and its fix.

The DEM's heights reach the survey's datum through the site file's keys: the
vertical unit, ``terrain.vertical_offset`` and the datum keys
(``runway.vertical_datum``, ``terrain.vertical_datum``,
``runway.geoid_undulation``). A slip in one of them moves every DEM height by
an amount that identifies it. With ``d`` the DEM minus the survey at the
threshold, ``s`` the datum shift applied there and ``o`` the offset:

- a DEM in feet read as metres (or the reverse): the ratio DEM / survey is
  near 3.281 (or 0.305), 1 ft = 0.3048 m exactly [1]_;
- a published undulation of the wrong sign: the true shift is ``-s``, so
  ``d = 2 s``; the undulation written in feet in a metre file: the true shift
  is ``0.3048 s``, so ``d = s (1 - 0.3048)``; written in metres in a foot file:
  ``d = s (1 - 1 / 0.3048)`` (``h = H + N`` [2]_);
- the two datums swapped (a grid conversion the wrong way): ``d = 2 s``;
- an offset that should not be there: ``d = o``; one of the wrong sign:
  ``d = 2 o``;
- 15-40 m otherwise: heights above a geoid against ellipsoidal ones [2]_ (the
  band of issue 10), named by the datum key that is missing.

A candidate counts when, corrected, the DEM agrees with the survey within
:data:`AGREEMENT_M`; the closest one is named.

References
----------
.. [1] NIST Handbook 44, Appendix C: 1 ft = 0.3048 m exactly.
.. [2] Hofmann-Wellenhof, B. and Moritz, H., *Physical Geodesy*, 2nd ed.,
       Springer, 2006, sec. 2.7 (h = H + N).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from geo.units import M_PER_FT, format_length, format_number, to_unit

__all__ = ["AGREEMENT_M", "HeightKeys", "likely_cause", "unit_slip"]

#: A corrected DEM within this of the survey at the threshold names the correction (as the warning's 5 m). [m]
AGREEMENT_M = 5.0
#: Geoid undulations over most land lie within these magnitudes (EGM96: about -107 to +86 m
#: worldwide; 15-40 m is the band issue 10 names for a geoid read as the ellipsoid; memory). [m]
GEOID_BAND_M = (15.0, 40.0)


@dataclass(frozen=True)
class HeightKeys:
    """What the site file says of the DEM's heights.

    Attributes
    ----------
    unit : {"m", "ft"}
        The site file's length unit.
    vertical_offset_m : float
        ``terrain.vertical_offset``. [m]
    dem_datum, survey_datum : str or None
        ``terrain.vertical_datum`` and ``runway.vertical_datum``.
    datum_method : str
        ``"none"``, ``"published undulation"`` or ``"geoid grid"``.
    datum_shift_m : float
        The datum conversion applied at the threshold (0 without one). [m]
    undulation_m : float or None
        ``runway.geoid_undulation`` as the study read it. [m]
    """

    unit: str = "m"
    vertical_offset_m: float = 0.0
    dem_datum: str | None = None
    survey_datum: str | None = None
    datum_method: str = "none"
    datum_shift_m: float = 0.0
    undulation_m: float | None = None


def likely_cause(dem_m: float, survey_m: float, keys: HeightKeys | None = None) -> tuple[str, str]:
    """The site-file field most likely behind a DEM that disagrees with the survey, and what to do.

    Parameters
    ----------
    dem_m : float
        DEM height at the threshold, in the site's datum (after unit, offset and datum). [m]
    survey_m : float
        Surveyed threshold elevation. [m]
    keys : HeightKeys, optional
        The site file's keys for the DEM's heights (none given: the defaults).

    Returns
    -------
    field : str
        Dotted site-file field, e.g. ``"runway.geoid_undulation"``.
    cause : str
        What looks wrong and the fix, in words.
    """
    keys = keys or HeightKeys()
    diff = dem_m - survey_m
    ratio = dem_m / survey_m if abs(survey_m) > 30.0 else float("nan")
    slip = unit_slip(ratio)
    if slip == "feet read as metres":
        return "terrain.vertical_unit", (
            f"the ratio {ratio:.3f} is near 3.281 ft per m: the DEM's heights look like feet read as metres; "
            'set terrain.vertical_unit = "ft"'
        )
    if slip == "metres read as feet":
        return "terrain.vertical_unit", (
            f"the ratio {ratio:.3f} is near 0.305 m per ft: the DEM's heights look like metres read as feet; "
            'set terrain.vertical_unit = "m"'
        )
    found = [c for c in _corrections(diff, keys) if c[0] <= AGREEMENT_M]
    if found:
        _, field_name, cause = min(found, key=lambda c: c[0])
        return field_name, cause
    if GEOID_BAND_M[0] <= abs(diff) <= GEOID_BAND_M[1]:
        return _datum_band_cause(keys)
    return "terrain.vertical_offset", "check terrain.vertical_offset and that terrain.dem is the DEM of this airfield"


def unit_slip(ratio: float) -> str | None:
    """The unit slip a ratio of heights (read / true) points at, within 5 % of 3.281 or 0.305 [1]_.

    Parameters
    ----------
    ratio : float
        Heights as read over the heights they should be (NaN: none).

    Returns
    -------
    str or None
        ``"feet read as metres"``, ``"metres read as feet"``, or None.
    """
    if abs(ratio - 1.0 / M_PER_FT) < 0.05 / M_PER_FT:
        return "feet read as metres"
    if abs(ratio - M_PER_FT) < 0.05 * M_PER_FT:
        return "metres read as feet"
    return None


def _corrections(diff_m: float, keys: HeightKeys) -> list[tuple[float, str, str]]:
    """Each correction of one key and how far from the survey it leaves the DEM: (residual [m], field, cause)."""
    unit, out = keys.unit, []

    def agree(residual_m):
        return f"the DEM agrees with the survey within {format_length(residual_m, unit)}"

    s = keys.datum_shift_m
    if keys.datum_method == "published undulation" and keys.undulation_m and math.isfinite(s):
        n = keys.undulation_m
        r = abs(diff_m - 2.0 * s)
        out.append((r, "runway.geoid_undulation", (
            f"the sign of runway.geoid_undulation looks wrong: with {format_length(-n, unit, 2, True)} {agree(r)}; "
            f"write runway.geoid_undulation = {format_number(to_unit(-n, unit), 2)}"
        )))  # fmt: skip
        wrong, right, true_n = ("feet", "metre", n * M_PER_FT) if unit == "m" else ("metres", "foot", n / M_PER_FT)
        r = abs(diff_m - (s - s * true_n / n))
        out.append((r, "runway.geoid_undulation", (
            f"runway.geoid_undulation looks written in {wrong} in a {right} file: with "
            f"{format_length(true_n, unit, 2, True)} {agree(r)}; write runway.geoid_undulation = "
            f"{format_number(to_unit(true_n, unit), 2)}"
        )))  # fmt: skip
    if keys.datum_method == "geoid grid" and math.isfinite(s) and abs(s) > AGREEMENT_M:
        r = abs(diff_m - 2.0 * s)
        out.append((r, "runway.vertical_datum", (
            f"runway.vertical_datum ({keys.survey_datum}) and terrain.vertical_datum ({keys.dem_datum}) look "
            f"swapped: converting the other way {agree(r)}; swap the two"
        )))  # fmt: skip
    o = keys.vertical_offset_m
    if o != 0.0:
        offset = format_number(to_unit(o, unit), 2)
        r = abs(diff_m - o)
        out.append((r, "terrain.vertical_offset", (
            f"terrain.vertical_offset = {offset} looks wrong: without it {agree(r)}; "
            "write terrain.vertical_offset = 0 or leave it out"
        )))  # fmt: skip
        r = abs(diff_m - 2.0 * o)
        out.append((r, "terrain.vertical_offset", (
            f"the sign of terrain.vertical_offset looks wrong: with {format_length(-o, unit, 2, True)} {agree(r)}; "
            f"write terrain.vertical_offset = {format_number(to_unit(-o, unit), 2)}"
        )))  # fmt: skip
    return out


def _datum_band_cause(keys: HeightKeys) -> tuple[str, str]:
    """A difference of a geoid undulation's size: the datum key that is missing, or both."""
    typical = (
        "a difference of this size is typical of heights above a geoid (EGM96, EGM2008) against "
        "ellipsoidal (WGS 84, GNSS) heights"
    )
    if keys.survey_datum is not None and keys.dem_datum is None:
        return "terrain.vertical_datum", (
            f"{typical}; runway.vertical_datum is {keys.survey_datum} but terrain.vertical_datum is not given, so "
            f"the DEM is taken to be in {keys.survey_datum} too and is not converted; give terrain.vertical_datum "
            "(the DEM's datum)"
        )
    if keys.dem_datum is not None and keys.survey_datum is None:
        return "runway.vertical_datum", (
            f"{typical}; terrain.vertical_datum is {keys.dem_datum} but runway.vertical_datum is not given, so "
            f"the survey is taken to be in {keys.dem_datum} too and the DEM is not converted; give "
            "runway.vertical_datum (the datum of the site file's elevations)"
        )
    if keys.dem_datum is not None:
        return "runway.vertical_datum", (
            f"{typical}; runway.vertical_datum and terrain.vertical_datum say {keys.survey_datum} and "
            f"{keys.dem_datum}: check both"
        )
    return "runway.vertical_datum", (
        f"{typical}; give runway.vertical_datum and terrain.vertical_datum "
        "(and runway.geoid_undulation if published) so that the DEM is converted"
    )
