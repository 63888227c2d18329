"""The clearance transmitter of a two-frequency capture-effect glide path, and receiver capture.

A capture-effect (M-array) glide path radiates its course signal with a carrier that is weak
below the path (the derived course CSB of :mod:`geo.radio.arrays` is 16 dB below its path level at
0.45 theta), so a second transmitter, the clearance, fills the low angles on a carrier a few kHz
away. The receiver sees both carriers; its detector is captured by the stronger one.

The clearance feeds (derived here; no published set was at hand, see :mod:`geo.radio.arrays`)
-------------------------------------------------------------------------------------
On the same three antennas at ``h, 2h, 3h`` (``x = pi sin(e) / (2 sin(theta))`` over a perfect
conductor, each antenna and its image radiating ``2j sin(m x)``, Kraus [1]_):

* clearance CSB on the middle antenna only: ``sin 2x``, a null on the path (the course keeps the
  receiver there) and its maximum at 0.5 theta, where the course carrier is weak;
* clearance SBO on the lower and upper antennas, equal and in phase: ``sin x + sin 3x =
  2 sin 2x cos x``, so the clearance SBO/CSB ratio is ``2 cos x``: the clearance alone has the
  course's DDM shape (zero on the path, 150 Hz below, 90 Hz above), only steeper, and pulls the
  path nowhere.
* levels: the clearance SBO is set so that the clearance alone gives 0.44 DDM (twice the
  0.22 of Annex 10 Vol I 3.1.5.6.5) at 0.45 theta, strong 150 Hz below the path without
  over-modulating (0.58 DDM at the horizon); the clearance carrier is set so that the capture
  margins balance: the clearance carrier exceeds the course carrier at 0.45 theta (the lower
  edge of coverage, Annex 10 Vol I 3.1.5.3.1) by as many dB as the course exceeds the clearance
  at the half-sector below the path. Both rules are mastplan's, labelled derived.

The carrier offset: the two carriers of a two-frequency glide path are a few kHz apart (Annex 10
Vol I 3.1.5.2.1, 4 to 32 kHz, from memory: confirm the edition in force); mastplan takes 8 kHz. It
changes the clearance wavelength by 2.4e-5 (included) and makes the two carriers beat at 8 kHz,
far above the tones, which the receiver's audio filter removes.

The tones of the two carriers are phase-locked, 90 Hz to 90 Hz and 150 Hz to 150 Hz (Annex 10
Vol I 3.1.5.5.3.1 [5]_, seen in a quotation of the 2006 text), so they are taken in phase here.

The capture model
-----------------
With course ``A1(t)`` and clearance ``A2(t)`` (complex envelopes, each ``C (1 + m (a + b)) +
S (b - a)``, ``a``, ``b`` the 90 and 150 Hz tones, ``m`` = 0.4), a linear envelope detector gives
``|A1 + A2 exp(j dw t)|``. Its audio part, with the beat filtered out, is the average over the
beat phase [2]_ [3]_:

    v = |A1| M(|A2| / |A1|),   M(x) = (2 / pi) (1 + x) E(4 x / (1 + x)^2)   (x <= 1),

``E`` the complete elliptic integral of the second kind (parameter ``k^2``, Abramowitz and
Stegun 17.3 [4]_), from ``|1 + x e^{j phi}| = (1 + x) sqrt(1 - k^2 sin^2(phi / 2))``. The tones
of ``v`` give the DDM (:func:`detected_ddm` does it over one 1/30 s period of both tones). For
small modulation the tone depths combine with weights ``1 - g`` and ``g``::

    DDM = (1 - g) DDM1 + g DDM2,   g = x M'(x) / M(x) = [x E + (E - K)(1 - x) / 2] / [(1 + x) E],

with ``g -> x^2 / 2`` for a weak second carrier, ``g(1) = 1/2`` and ``g(x) = 1 - g(1/x)``
(:func:`capture_weight`): the weaker carrier's tones are suppressed by ``x^2 / 2``, the capture
effect of envelope detection [2]_. A square-law detector would weight by power,
``x^2 / (1 + x^2)``, twice as much for a weak carrier; mastplan models the linear envelope
detector of AM receivers [2]_ (an assumption about the airborne receiver, stated here).

References
----------
.. [1] Kraus, J. D., *Antennas*, 2nd ed., McGraw-Hill, 1988, sec. 11-9 (image theory).
.. [2] Taub, H. and Schilling, D. L., *Principles of Communication Systems*, 2nd ed., McGraw-Hill,
       1986, ch. 3 and 8 (envelope detection of AM; a weak interfering carrier appears at the
       detector output as a beat and only in second order at baseband); from memory.
.. [3] Schwartz, M., *Information Transmission, Modulation, and Noise*, 4th ed., McGraw-Hill,
       1990, ch. 4 and 6 (envelope detector with a carrier and an interfering signal); from memory.
.. [4] Abramowitz, M. and Stegun, I. A., *Handbook of Mathematical Functions*, 1964, 17.3
       (complete elliptic integrals; ``scipy.special.ellipe`` and ``ellipk`` take the parameter).
.. [5] ICAO Annex 10, Volume I, 3.1.5.2.1 (two-frequency glide path carriers 4-32 kHz apart),
       3.1.5.5.3.1 (the tones of the two carriers phase-locked; seen in a quotation),
       3.1.5.3.1 (coverage down to 0.45 theta), 3.1.5.5.1 (40 % per tone), 3.1.5.6 (0.0875 DDM at
       the half-sector), 3.1.5.6.5 (0.22 DDM below the path); paragraph numbers and the offset
       range from memory.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from geo.radio.below_path import DOWN_TO_FRACTION, BelowPathCheck, check_below_path
from geo.radio.prediction import TONE_MODULATION, ArrayModel, far_field_ddm

__all__ = [
    "CLEARANCE_OFFSET_HZ",
    "CLEARANCE_DDM_AT_LOW_EDGE",
    "capture_weight",
    "beat_average",
    "detected_ddm",
    "ClearanceDesign",
    "CaptureEffectAssessment",
    "clearance_model",
    "assess_capture_effect",
]

#: Clearance carrier offset from the course carrier [5]_ (4-32 kHz from memory; mastplan's pick). [Hz]
CLEARANCE_OFFSET_HZ = 8_000.0
#: Clearance-alone DDM at 0.45 theta: twice the 0.22 of 3.1.5.6.5 (derived, mastplan's rule).
CLEARANCE_DDM_AT_LOW_EDGE = 0.44
#: Samples over one common period (1/30 s) of the 90 and 150 Hz tones.
_PERIOD_SAMPLES = 256
_SPEED_OF_LIGHT_M_S = 299_792_458.0


def _ellipe_ellipk(m):
    from scipy.special import ellipe, ellipk

    m = np.clip(m, 0.0, 1.0)  # 4 s / (1 + s)^2 may round above 1 at s = 1
    return ellipe(m), ellipk(np.minimum(m, 1.0 - 1e-16))


def beat_average(x) -> np.ndarray:
    """``M(x)``: mean over the beat phase of ``|1 + x exp(j phi)|``, ``x`` >= 0 [4]_.

    For ``x > 1`` it is ``x M(1/x)`` (the envelope is symmetric in the two carriers).
    """
    x = np.asarray(x, dtype=float)
    big = x > 1.0
    s = np.where(big, 1.0 / np.where(big, x, 1.0), x)
    e, _ = _ellipe_ellipk(4.0 * s / (1.0 + s) ** 2)
    m = 2.0 / math.pi * (1.0 + s) * e
    return np.where(big, x * m, m)


def capture_weight(amplitude_ratio) -> np.ndarray:
    """Weight ``g`` of the second carrier's tones at a linear envelope detector (small modulation).

    Parameters
    ----------
    amplitude_ratio : array_like
        ``x = |C2| / |C1|``, second carrier over first. [-]

    Returns
    -------
    numpy.ndarray
        ``g = x M'(x) / M(x)``; ``DDM = (1 - g) DDM1 + g DDM2`` (module notes) [2]_ [4]_.
    """
    x = np.asarray(amplitude_ratio, dtype=float)
    big = x > 1.0
    s = np.where(big, 1.0 / np.where(big, x, 1.0), x)
    e, k = _ellipe_ellipk(4.0 * s / (1.0 + s) ** 2)
    with np.errstate(invalid="ignore"):
        g = (s * e + (e - k) * (1.0 - s) / 2.0) / ((1.0 + s) * e)
    g = np.where(s >= 1.0, 0.5, g)
    return np.where(big, 1.0 - g, g)


def detected_ddm(csb1, sbo1, scale1: float, csb2=None, sbo2=None, scale2: float = 1.0) -> np.ndarray:
    """DDM at a linear envelope detector fed one carrier, or two carriers apart in frequency.

    The audio over one common period of both tones is ``|A1|`` (one carrier) or
    ``|A1| M(|A2| / |A1|)`` (two; the beat averaged out, module notes), and the DDM is the
    difference of the 150 Hz and 90 Hz depths read by DFT. For one carrier and small ``S/C`` it
    is :func:`geo.radio.prediction.ddm`, ``2 Re(k S / C)``; it saturates at 0.8 (one tone gone).

    Parameters
    ----------
    csb1, sbo1 : array_like of complex
        First (course) carrier's CSB and SBO fields.
    scale1 : float
        SBO scale of the first carrier (:class:`geo.radio.prediction.PathPrediction`).
    csb2, sbo2 : array_like of complex, optional
        Second (clearance) carrier's fields.
    scale2 : float
        SBO scale of the second carrier.

    Returns
    -------
    numpy.ndarray
        DDM, positive when 150 Hz dominates.
    """
    t = np.arange(_PERIOD_SAMPLES) / (_PERIOD_SAMPLES * 30.0)
    a, b = np.sin(2 * math.pi * 90.0 * t), np.sin(2 * math.pi * 150.0 * t)

    def envelope(csb, sbo, scale):
        c = np.atleast_1d(np.asarray(csb, dtype=complex))[:, None]
        s = scale * np.atleast_1d(np.asarray(sbo, dtype=complex))[:, None]
        return np.abs(c * (1.0 + TONE_MODULATION * (a + b)) + s * (b - a))

    v1 = envelope(csb1, sbo1, scale1)
    if csb2 is None:
        v = v1
    else:
        v2 = envelope(csb2, sbo2, scale2)
        hi, lo = np.maximum(v1, v2), np.minimum(v1, v2)
        with np.errstate(invalid="ignore", divide="ignore"):
            v = np.where(hi > 0.0, hi * beat_average(np.where(hi > 0.0, lo / np.where(hi > 0, hi, 1.0), 0.0)), 0.0)
    spectrum = np.abs(np.fft.rfft(v, axis=1))
    return 2.0 * (spectrum[:, 5] - spectrum[:, 3]) / spectrum[:, 0]  # 150 Hz = 5 x 30 Hz, 90 Hz = 3 x 30 Hz


@dataclass(frozen=True)
class ClearanceDesign:
    """The clearance transmitter of a capture-effect array (derived; module notes).

    Attributes
    ----------
    offset_hz : float
        Clearance carrier minus course carrier. [Hz]
    wavelength_m : float
        Clearance wavelength. [m]
    csb_feed, sbo_feed : tuple of complex
        Clearance feeds per antenna, lowest first, on the course feeds' scale (the SBO level
        included; slope phasing is applied as for the course).
    capture_margin_db : float
        Clearance over course carrier at 0.45 theta, equal to course over clearance at the
        half-sector below the path. [dB]
    source : str
    """

    offset_hz: float
    wavelength_m: float
    csb_feed: tuple[complex, ...]
    sbo_feed: tuple[complex, ...]
    capture_margin_db: float
    source: str


def _with_feeds(course: ArrayModel, csb, sbo, wavelength_m: float, angle_deg: float) -> ArrayModel:
    base = ArrayModel(
        course.positions_m,
        np.asarray(csb, complex),
        np.asarray(sbo, complex),
        wavelength_m,
        course.normal,
        course.relative_permittivity,
        course.conductivity_s_m,
        layer=course.layer,
        element=course.element,
    )
    turn = np.exp(-1j * np.radians(base.slope_phases_deg(angle_deg)))
    return ArrayModel(
        base.positions_m,
        base.csb * turn,
        base.sbo * turn,
        wavelength_m,
        base.normal,
        base.relative_permittivity,
        base.conductivity_s_m,
        layer=base.layer,
        element=base.element,
    )


def clearance_model(
    course: ArrayModel,
    angle_deg: float,
    csb_pattern,
    sbo_pattern,
    half_sector: float = 0.12,
    offset_hz: float = CLEARANCE_OFFSET_HZ,
    source: str = "",
) -> tuple[ArrayModel, ClearanceDesign]:
    """Clearance feeds on the course antennas, levelled by the rules of the module notes.

    Parameters
    ----------
    course : ArrayModel
        The course array (positions, plane, ground; its feeds are not used).
    angle_deg : float
        Path angle theta. [deg]
    csb_pattern, sbo_pattern : sequence of complex
        Relative clearance feeds per antenna, lowest first (:mod:`geo.radio.arrays`).
    half_sector : float
        Fraction of theta below the path of the half-sector.
    offset_hz : float
        Clearance carrier offset. [Hz]
    source : str
        Where the feeds come from.

    Returns
    -------
    model : ArrayModel
        The clearance transmitter's fields (SBO level included: use an SBO scale of 1).
    design : ClearanceDesign

    Raises
    ------
    ValueError
        When a carrier vanishes where the levels are set (site-file feeds can do that).
    """
    frequency_hz = _SPEED_OF_LIGHT_M_S / course.wavelength_m
    lam = _SPEED_OF_LIGHT_M_S / (frequency_hz + offset_hz)
    theta = math.radians(angle_deg)
    low, near = DOWN_TO_FRACTION * theta, (1.0 - half_sector) * theta
    unit = _with_feeds(course, csb_pattern, sbo_pattern, lam, angle_deg)
    course_c = np.abs(course.far_fields([low, near])[0])
    clear_c = np.abs(unit.far_fields([low, near])[0])
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = clear_c / course_c
        unit_ddm = float(far_field_ddm(unit, low, 1.0)[0])
    if not (np.all(np.isfinite(ratio)) and np.all(ratio > 0.0) and math.isfinite(unit_ddm) and unit_ddm != 0.0):
        raise ValueError("a carrier vanishes at 0.45 theta or at the half-sector: no clearance level can be set")
    level = 1.0 / math.sqrt(ratio[0] * ratio[1])  # balance: level * r_low = 1 / (level * r_near)
    margin_db = 20.0 * math.log10(level * ratio[0])
    sbo_level = CLEARANCE_DDM_AT_LOW_EDGE / unit_ddm
    csb = tuple(complex(level * f) for f in csb_pattern)
    sbo = tuple(complex(level * sbo_level * f) for f in sbo_pattern)
    design = ClearanceDesign(offset_hz, lam, csb, sbo, margin_db, source)
    return _with_feeds(course, csb, sbo, lam, angle_deg), design


@dataclass(frozen=True)
class CaptureEffectAssessment:
    """The course alone and the course with its clearance, below the path.

    Attributes
    ----------
    design : ClearanceDesign
    course_only, combined : BelowPathCheck
        The check on the course signal alone and on the detected two-carrier DDM.
    combined_path_angle_deg : float
        Where the detected two-carrier DDM is zero. [deg]
    combined_ddm_at_half_sector : float
        Detected two-carrier DDM at the half-sector below the path (0.0875 for the course alone).
    course_ddm_at_down_to, clearance_ddm_at_down_to : float
        Each carrier's own DDM at the band's lower edge.
    """

    design: ClearanceDesign
    course_only: BelowPathCheck
    combined: BelowPathCheck
    combined_path_angle_deg: float
    combined_ddm_at_half_sector: float
    course_ddm_at_down_to: float
    clearance_ddm_at_down_to: float


def assess_capture_effect(
    course: ArrayModel,
    sbo_scale: float,
    angle_deg: float,
    path_angle_deg: float,
    csb_pattern,
    sbo_pattern,
    half_sector: float = 0.12,
    down_to_fraction: float = DOWN_TO_FRACTION,
    source: str = "",
) -> CaptureEffectAssessment:
    """Below-path check of a capture-effect array, course alone and with its clearance.

    Parameters
    ----------
    course : ArrayModel
        The course array with its feeds.
    sbo_scale : float
        The course SBO scale (:func:`geo.radio.prediction.predict_path`).
    angle_deg, path_angle_deg : float
        Design and predicted path angles. [deg]
    csb_pattern, sbo_pattern : sequence of complex
        Relative clearance feeds (:mod:`geo.radio.arrays`).
    half_sector, down_to_fraction : float
        Fractions of theta.
    source : str
        Where the clearance feeds come from.

    Returns
    -------
    CaptureEffectAssessment
    """
    clear, design = clearance_model(course, angle_deg, csb_pattern, sbo_pattern, half_sector, source=source)

    def combined(e):
        c1, s1 = course.far_fields(e)
        c2, s2 = clear.far_fields(e)
        return detected_ddm(c1, s1, sbo_scale, c2, s2, 1.0)

    def course_ddm(e):
        return far_field_ddm(course, e, sbo_scale)

    def carrier(e):
        return np.abs(course.far_fields(e)[0])

    alone = check_below_path(course_ddm, angle_deg, path_angle_deg, down_to_fraction, carrier_of_elevation=carrier)
    both = check_below_path(combined, angle_deg, path_angle_deg, down_to_fraction)
    theta = math.radians(angle_deg)
    lo, hi = 0.75 * theta, 1.25 * theta
    f_lo = float(combined(np.array([lo]))[0])
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        f_mid = float(combined(np.array([mid]))[0])
        if (f_mid > 0.0) == (f_lo > 0.0):
            lo, f_lo = mid, f_mid
        else:
            hi = mid
    edge = np.array([down_to_fraction * theta])
    return CaptureEffectAssessment(
        design,
        alone,
        both,
        math.degrees(0.5 * (lo + hi)),
        float(combined(np.array([(1.0 - half_sector) * theta]))[0]),
        float(course_ddm(edge)[0]),
        float(far_field_ddm(clear, edge, 1.0)[0]),
    )
