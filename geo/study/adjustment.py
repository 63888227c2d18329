"""Antenna moves that bring the predicted path back to the design, given what was measured.

Two small least-squares fits on the model's sensitivities (forward finite differences of the
prediction, :func:`geo.study.measured.predicted_values`; over the surface too where the study has
one, see :func:`surface_correction`):

1. **The state as measured.** The antennas as installed are the study's, each height off by
   ``delta_i`` and each adjustable feed off in amplitude and phase; and the model itself may depart
   from the real array: that departure is fitted as a *bias*, one common scale ``s`` of the
   antennas' electrical heights over the reflecting plane (``(1 + s)(h_i + delta_i)``), since the
   path angle of an image array goes with ``lambda / h`` (:mod:`geo.radio.arrays`). The fit minimises
   ``sum(((model - measured) / sigma)^2) + sum((x / prior)^2)`` (Gauss-Newton, a few steps); the
   priors (our choice) keep the offsets small where the measurement says nothing of them, and leave
   the bias free.
2. **The moves.** With that state, the moves ``m`` of the heights (and feeds) that make the model
   give again what it predicts for the design (path angle, half-sectors, RDH and every measured
   sample): the same kind of fit, the moves free. They are then rounded to the stated step and the
   path predicted after the rounded moves, bias included: what flight inspection should find.

Settings fitted: every antenna's height; for sideband-reference and capture-effect arrays also the
amplitude and phase of every feed above the lowest antenna that the model has (the lowest antenna's
feeds are the reference). The SBO level stays the study's.

A null-reference array with only its angle measured is scaled as a whole: heights times
``sin(theta_m) / sin(theta)`` (image theory, ``sin theta = lambda / (4 h)``).

Cautions: proposals to be confirmed by flight inspection; any change to a radiating navaid follows
the authority's procedures.

References
----------
.. [1] Kraus, J. D., *Antennas*, 2nd ed., McGraw-Hill, 1988, sec. 11-9 (image theory).
.. [2] Nocedal, J. and Wright, S. J., *Numerical Optimization*, 2nd ed., Springer, 2006, sec. 10.3
       (Gauss-Newton), and Tikhonov regularisation as a prior on the unknowns (sec. 10.3 notes).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from geo.radio.arrays import array_type
from geo.study.measured import FIGURE_SIGMA, Observation, observations, predicted_values
from geo.study.variants import Variant, study_heights

__all__ = [
    "Setting",
    "settings_for",
    "Adjustment",
    "adjust",
    "surface_correction",
    "DEFAULT_STEP_M",
    "ADJUSTMENT_CAUTION",
]

#: Height moves are rounded to this step unless told otherwise (common practice, no source). [m]
DEFAULT_STEP_M = 0.005
#: Feed moves are rounded to these steps (our choice, no source): amplitude [fraction], phase [deg].
FEED_STEPS = {"amplitude": 0.005, "phase": 0.5}
ADJUSTMENT_CAUTION = (
    "proposed antenna moves from the model's sensitivities, a planning aid: confirm them by flight inspection, "
    "and follow the authority's procedures for any change to a radiating navaid"
)
_BIAS_PRIOR = 1.0  # the bias is left free (a prior of 100 % of the heights)
_DESIGN_FIGURES = ("path_angle_deg", "half_sector_below_deg", "half_sector_above_deg", "rdh_m")


@dataclass(frozen=True)
class Setting:
    """One adjustable setting of the array.

    Attributes
    ----------
    role : str
        The antenna's role (as the study's ``antennas``).
    index : int
        The antenna, lowest first.
    kind : {"height", "amplitude", "phase"}
        Height [m]; amplitude as a fraction of the feed's (0.01 = 1 %); phase [deg].
    feed : {"csb", "sbo"} or None
    prior : float
        Scale of an installation error of this setting (the state fit's prior; our choice).
    step : float
        Finite-difference step.
    """

    role: str
    index: int
    kind: str
    feed: str | None
    prior: float
    step: float


def settings_for(result) -> list[Setting]:
    """The heights of every antenna; for sideband-reference and capture-effect arrays, the feeds above the lowest."""
    roles = array_type(result.spec.array).roles
    out = [Setting(r, i, "height", None, 0.1, 0.002) for i, r in enumerate(roles)]
    if result.spec.array not in ("sideband-reference", "capture-effect"):
        return out
    csb, sbo, _ = result.feeds
    for name, feeds in (("sbo", sbo), ("csb", csb)):
        for i, f in enumerate(feeds):
            if i > 0 and abs(f) > 0:
                out += [
                    Setting(roles[i], i, "amplitude", name, 0.1, 0.005),
                    Setting(roles[i], i, "phase", name, 10.0, 0.5),
                ]
    return out


def _variant(result, settings, x, moves=None, condition: Variant | None = None) -> Variant:
    """The array with the state ``x`` (bias first, then the settings) and the ``moves`` (settings)."""
    total = np.array(x[1:], float) + (0.0 if moves is None else np.asarray(moves, float))
    heights = list(study_heights(result))
    csb, sbo, _ = result.feeds
    feeds = {"csb": [complex(v) for v in csb], "sbo": [complex(v) for v in sbo]}
    for s, v in zip(settings, total):
        if s.kind == "height":
            heights[s.index] += v
        elif s.kind == "amplitude":
            feeds[s.feed][s.index] *= 1.0 + v
        else:
            feeds[s.feed][s.index] *= complex(math.cos(math.radians(v)), math.sin(math.radians(v)))
    scaled = tuple((1.0 + x[0]) * h for h in heights)
    base = condition if condition is not None else Variant()
    return replace(base, heights_m=scaled, csb=tuple(feeds["csb"]), sbo=tuple(feeds["sbo"]))


def _jacobian(func, x, steps, f0):
    cols = []
    for k, h in enumerate(steps):
        xk = np.array(x, float)
        xk[k] += h
        cols.append((func(xk) - f0) / h)
    return np.column_stack(cols)


def _cost(f, target, sigma, penalty, x) -> float:
    return float(np.sum(((f - target) / sigma) ** 2) + np.sum((penalty @ x) ** 2))


def _gauss_newton(func, x0, target, sigma, penalty, steps, iterations: int = 10):
    """``min sum(((func(x) - target) / sigma)^2) + |penalty x|^2`` by Gauss-Newton [2]_; x and its values.

    A step that raises the cost, or where the array gives no path, is halved (up to 8 times).
    """
    x = np.array(x0, float)
    f = func(x)
    cost = _cost(f, target, sigma, penalty, x)
    for _ in range(iterations):
        jac = _jacobian(func, x, steps, f)
        a = np.vstack([jac / sigma[:, None], penalty])
        b = np.r_[(target - f) / sigma, -penalty @ x]
        dx = np.linalg.lstsq(a, b, rcond=None)[0]
        for _ in range(8):
            try:
                f_new = func(x + dx)
                new_cost = _cost(f_new, target, sigma, penalty, x + dx)
            except (ValueError, ZeroDivisionError, FloatingPointError):
                new_cost = math.inf
            if new_cost <= cost:
                break
            dx = dx / 2.0
        else:
            break
        x, f, cost = x + dx, f_new, new_cost
        if np.all(np.abs(dx) <= 1e-3 * steps):
            break
    return x, f


@dataclass(frozen=True)
class Adjustment:
    """The moves and what they give.

    Attributes
    ----------
    settings : list of Setting
    bias_scale : float
        The fitted common scale of the electrical heights (the model's departure; 0: none).
    installed_offsets : numpy.ndarray
        The fitted departure of each setting as installed from the study's. [m], [fraction], [deg]
    moves, moves_rounded : numpy.ndarray
        Per setting. [m], [fraction], [deg]
    step_m : float
        The height step the moves are rounded to. [m]
    before, after : dict
        The model's figures (``path_angle_deg``, half-sectors, ``rdh_m``) as measured (the fitted state)
        and after the rounded moves, bias included.
    design : dict
        The model's figures for the study's own antennas (the moves' target).
    misfit_before, misfit_fitted : float
        RMS of ``(model - measured) / sigma`` for the study's array and for the fitted state.
    after_prediction : geo.radio.prediction.PathPrediction
        The path after the rounded moves (bias included), along the approach.
    surface_used : bool
        Whether the surface prediction's sensitivities entered.
    """

    settings: list
    bias_scale: float
    installed_offsets: np.ndarray
    moves: np.ndarray
    moves_rounded: np.ndarray
    step_m: float
    before: dict
    after: dict
    design: dict
    misfit_before: float
    misfit_fitted: float
    after_prediction: object
    surface_used: bool = False


#: The moves' priors (our choice): free moves, but heights kept in the array's ratios (a common scale)
#: where the path says nothing of one of them, within 1 % of the heights.
_MOVE_PRIOR = {"height": 10.0, "amplitude": 0.5, "phase": 45.0}
_RATIO_PRIOR = 0.01


def _move_penalty(settings, heights) -> np.ndarray:
    """Rows of the moves' prior: each move's size, and each height's relative move from the mean one."""
    n = len(settings)
    rows = [np.diag([1.0 / _MOVE_PRIOR[s.kind] for s in settings])]
    idx = [k for k, s in enumerate(settings) if s.kind == "height"]
    rel = np.zeros((len(idx), n))
    for r, k in enumerate(idx):
        rel[r, k] = 1.0 / heights[settings[k].index]
    rel = rel - rel.mean(axis=0, keepdims=True) if len(idx) > 1 else rel * 0.0
    rows.append(rel / _RATIO_PRIOR)
    return np.vstack(rows)


def _figures(result, variant) -> tuple[dict, np.ndarray]:
    obs = [Observation(k, 0.0, FIGURE_SIGMA[k]) for k in _DESIGN_FIGURES]
    return obs, predicted_values(result, obs, variant)


def _rounded(settings, moves, step_m: float) -> np.ndarray:
    steps = np.array([step_m if s.kind == "height" else FEED_STEPS[s.kind] for s in settings])
    return np.round(np.asarray(moves) / steps) * steps


def adjust(result, measured, step_m: float = DEFAULT_STEP_M, correction=None) -> Adjustment:
    """Fit the state as measured, then the moves back to the design (see the module notes).

    Parameters
    ----------
    result : geo.study.site_study.StudyResult
    measured : geo.site.measured_file.MeasuredResults
    step_m : float
        Height moves are rounded to it. [m]
    correction : callable, optional
        ``correction(x, moves, obs) -> array`` added to the image model's values (the surface's
        departure, :func:`surface_correction`); None: image theory alone.

    Returns
    -------
    Adjustment
    """
    from geo.study.measured import _measured_variant
    from geo.study.variants import variant_prediction

    settings = settings_for(result)
    obs = observations(measured)
    condition = _measured_variant(measured)
    measured_values = np.array([o.value for o in obs])
    sigma = np.array([o.sigma for o in obs])
    steps = np.array([1e-4, *[s.step for s in settings]])

    def state_model(x):
        values = predicted_values(result, obs, _variant(result, settings, x, condition=condition))
        return values if correction is None else values + correction(x, None, obs)

    x0 = np.zeros(len(settings) + 1)
    f_before = state_model(x0)
    prior = np.array([_BIAS_PRIOR, *[s.prior for s in settings]])
    x, f_fit = _gauss_newton(state_model, x0, measured_values, sigma, np.diag(1.0 / prior), steps)
    targets_obs = [Observation(k, 0.0, FIGURE_SIGMA[k]) for k in _DESIGN_FIGURES] + [
        o for o in obs if o.run is not None
    ]
    target = predicted_values(result, targets_obs, Variant())
    if correction is not None:
        target = target + correction(x0, None, targets_obs)
    t_sigma = np.array([o.sigma for o in targets_obs])

    def move_model(m):
        values = predicted_values(result, targets_obs, _variant(result, settings, x, m))
        return values if correction is None else values + correction(x, m, targets_obs)

    penalty = _move_penalty(settings, study_heights(result))
    moves, _ = _gauss_newton(move_model, np.zeros(len(settings)), target, t_sigma, penalty, steps[1:])
    rounded = _rounded(settings, moves, step_m)
    after_variant = _variant(result, settings, x, rounded)
    fig_obs, after = _figures(result, after_variant)
    _, before = _figures(result, _variant(result, settings, x))
    if correction is not None:
        after = after + correction(x, rounded, fig_obs)
        before = before + correction(x, None, fig_obs)
    return Adjustment(
        settings, float(x[0]), x[1:], moves, rounded, step_m,
        dict(zip(_DESIGN_FIGURES, before)), dict(zip(_DESIGN_FIGURES, after)), dict(zip(_DESIGN_FIGURES, target[:4])),
        float(np.sqrt(np.mean(((f_before - measured_values) / sigma) ** 2))),
        float(np.sqrt(np.mean(((f_fit - measured_values) / sigma) ** 2))),
        variant_prediction(result, after_variant), correction is not None,
    )  # fmt: skip


#: The surface's finite differences take steps this many times the image model's (2 cm of height): the
#: surface prediction's sampling follows the antennas' zones, so a smaller step measures its grid.
_SURFACE_STEP_FACTOR = 10.0


def surface_correction(result, settings: list[Setting] | None = None):
    """The surface prediction's departure from image theory and its sensitivities, for :func:`adjust`.

    The path over the DEM surface (:func:`geo.study.surface.surface_for_study`, without its convergence
    check) for the study's array and for each setting moved by its step: the departure ``D`` of the
    surface's value from image theory's, and its finite-difference slope per setting. The fits then
    use image theory plus ``D0 + sum_k dD/dk * change_k``: the surface's sensitivities, the image
    model's curvature. Values the surface prediction has no counterpart for (DDM off the designed
    path) get no correction. The bias's change is ``s h`` per height (first order).

    Parameters
    ----------
    result : geo.study.site_study.StudyResult
        With its surface prediction.
    settings : list of Setting, optional
        :func:`settings_for`'s by default.

    Returns
    -------
    callable
        ``correction(x, moves, obs) -> numpy.ndarray``.
    """
    from geo.study.measured import surface_values
    from geo.study.surface import surface_for_study
    from geo.study.variants import variant_prediction

    settings = settings if settings is not None else settings_for(result)
    mast = result.mast
    heights = list(study_heights(result))
    shifts = [a.shift_toward_runway_m for a in result.antennas]

    def surface_at(variant):
        feeds = (variant.csb or result.feeds[0], variant.sbo or result.feeds[1], result.feeds[2])
        sp = surface_for_study(
            result.spec, result.runway, mast.side, mast.setback_m, mast.offset_m, result.terrain,
            list(variant.heights_m or heights), shifts, feeds, result.wavelength_m, variant_prediction(result, variant),
            result.rdh_m, check=False,
        )  # fmt: skip
        return replace(result, surface=sp), variant

    zero = np.zeros(len(settings) + 1)
    states = [surface_at(_variant(result, settings, zero))]
    steps = [_SURFACE_STEP_FACTOR * st.step for st in settings]
    for k, h in enumerate(steps):
        step = np.zeros(len(settings))
        step[k] = h
        states.append(surface_at(_variant(result, settings, zero, step)))
    cache: dict = {}

    def tables(obs):
        key = tuple((o.name, o.run, o.distance_m, o.height_m) for o in obs)
        if key not in cache:
            dep = [np.nan_to_num(surface_values(r, obs) - predicted_values(result, obs, v)) for r, v in states]
            slopes = np.column_stack([(d - dep[0]) / h for d, h in zip(dep[1:], steps)])
            cache[key] = (dep[0], slopes)
        return cache[key]

    def correction(x, moves, obs):
        d0, slopes = tables(obs)
        change = np.array(x[1:], float) + (0.0 if moves is None else np.asarray(moves, float))
        change = change + np.array([x[0] * heights[st.index] if st.kind == "height" else 0.0 for st in settings])
        return d0 + slopes @ change

    return correction
