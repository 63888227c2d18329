"""pyproj transformers both ways: the reverse one from the forward one's pipeline, reversed.

A :class:`pyproj.Transformer` made from two CRSs costs tens of milliseconds, nearly all of it
PROJ's search of its database for the operations between them; one made from a pipeline's text
costs a fraction of a millisecond. PROJ runs a transformer made from CRSs as the pipeline its
``definition`` states, and between a CRS and another on the same datum (map projections, unit
and axis steps) the pipeline the other way is that one reversed. Written out as PROJ writes it,
it computes the same figures bit for bit as the transformer PROJ would have found. Likewise the
pipeline from one projected CRS to another on the same datum is the first's projection undone,
then the second's (:func:`onward_pipeline`).

References
----------
.. [1] PROJ contributors, *PROJ coordinate transformation software library*, "pipeline" and
       "unitconvert" operations (https://proj.org/operations/pipeline.html).
"""

from __future__ import annotations

__all__ = ["inverse_transformer", "reversed_pipeline", "onward_pipeline"]


def inverse_transformer(forward, source, target):
    """The transformer ``target`` -> ``source`` of a ``source`` -> ``target`` one (x, y order).

    PROJ runs a transformer made from CRSs as the pipeline its ``definition`` states; the one
    the other way, for conversions without datum shifts, is that pipeline reversed
    (:func:`reversed_pipeline`). Made from that text it skips PROJ's search of its database for
    operations (most of the cost of a transformer) and computes the same figures bit for bit.
    Any other pipeline: the search, as before.
    """
    from pyproj import Transformer

    reverse = reversed_pipeline(forward.definition)
    if reverse is None:
        return Transformer.from_crs(target, source, always_xy=True)
    return Transformer.from_pipeline(reverse)


#: Pipeline steps :func:`reversed_pipeline` turns round: map projections (run inverse) and the
#: unit and axis steps between them. Datum shifts and grids are not among them.
_REVERSIBLE_STEPS = frozenset(
    {
        "aea", "cass", "eqc", "etmerc", "laea", "lcc", "merc", "omerc", "poly", "stere",
        "sterea", "tmerc", "ups", "utm", "webmerc", "unitconvert", "axisswap",
    }
)  # fmt: skip
#: A unit step's parameters, in the order PROJ writes them, each with its partner the other way.
_UNIT_PARTNER = {"xy_in": "xy_out", "xy_out": "xy_in", "z_in": "z_out", "z_out": "z_in"}


def reversed_pipeline(definition: str) -> str | None:
    """The PROJ pipeline that undoes ``definition``, as PROJ writes the one between the CRSs swapped.

    Steps in reverse order; a projection step gains or loses ``inv``; a unit conversion swaps its
    input and output units (PROJ writes it so, and it rounds differently from an inverted one); an
    ``axisswap`` of two axes stays as it is. None for anything else (datum shifts, grids, other
    axis orders, a single operation): the caller then asks PROJ.

    Parameters
    ----------
    definition : str
        ``Transformer.definition``, e.g. ``"proj=pipeline step inv proj=tmerc ... step proj=utm zone=14 ellps=WGS84"``.

    Returns
    -------
    str or None
    """
    steps = _steps(definition)
    if steps is None:
        return None
    out = []
    for step in reversed(steps):
        inverse = step[:1] == ["inv"]
        body = step[1:] if inverse else step
        if not body or not body[0].startswith("proj=") or body[0][5:] not in _REVERSIBLE_STEPS:
            return None
        name = body[0][5:]
        if name == "unitconvert":
            units = dict(w.partition("=")[::2] for w in body[1:])
            if inverse or not set(units) <= set(_UNIT_PARTNER):
                return None
            swapped = {k: units[_UNIT_PARTNER[k]] for k in _UNIT_PARTNER if _UNIT_PARTNER[k] in units}
            out.append(["proj=unitconvert", *(f"{k}={v}" for k, v in swapped.items())])
        elif name == "axisswap":
            if inverse or body[1:] != ["order=2,1"]:
                return None
            out.append(body)
        else:
            out.append(body if inverse else ["inv", *body])
    return " ".join(["proj=pipeline", *(" ".join(["step", *step]) for step in out)])


def _steps(definition: str) -> list[list[str]] | None:
    """A pipeline's steps as lists of words (``+`` signs dropped); None if it is not a pipeline."""
    words = [w.removeprefix("+") for w in definition.split()]
    if len(words) < 2 or words[0] != "proj=pipeline" or words[1] != "step":
        return None
    steps = []
    for word in words[1:]:
        if word == "step":
            steps.append([])
        else:
            steps[-1].append(word)
    return steps


def onward_pipeline(forward_definition: str, source, target) -> str | None:
    """The pipeline PROJ finds from a projected CRS to another projected CRS on the same datum.

    Parameters
    ----------
    forward_definition : str
        The pipeline from the geographic CRS of ``source`` to ``source``: a unit step from degrees
        to radians, then the projection (as :class:`geo.airfield.frame.RunwayFrame` makes its own).
    source, target : pyproj.CRS
        Projected CRSs.

    Returns
    -------
    str or None
        ``source``'s projection run inverse, then ``target``'s (in x, y order, as
        ``always_xy=True`` gives); None unless both are projected on the very same datum and
        ``target``'s conversion is one projection between the usual unit and axis steps: the caller
        then asks PROJ.
    """
    if not (source.is_projected and target.is_projected) or target.coordinate_operation is None:
        return None
    if not target.geodetic_crs.equals(source.geodetic_crs, ignore_axis_order=True):  # PROJ's test of one datum
        return None
    own, onward = _steps(forward_definition), _steps(target.coordinate_operation.to_proj4())
    if own is None or onward is None:
        return None
    if onward and onward[0] == ["proj=axisswap", "order=2,1"]:  # latitude first: x, y order wanted
        onward = onward[1:]
    if onward and onward[-1] == ["proj=axisswap", "order=2,1"]:  # northing first: likewise
        onward = onward[:-1]
    degrees_to_radians = ["proj=unitconvert", "xy_in=deg", "xy_out=rad"]
    if len(own) != 2 or own[0] != degrees_to_radians or len(onward) != 2 or onward[0] != degrees_to_radians:
        return None
    projections = (own[1], onward[1])
    if any(p[:1] == ["inv"] or p[0].partition("=")[2] in ("unitconvert", "axisswap") for p in projections):
        return None
    return " ".join(["proj=pipeline", "step inv", " ".join(own[1]), "step", " ".join(onward[1])])
