"""Helping to choose among swept candidates: reasons in words, rank, near-feasible ones.

Everything here reads the columns of a :class:`geo.study.sweep.SweepResult`; nothing recomputes the
physics (the setbacks solved per offset are :mod:`geo.study.solved_setbacks`).

- :func:`clearance_reasons`: why a mast fails the obstacle limitation surfaces, naming the
  surface and the margin in the site file's unit first.
- :func:`rank_candidates`: one rank per candidate. Feasible candidates first, by score (equal
  shown scores are ties, broken by less cut + fill, then the larger roughness margin, then the
  smaller setback, offset and the left side); then the near-feasible ones by cut + fill; then the
  rest by the number of reasons and the distance of their RDH from the target.
- :func:`near_feasible`: infeasible candidates whose only reason is the roughness of the
  reflection zone; the grading already computed (cut and fill to within the criterion's limit of
  the fitted plane) makes them feasible without moving the plane, hence the RDH.

References
----------
.. [1] ICAO Annex 14, Volume I: obstacle free zone and transitional surface (see
       :mod:`geo.airfield.surfaces`; from memory).
.. [2] ICAO Annex 10, Volume I, 3.1.5.1: ILS reference datum height (see :mod:`geo.study.findings`).
"""

from __future__ import annotations

import numpy as np

from geo.units import format_length, format_number

__all__ = [
    "ROUGH_PREFIX",
    "CRITERION_NAMES",
    "RANK_TEXT",
    "clearance_reasons",
    "rank_candidates",
    "near_feasible",
    "add_ranks",
]

#: Every roughness reason starts with these words (near-feasible candidates are found by them).
ROUGH_PREFIX = "rough by the"

#: Roughness criteria as their sources name them.
CRITERION_NAMES = {"rayleigh": "Rayleigh", "fraunhofer": "Fraunhofer", "iev": "IEV"}

RANK_TEXT = (
    "feasible candidates first, by score; equal scores are ordered by less cut + fill, then the "
    "larger roughness margin, then the smaller setback and offset, left before right, and rank_note says "
    "why a candidate ranks below one whose score shows the same to 0.1; then the candidates that the "
    "computed grading makes feasible, by cut + fill; then the rest, by the number of reasons and the RDH's "
    "distance from the target."
)


def _len(value_m, unit: str = "m", decimals: int = 2, signed: bool = False) -> str:
    return format_length(float(value_m), unit, decimals, signed)


def clearance_reasons(clearance, k: int, surfaces, unit: str) -> list[str]:
    """Why candidate ``k``'s mast fails the surfaces, each naming the surface and the margin [1]_.

    A mast in the obstacle free zone is infeasible unless ``surfaces.allow_in_obstacle_free_zone``;
    a mast above the transitional surface (or, without a setback, the inner transitional surface)
    is infeasible.

    Parameters
    ----------
    clearance : geo.airfield.surfaces.MastClearance
    k : int
        Candidate index.
    surfaces : geo.airfield.surfaces.SurfaceSpec
    unit : {"m", "ft"}
        The site file's length unit, shown first.

    Returns
    -------
    list of str
    """
    out = []
    ofz = clearance.ofz_margin_m
    if ofz is not None and np.isfinite(ofz[k]) and ofz[k] < 0 and not surfaces.allow_in_obstacle_free_zone:
        part = str(clearance.ofz_part[k])
        floor = "the strip between the inner transitional surfaces" if part == "strip" else f"the {part}"
        out.append(f"mast in the obstacle free zone: top {_len(-ofz[k], unit)} above its floor, {floor}")
    if ofz is None:
        inner = clearance.inner_transitional_margin_m[k]
        if np.isfinite(inner) and inner < 0:
            out.append(f"mast penetrates the inner transitional surface by {_len(-inner, unit)}")
    trans = clearance.transitional_margin_m[k]
    if np.isfinite(trans) and trans < 0:
        out.append(f"mast penetrates the transitional surface by {_len(-trans, unit)}")
    return out


def _only_rough(reason: str) -> bool:
    parts = [p for p in reason.split("; ") if p]
    return len(parts) == 1 and parts[0].startswith(ROUGH_PREFIX)


def near_feasible(columns: dict, reasons: list[str]) -> np.ndarray:
    """Indices of the infeasible candidates that the computed grading makes feasible, least cut + fill first.

    Grading brings every zone cell within the criterion's limit of the fitted plane, so the zone
    meets the criterion; the plane, hence the RDH, stays. Only candidates whose one reason is
    roughness qualify, and only where a grading was computed (on terrain).

    Parameters
    ----------
    columns : dict of str to numpy.ndarray
        Sweep columns (``feasible``, ``cut_m3``, ``fill_m3``).
    reasons : list of str

    Returns
    -------
    numpy.ndarray of int
    """
    volume = columns["cut_m3"] + columns["fill_m3"]
    ok = np.array([(not f) and _only_rough(r) for f, r in zip(columns["feasible"], reasons)], dtype=bool)
    ok &= np.isfinite(volume) & (volume > 0)
    idx = np.flatnonzero(ok)
    return idx[np.argsort(volume[idx], kind="stable")]


def rank_candidates(columns: dict, reasons: list[str], criterion: str, rdh_target_m: float, unit: str = "m"):
    """One rank per candidate (1 best) and a note where a tie was broken.

    Parameters
    ----------
    columns : dict of str to numpy.ndarray
        Sweep columns.
    reasons : list of str
    criterion : str
        Roughness criterion of the sweep (its margin breaks ties).
    rdh_target_m : float
        RDH the score prefers. [m]
    unit : {"m", "ft"}
        For the notes.

    Returns
    -------
    rank : numpy.ndarray of int
        1 for the best; every candidate has one.
    notes : list of str
        Why a candidate ranks below one with the same shown score ("" otherwise); the group of the
        candidates that are not feasible.
    """
    n = len(reasons)
    feasible = np.asarray(columns["feasible"], bool)
    volume = np.nan_to_num(columns["cut_m3"] + columns["fill_m3"], nan=np.inf)
    margin = np.nan_to_num(columns[f"{criterion}_margin_m"], nan=-np.inf)
    exact = np.nan_to_num(columns["score"], nan=-1.0)
    shown = np.round(exact, 1)
    side = np.where(columns["side"] == "left", 0, 1)
    setback, offset = columns["setback_m"], columns["offset_m"]
    near = set(near_feasible(columns, reasons).tolist())
    group = np.array([0 if feasible[k] else (1 if k in near else 2) for k in range(n)])
    count = np.array([len([p for p in r.split("; ") if p]) for r in reasons])
    rdh_off = np.nan_to_num(np.abs(columns["rdh_m"] - rdh_target_m), nan=np.inf)
    # np.lexsort sorts by the last key first.
    key_a = np.where(group == 0, -exact, np.where(group == 1, volume, count))
    key_b = np.where(group == 0, volume, np.where(group == 1, 0.0, rdh_off))
    order = np.lexsort((side, offset, setback, -margin, key_b, key_a, group))
    rank = np.empty(n, dtype=np.int64)
    rank[order] = np.arange(1, n + 1)
    notes = [""] * n
    for pos, k in enumerate(order):
        if group[k] == 1:
            notes[k] = "feasible after the computed grading"
        elif group[k] == 2:
            notes[k] = "infeasible"
        elif pos > 0 and group[order[pos - 1]] == 0 and shown[order[pos - 1]] == shown[k]:
            prev = order[pos - 1]
            if exact[prev] > exact[k]:
                why = f"an unrounded score higher by {exact[prev] - exact[k]:.3f}"
            elif volume[prev] < volume[k]:
                why = "less cut + fill"
            elif margin[prev] > margin[k]:
                why = f"a larger {CRITERION_NAMES.get(criterion, criterion)} margin"
            elif setback[prev] < setback[k]:
                why = "the smaller setback"
            elif offset[prev] < offset[k]:
                why = "the smaller offset"
            else:
                why = "the left side (otherwise equal)"
            notes[k] = f"score shows as rank {pos}'s {format_number(shown[k], 1)}; rank {pos} has {why}"
    return rank, notes


def add_ranks(result, options, spec) -> None:
    """Add the ``rank`` and ``rank_note`` columns to a sweep result (see :func:`rank_candidates`).

    The best candidate becomes the one ranked first (the same as the highest score, unless two
    scores are exactly equal).
    """
    target = options.rdh_target_m if options.rdh_target_m is not None else (spec.target_rdh_m or 15.5)
    rank, notes = rank_candidates(result.columns, result.reasons, options.roughness_criterion, target, spec.units)
    result.columns["rank"] = rank
    result.columns["rank_note"] = np.array(notes, dtype=object)
    if result.best is not None:
        result.best = int(np.flatnonzero(rank == 1)[0])
