"""Checks of a DEM against the site before the terrain study: coverage and vertical agreement.

- The threshold and the mast must lie on the DEM; when they do not, the error
  names each raster's extent and CRS, so that a DEM of the wrong place or in a
  CRS other than its metadata says is seen at once.
- The DEM at the threshold should agree with the surveyed threshold
  elevation: more than a few metres apart is one finding, shown first, that
  names the likely cause (:func:`geo.study.findings.check_dem_threshold`); more than
  :data:`geo.study.findings.DEM_MISMATCH_STOP_M` stops the study, since no height
  of it could be right; so does more than a few metres when the setback is to be
  solved for the target RDH, before the solve, with the field that looks wrong
  (:mod:`geo.study.dem_causes`).
- Tiles: one whose heights are a unit slip of its neighbours' stops the study
  before the threshold check (:mod:`geo.study.tile_checks`).
"""

from __future__ import annotations

import contextlib
import math

import numpy as np

from geo.errors import SiteFileError, TerrainError
from geo.site.named_errors import naming_site_file
from geo.study.dem_causes import HeightKeys, likely_cause
from geo.study.findings import (
    DEM_MISMATCH_STOP_M,
    DEM_MISMATCH_WARN_M,
    Finding,
    check_dem_threshold,
    dem_threshold_difference,
)
from geo.study.tile_checks import check_tile_units
from geo.units import format_length

__all__ = [
    "check_dem_covers_site",
    "check_dem_before_solve",
    "check_runway_fall",
    "height_keys",
    "dem_extent_in_errors",
]


def check_dem_covers_site(
    dem, frame, survey_threshold_m: float, mast_points, keys: HeightKeys | None = None, solving: bool = False
) -> tuple[Finding | None, float]:
    """The DEM at the threshold and the mast: coverage and agreement with the survey.

    Run before any solve: a setback solved for ``glide_path.target_rdh`` on a DEM tens of metres
    off the survey lands anywhere (before the threshold, past the end), and its error would hide
    the key that is wrong.

    Parameters
    ----------
    dem : geo.ground.dem.Dem
    frame : geo.airfield.frame.RunwayFrame
    survey_threshold_m : float
        Surveyed threshold elevation. [m]
    mast_points : list of (along_m, cross_m)
        Where the mast stands in the runway frame (empty when the setback is still to be solved). [m]
    keys : HeightKeys, optional
        The site file's keys for the DEM's heights (:func:`height_keys`), for naming the wrong one.
    solving : bool
        The setback is to be solved for the target RDH: a disagreement beyond
        :data:`geo.study.findings.DEM_MISMATCH_WARN_M` stops the study instead of a warning.

    Returns
    -------
    finding : Finding or None
        The ``"dem-threshold"`` warning, when the DEM and the survey disagree by more than a few metres.
    dem_threshold_m : float
        The DEM at the threshold. [m]

    Raises
    ------
    TerrainError
        When the threshold or the mast is off the DEM (naming its extent and CRS), or when the DEM
        and the survey disagree by more than 100 m at the threshold.
    SiteFileError
        When solving and they disagree by more than 5 m: the field that looks wrong, and its fix; when a
        tile's heights are about 3.281 or 0.305 times its neighbours' (:func:`geo.study.tile_checks.check_tile_units`).
    """
    for along, cross in mast_points:
        if not math.isfinite(float(dem.sample_frame(frame, np.array([along]), np.array([cross]))[0])):
            lat, lon = frame.to_geographic(along, cross)
            raise TerrainError(
                f"terrain.dem: the mast at lat {lat:.6f}, lon {lon:.6f} is off the DEM or on nodata; "
                f"the DEM covers {dem.extent_text()}; give a DEM that covers the site"
            )
    z = float(dem.sample_frame(frame, np.array([0.0]), np.array([0.0]))[0])
    if not math.isfinite(z):
        lat, lon = frame.to_geographic(0.0, 0.0)
        raise TerrainError(
            f"terrain.dem: the threshold at lat {lat:.6f}, lon {lon:.6f} is off the DEM or on nodata; "
            f"the DEM covers {dem.extent_text()}; give a DEM that covers the runway"
        )
    check_tile_units(dem, survey_threshold_m, keys, frame)  # a tile in the wrong unit: named before the DEM as a whole
    finding = check_dem_threshold(z, survey_threshold_m, keys)
    if finding is not None and abs(z - survey_threshold_m) > DEM_MISMATCH_STOP_M:
        raise TerrainError(f"terrain.dem: {finding.message} No results written: the difference exceeds 100 m.")
    if finding is not None and solving:
        field_name, cause = likely_cause(z, survey_threshold_m, keys)
        unit = keys.unit if keys is not None else "m"
        raise SiteFileError(
            field_name,
            f"{dem_threshold_difference(z, survey_threshold_m, unit)} (more than "
            f"{format_length(DEM_MISMATCH_WARN_M, unit, 0)}): {cause}. No results written: the setback for "
            "glide_path.target_rdh is not solved on a DEM this far from the survey.",
        )
    return finding, z


#: The runway's fall from threshold to end on the DEM and in the survey must agree in sign when
#: both exceed this; below it a runway is taken as level (our choice: DEM noise and tile steps
#: stay below it on the demo and the test DEMs). [m]
RUNWAY_FALL_TOLERANCE_M = 1.0


def check_runway_fall(dem, frame, length_m: float, threshold_m: float, end_m: float, unit: str = "m"):
    """Whether the ground along the runway falls the way the survey says, threshold to end.

    The DEM at the threshold and at the end (on the centre line) against the surveyed
    ``runway.threshold.elevation`` and ``runway.end.elevation``: when both changes exceed
    ``RUNWAY_FALL_TOLERANCE_M`` and their signs differ, the ground falls the wrong way for the
    landing direction the file gives: the ends may be swapped (positions without their
    elevations), or an elevation mistyped. A warning, not an error: the threshold check has
    already passed, so the heights are in the right datum.

    Parameters
    ----------
    dem : geo.ground.dem.Dem
    frame : geo.airfield.frame.RunwayFrame
    length_m : float
        Threshold to end. [m]
    threshold_m, end_m : float
        Surveyed elevations. [m]
    unit : {"m", "ft"}
        The site file's unit, first in the message.

    Returns
    -------
    Finding or None
    """
    ground = dem.sample_frame(frame, np.array([0.0, length_m]), np.array([0.0, 0.0]))
    if not np.all(np.isfinite(ground)):
        return None
    dem_fall, survey_fall = float(ground[1] - ground[0]), end_m - threshold_m
    if min(abs(dem_fall), abs(survey_fall)) <= RUNWAY_FALL_TOLERANCE_M or dem_fall * survey_fall > 0.0:
        return None

    def words(change):
        return f"{'rises' if change > 0 else 'falls'} by {format_length(abs(change), unit, 2)}"

    return Finding(
        "runway-fall",
        "warning",
        f"From runway.threshold to runway.end the ground {words(dem_fall)} on the DEM but {words(survey_fall)} "
        "in the survey (the site file's elevations): the ground falls the wrong way for the landing direction "
        "the file gives. Threshold and end may be swapped, their positions without their elevations, or an "
        "elevation mistyped; check runway.threshold and runway.end (runway.designator checks the direction).",
    )


def height_keys(dem, terrain, unit: str, frame) -> HeightKeys:
    """The site file's keys for the DEM's heights, with the datum shift the DEM applies at the threshold.

    Parameters
    ----------
    dem : geo.ground.dem.Dem
    terrain : geo.site.site_file.TerrainSpec
    unit : {"m", "ft"}
        The site file's length unit.
    frame : geo.airfield.frame.RunwayFrame

    Returns
    -------
    HeightKeys
    """
    conversion = dem.conversion
    shift_m = 0.0
    if conversion.applied:
        lat, lon = frame.to_geographic(0.0, 0.0)
        shift_m = dem.datum_shift_at(lat, lon)
    return HeightKeys(
        unit,
        terrain.vertical_offset_m,
        terrain.vertical_datum,
        terrain.survey_vertical_datum,
        conversion.method,
        shift_m,
        conversion.undulation_m,
    )


@naming_site_file
def check_dem_before_solve(spec, frame) -> None:
    """The DEM's coverage and agreement at the threshold, before a setback is solved (the sweep's solve).

    Parameters
    ----------
    spec : geo.site.site_file.SiteSpec
        With a DEM (``spec.terrain``).
    frame : geo.airfield.frame.RunwayFrame

    Raises
    ------
    TerrainError, SiteFileError
        As :func:`check_dem_covers_site` with ``solving``, the site file's name in front.
    """
    from geo.ground.dem import Dem

    with Dem.open(spec.terrain) as dem:
        keys = height_keys(dem, spec.terrain, spec.units, frame)
        check_dem_covers_site(dem, frame, spec.threshold.elevation_m, [], keys, solving=True)


@contextlib.contextmanager
def dem_extent_in_errors(dem):
    """Add the DEM's extent and CRS to the terrain errors about ground off the DEM raised inside."""
    try:
        yield
    except TerrainError as exc:
        text = str(exc)
        if "off the DEM" in text and "the DEM covers" not in text:
            raise TerrainError(f"{text.rstrip('.')}; the DEM covers {dem.extent_text()}") from None
        raise
