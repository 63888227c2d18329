"""The study's array over its reflecting plane, built once for every prediction of a study.

The image prediction, the check below the path and the surface prediction all take the
:class:`geo.radio.prediction.ArrayModel` made here.
"""

from __future__ import annotations

from geo.radio.element import element_for
from geo.radio.prediction import ArrayModel
from geo.site.site_file import SiteSpec

__all__ = ["array_model"]


def array_model(spec: SiteSpec, heights, shifts, feeds, lam: float, gu: float, gw: float) -> ArrayModel:
    """The study's array over its plane: antennas, feeds, ground constants, slope phasing.

    The one place the study's :class:`geo.radio.prediction.ArrayModel` is built; the image prediction, the
    check below the path and the surface prediction all use it, with the element pattern of
    ``[prediction] element`` (:func:`geo.radio.element.element_for`).
    """
    p = spec.prediction
    return ArrayModel.build(
        heights,
        shifts,
        feeds[0],
        feeds[1],
        lam,
        forward_gradient=gu,
        lateral_gradient=gw,
        relative_permittivity=p.relative_permittivity,
        conductivity_s_m=p.conductivity_s_m,
        phase_for_angle_deg=spec.angle_deg,
        element=element_for(p.element, p.element_front_to_back_db),
    )
