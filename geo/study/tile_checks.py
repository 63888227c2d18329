"""Checks of DEM tiles against each other and the survey: a tile in the wrong unit, overlaps that disagree.

- Before any solve, each tile's heights are compared with its neighbours' where
  they meet and with the surveyed threshold elevation: a tile whose heights
  are about 3.281 (or 0.305) times its neighbours' is in feet read as metres
  (or the reverse) [1]_, and the study stops naming the tile and the fix
  (:func:`check_tile_units`). The ratio rule is
  :func:`geo.study.dem_causes.unit_slip`, the one the threshold check uses.
- After the study, the largest disagreement in the tiles' overlaps and the
  largest step across their seams, over the part of the DEM the study read,
  are warnings above :data:`TILE_TOLERANCE_M` (:func:`tile_findings`).

References
----------
.. [1] NIST Handbook 44, Appendix C: 1 ft = 0.3048 m exactly.
"""

from __future__ import annotations

import math

from geo.errors import SiteFileError
from geo.study.dem_causes import HeightKeys, unit_slip
from geo.study.findings import Finding
from geo.units import format_length

__all__ = ["TILE_TOLERANCE_M", "TILE_TOLERANCE_SOURCE", "PRE_SOLVE_CELLS_PER_SIDE", "check_tile_units", "tile_findings"]

#: Overlap disagreement or seam step above this is a warning. [m]
TILE_TOLERANCE_M = 0.5
TILE_TOLERANCE_SOURCE = (
    "our choice: issue 21 saw a 5 m disagreement move the setback 95 m (about 19 m per metre), so 0.5 m "
    "keeps the move near 10 m; it is also above the cell noise of the demo DEM (centimetres)"
)
#: Cells a side read per tile for the unit check before the solve (every n-th cell beyond; our choice).
PRE_SOLVE_CELLS_PER_SIDE = 200
#: Before the solve the unit check reads the tiles within this of the threshold, which holds the mast, its
#: zones and the runway's first part (our choice; the study's own box is known only after the solve). [m]
PRE_SOLVE_REACH_M = 3000.0
#: The survey decides which tile of a pair is odd only this far from sea level (as the threshold check). [m]
_SURVEY_RATIO_MIN_M = 30.0


def check_tile_units(dem, survey_threshold_m: float, keys: HeightKeys | None = None, frame=None) -> None:
    """Stop on a tile whose heights are about 3.281 or 0.305 times its neighbours' or the survey's [1]_.

    Parameters
    ----------
    dem : geo.ground.dem.Dem
        Of more than one tile (one tile: nothing to do; the threshold check covers it).
    survey_threshold_m : float
        Surveyed threshold elevation. [m]
    keys : HeightKeys, optional
        The site file's keys for the DEM's heights: the survey is moved into the tiles' own heights
        (less the offset and the datum shift at the threshold) before it is compared.
    frame : geo.airfield.frame.RunwayFrame, optional
        The runway: only the tiles within :data:`PRE_SOLVE_REACH_M` of its threshold are read (default:
        the whole tiles).

    Raises
    ------
    SiteFileError
        ``terrain.vertical_unit``: the odd tile, the ratio and the fix.
    """
    from geo.ground.tile_agreement import measure_tiles

    if len(dem.mosaic.tiles) < 2:
        return
    keys = keys or HeightKeys()
    shift_m = keys.datum_shift_m if math.isfinite(keys.datum_shift_m) else 0.0
    survey = survey_threshold_m - keys.vertical_offset_m - shift_m  # in the tiles' own heights
    agreement = measure_tiles(dem.mosaic, _near_threshold(dem, frame), PRE_SOLVE_CELLS_PER_SIDE)
    odd = _odd_tile(agreement, survey)
    if odd is None:
        return
    k, ratio, slip, evidence = odd
    tile = dem.mosaic.tiles[k]
    raise SiteFileError("terrain.vertical_unit", f"{evidence}: {tile.path.name} looks in {slip} "
                        f"(its unit now: {tile.vertical_unit_source}); {_fix(tile, slip)}")  # fmt: skip


def _near_threshold(dem, frame):
    """(west, south, east, north) of the square :data:`PRE_SOLVE_REACH_M` around the threshold, in the DEM's CRS."""
    if frame is None:
        return None
    import numpy as np

    from geo.airfield.frame import frame_transformer

    r = PRE_SOLVE_REACH_M
    along, cross = np.array([-r, r, r, -r, 0.0, r, 0.0, -r]), np.array([-r, -r, r, r, -r, 0.0, r, 0.0])
    east, north = frame.to_tm(along, cross)
    x, y = frame_transformer(frame, dem.mosaic.crs_wkt).transform(east, north)
    return float(np.min(x)), float(np.min(y)), float(np.max(x)), float(np.max(y))


def _odd_tile(agreement, survey_m: float):
    """The tile in the wrong unit: (index, ratio, slip, evidence in words), or None.

    Each pair whose median height ratio is a unit slip gives a vote to the tile of the two farther
    from the survey (log ratio); without a usable survey, to both. A tile that meets none is judged
    against the survey alone.
    """
    votes: dict[int, list] = {}
    use_survey = abs(survey_m) >= _SURVEY_RATIO_MIN_M
    names = agreement.names
    for p in agreement.pairs:
        slip = unit_slip(p.median_ratio)
        if slip is None:
            continue
        far_k = abs(math.log(abs(p.median_tile_m / survey_m))) if use_survey else 0.0
        far_j = abs(math.log(abs(p.median_other_m / survey_m))) if use_survey else 0.0
        if far_k >= far_j:
            text = (
                f"the heights of {names[p.tile]} are {p.median_ratio:.3f} times those of {names[p.other]} where "
                f"they meet (median ratio over {p.points} points)"
            )
            votes.setdefault(p.tile, []).append((p.median_ratio, slip, text))
    met = {p.tile for p in agreement.pairs} | {p.other for p in agreement.pairs}
    for k, median in enumerate(agreement.medians_m):
        if k in met or not use_survey or not math.isfinite(median):
            continue
        ratio = median / survey_m
        slip = unit_slip(ratio)
        if slip is not None:
            text = f"the heights of {names[k]} are {ratio:.3f} times the surveyed threshold elevation (median)"
            votes.setdefault(k, []).append((ratio, slip, text))
    if not votes:
        return None
    k = max(votes, key=lambda i: (len(votes[i]), -i))
    ratio, slip, text = votes[k][0]
    return k, ratio, slip, text


def _fix(tile, slip: str) -> str:
    """What to do about one tile in the wrong unit (``terrain.vertical_unit`` sets every tile's unit)."""
    unit = "ft" if slip == "feet read as metres" else "m"
    if tile.vertical_unit_source == "site file":
        return (
            "terrain.vertical_unit sets the unit of every tile: leave it out and give each tile its unit in its "
            f'metadata (band unit "{unit}" for this one), or convert this tile to the others\' unit'
        )
    return (
        f"set this tile's band unit to \"{unit}\" in its metadata or convert it to the others' unit "
        "(terrain.vertical_unit would set the unit of every tile)"
    )


def tile_findings(agreement, unit: str) -> list[Finding]:
    """Warnings for an overlap disagreement or a seam step above :data:`TILE_TOLERANCE_M`.

    Parameters
    ----------
    agreement : geo.ground.tile_agreement.TileAgreement
        Over the part of the DEM the study read.
    unit : {"m", "ft"}
        The site file's length unit.

    Returns
    -------
    list of Finding
        ``"dem-tile-overlap"`` and ``"dem-tile-seam"`` warnings (none within the tolerance).
    """
    found = []
    limit = format_length(TILE_TOLERANCE_M, unit)
    d = agreement.overlap
    if d is not None and abs(d.difference_m) > TILE_TOLERANCE_M:
        found.append(Finding("dem-tile-overlap", "warning", (
            f"The DEM tiles {d.tile} and {d.other} disagree by {format_length(d.difference_m, unit, 2, True)} "
            f"at lat {d.lat_deg:.6f}, lon {d.lon_deg:.6f} (largest over {d.points:,} overlap cell centres near the "
            f"study; more than {limit}): the study takes each point from the first tile listed in terrain.dem "
            f"({agreement.names[0]}); check which tile is right and list it first, or correct the other"
        )))  # fmt: skip
    d = agreement.seam
    if d is not None and abs(d.difference_m) > TILE_TOLERANCE_M:
        found.append(Finding("dem-tile-seam", "warning", (
            f"The ground steps by {format_length(-d.difference_m, unit, 2, True)} across the edge of {d.tile} "
            f"into {d.other} at lat {d.lat_deg:.6f}, lon {d.lon_deg:.6f} (largest over {d.points:,} seam points "
            f"near the study; more than {limit}): the tiles do not join; check their datums and units"
        )))  # fmt: skip
    return found
