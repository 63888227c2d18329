"""What an object's disturbance is, per approach segment: bends everywhere, steady shifts far out.

An object near the mast changes the DDM along the approach. The change is judged two ways:

**Bends** (every segment), by the rule of the surface prediction's structure
(:func:`geo.radio.structure.structure_arrays`, the same rule as
:func:`geo.radio.structure.segment_structure`): the recorder's filter, the change about its
straight-line fit (coverage limit to A, A to B) or its mean (nearer the threshold), the 95th
percentile of ``|bend| / limit`` over the segment: the object's bend share ``r_o``. The terrain
bends the path too: its own share ``r_t`` per segment is that of the study's surface prediction
(physical optics over the DEM; zero, stated so, when the site has none). They add as independent
bends, by root sum of squares: the **combined bend share** ``sqrt(r_o^2 + r_t^2)``, the largest over
the segments.

**Steady shifts** (far segments, coverage limit to A and A to B, the segments whose bends are taken
about a straight line): there the object's change hardly varies along the segment (a vehicle 100 m
ahead moves the whole far field), the line takes it out of the bends, and what the aircraft sees is
a shifted path. Its mean over the segment, at the designed path and at the nominal half-sector
elevations ``(1 -+ 0.12) theta`` below and above it, gives, with the undisturbed DDM ``D0`` there
(linear about the path, the displacement sensitivity ``S = (D0_below - D0_above) / (e_above -
e_below)``)::

    path angle shift      d_theta = dD_path / S                                  (DDM > 0: the path rose)
    sensitivity change    d_S / S = (dD_below - dD_above) / (D0_below - D0_above)

judged against the monitor's alarm limits (from memory, as :mod:`geo.study.surface_sector` uses
them): the path angle -0.075 theta / +0.10 theta (ICAO Annex 10 Vol I 3.1.5.7.1 a)), the
displacement sensitivity 25 % (3.1.5.7.1 e)). The **shift share** is the larger of
``|d_theta| / allowance`` (the allowance on the shift's side) and ``|d_S / S| / 0.25``, the
largest over the far segments.

The **judged share** of a position is the larger of the combined bend share and the shift share;
the areas' ``critical_share`` and ``sensitive_share`` apply to it (a share of the structure limit
for bends, of the monitor limits for shifts).

References
----------
.. [1] ICAO Annex 10, Volume I, 3.1.5.4 (structure) and 3.1.5.7.1 a), e) (monitor alarm limits);
       from memory, to be confirmed against the edition in force.
.. [2] Papoulis, A., *Probability, Random Variables and Stochastic Processes*, 3rd ed.,
       McGraw-Hill, 1991, sec. 7-1 (the variance of a sum of independent variables: root sum of
       squares of their standard deviations).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from geo.radio.structure import reference_kind

__all__ = [
    "ANGLE_MONITOR",
    "SENSITIVITY_MONITOR",
    "HALF_SECTOR",
    "SHIFT_STEP_M",
    "RULE_TEXT",
    "ShiftReceivers",
    "far_segments",
    "shift_receivers",
    "terrain_shares",
    "steady_shifts",
    "judged_figures",
]

_MEMORY = "from memory: confirm against the edition in force"
#: Path angle monitor alarm limits, shares of theta below and above (Annex 10 Vol I 3.1.5.7.1 a), from memory).
ANGLE_MONITOR = (-0.075, 0.10)
#: Displacement sensitivity change the monitor alarms on (Annex 10 Vol I 3.1.5.7.1 e), from memory).
SENSITIVITY_MONITOR = 0.25
MONITOR_SOURCE = f"ICAO Annex 10 Vol I 3.1.5.7.1 a) and e), {_MEMORY}"
#: The nominal half-sector, share of theta, where the sector is sampled (Annex 10 Vol I 3.1.5.6, from memory).
HALF_SECTOR = 0.12
#: Spacing of the receivers above and below the path in the far segments (a mean needs few). [m]
SHIFT_STEP_M = 500.0
RULE_TEXT = (
    "Per position: bends in every segment by the structure rule of the surface prediction (filter, about a "
    "straight line from the coverage limit to B, about the mean nearer the threshold, 95 % of |bend| / limit), "
    "the object's share combined with the terrain's own (from the study's surface prediction, zero without "
    "one) by root sum of squares; steady shifts in the far segments (coverage limit to A, A to B): the "
    "object's mean DDM change over the segment at the designed path and at (1 -+ 0.12) theta gives the path "
    "angle shift and the displacement sensitivity change, against the monitor's alarm limits (path angle "
    f"-0.075 theta / +0.10 theta, sensitivity 25 %; {MONITOR_SOURCE}). The judged share is the larger of "
    "the combined bend share and the shift share; critical_share and sensitive_share apply to it."
)


def far_segments(segments) -> list[int]:
    """Indices of the segments judged by steady shifts: those whose bends are taken about a line."""
    return [i for i, s in enumerate(segments) if reference_kind(s) == "line"]


@dataclass(frozen=True)
class ShiftReceivers:
    """Receivers below and above the designed path in the far segments, with the undisturbed DDM there.

    Attributes
    ----------
    below_m, above_m : numpy.ndarray, shape (Q, 3)
        At ``(1 - HALF_SECTOR) theta`` and ``(1 + HALF_SECTOR) theta`` seen from the path's origin. [m]
    before_threshold_m : numpy.ndarray, shape (Q,)
    ddm_below, ddm_above : numpy.ndarray, shape (Q,)
        Undisturbed DDM.
    """

    below_m: np.ndarray
    above_m: np.ndarray
    before_threshold_m: np.ndarray
    ddm_below: np.ndarray
    ddm_above: np.ndarray


def shift_receivers(receivers, segments, fields, ddm) -> ShiftReceivers:
    """Receivers every :data:`SHIFT_STEP_M` over the far segments, below and above the designed path.

    Parameters
    ----------
    receivers : geo.optics.areas.PathReceivers
        The designed path's receivers (their heights give theta and the path's origin).
    segments : list of Segment
    fields : callable
        ``fields(points) -> (csb, sbo)``, the undisturbed fields (:meth:`ArrayModel.fields`).
    ddm : callable
        ``ddm(csb, sbo) -> DDM``.
    """
    p, before = receivers.points_m, receivers.before_threshold_m
    slope = (p[-1, 2] - p[0, 2]) / (p[-1, 0] - p[0, 0])  # tan theta of the straight designed path
    origin_u = p[0, 0] - p[0, 2] / slope  # where it meets Z = 0
    far = far_segments(segments)
    lo = min((segments[i].to_m for i in far), default=0.0)
    hi = max((segments[i].from_m for i in far), default=0.0)
    count = max(int(math.ceil((hi - lo) / SHIFT_STEP_M)) + 1, 2)
    d = np.linspace(lo, hi, count)
    u = np.interp(d, before, p[:, 0])
    w = np.interp(d, before, p[:, 1])
    theta = math.atan(slope)
    out = []
    for e in (theta * (1.0 - HALF_SECTOR), theta * (1.0 + HALF_SECTOR)):
        points = np.column_stack([u, w, (u - origin_u) * math.tan(e)])
        out.append((points, ddm(*fields(points))))
    return ShiftReceivers(out[0][0], out[1][0], d, out[0][1], out[1][1])


def terrain_shares(surface, segments) -> tuple[np.ndarray, str]:
    """The terrain's own bend share per segment (95 % bend / limit) and where it comes from.

    Parameters
    ----------
    surface : geo.optics.surface_prediction.SurfacePrediction or None
        The study's surface prediction; its ``structure`` names the segments.
    segments : list of Segment
    """
    shares = np.zeros(len(segments))
    if surface is None or not getattr(surface, "structure", None):
        return shares, "zero: the study has no surface prediction (flat ground, or prediction.surface = false)"
    found = {s.segment: s.bend_95_ddm / s.limit_ddm for s in surface.structure}
    for i, seg in enumerate(segments):
        value = found.get(seg.name, 0.0)
        shares[i] = value if np.isfinite(value) else 0.0
    return shares, "the study's surface prediction over the DEM (physical optics): 95 % bend / limit per segment"


def steady_shifts(segments, receivers, change, shift: ShiftReceivers, change_below, change_above) -> dict:
    """Path angle shift, sensitivity change and the shift share per position (module notes).

    Parameters
    ----------
    segments : list of Segment
    receivers : PathReceivers
    change : numpy.ndarray, shape (G, R)
        The object's DDM change on the designed path.
    shift : ShiftReceivers
    change_below, change_above : numpy.ndarray, shape (G, Q)
        Its change at the receivers below and above the path.

    Returns
    -------
    dict of numpy.ndarray, shape (G,)
        ``angle_shift_deg`` (the far segment's with the largest share), ``sensitivity_change``
        (relative, signed), ``shift_share``.
    """
    first, last = receivers.points_m[0], receivers.points_m[-1]
    theta_deg = math.degrees(math.atan2(last[2] - first[2], last[0] - first[0]))  # the straight designed path
    g = change.shape[0]
    best = {"angle_shift_deg": np.zeros(g), "sensitivity_change": np.zeros(g), "shift_share": np.zeros(g)}
    spread = shift.ddm_below - shift.ddm_above  # D0_below - D0_above > 0
    elevations = 2.0 * HALF_SECTOR * theta_deg
    for i in far_segments(segments):
        on_path = segments[i].contains(receivers.before_threshold_m)
        off_path = segments[i].contains(shift.before_threshold_m)
        if not on_path.any() or not off_path.any():
            continue
        sensitivity = float(np.mean(spread[off_path])) / elevations  # DDM per deg
        d_path = change[:, on_path].mean(axis=1)
        d_theta = d_path / sensitivity
        d_sens = (change_below[:, off_path].mean(axis=1) - change_above[:, off_path].mean(axis=1)) / float(
            np.mean(spread[off_path])
        )
        allowance = np.where(d_theta >= 0.0, ANGLE_MONITOR[1], -ANGLE_MONITOR[0]) * theta_deg
        share = np.maximum(np.abs(d_theta) / allowance, np.abs(d_sens) / SENSITIVITY_MONITOR)
        take = ~(share <= best["shift_share"])  # NaN (swamped) taken too
        best["angle_shift_deg"] = np.where(take, d_theta, best["angle_shift_deg"])
        best["sensitivity_change"] = np.where(take, d_sens, best["sensitivity_change"])
        best["shift_share"] = np.where(take, share, best["shift_share"])
    return best


def judged_figures(bend_ratio: np.ndarray, terrain: np.ndarray, shifts: dict) -> dict:
    """Every figure of a position: object and combined bend shares, shifts, the judged share.

    Parameters
    ----------
    bend_ratio : numpy.ndarray, shape (G, S)
        The object's 95 % ``|bend| / limit`` per segment (inf where it outweighs the carrier).
    terrain : numpy.ndarray, shape (S,)
        The terrain's own share per segment.
    shifts : dict
        From :func:`steady_shifts`.

    Returns
    -------
    dict of numpy.ndarray, shape (G,)
        ``bend_share``, ``combined_bend_share``, ``angle_shift_deg``, ``sensitivity_change``,
        ``shift_share``, ``judged_share``.
    """
    with np.errstate(invalid="ignore"):
        combined = np.sqrt(bend_ratio**2 + terrain[None, :] ** 2)  # [2]: independent bends
    bend = np.nanmax(bend_ratio, axis=1)
    combined = np.nanmax(combined, axis=1)
    shift_share = np.where(np.isnan(shifts["shift_share"]), np.inf, shifts["shift_share"])
    return {
        "bend_share": bend,
        "combined_bend_share": combined,
        "angle_shift_deg": shifts["angle_shift_deg"],
        "sensitivity_change": shifts["sensitivity_change"],
        "shift_share": shift_share,
        "judged_share": np.maximum(combined, shift_share),
    }
