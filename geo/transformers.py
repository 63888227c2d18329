"""pyproj transformers both ways: the reverse one from the forward one's pipeline, reversed.

A :class:`pyproj.Transformer` made from two CRSs costs tens of milliseconds, nearly all of it
PROJ's search of its database for the operations between them; one made from a pipeline's text
costs a fraction of a millisecond. PROJ runs a transformer made from CRSs as the pipeline its
``definition`` states, and between a CRS and another on the same datum (map projections, unit
and axis steps) the pipeline the other way is that one reversed. Written out as PROJ writes it,
it computes the same figures bit for bit as the transformer PROJ would have found.

References
----------
.. [1] PROJ contributors, *PROJ coordinate transformation software library*, "pipeline" and
       "unitconvert" operations (https://proj.org/operations/pipeline.html).
"""

from __future__ import annotations

__all__ = ["inverse_transformer", "reversed_pipeline"]


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
    words = definition.split()
    if not words or words[0] != "proj=pipeline" or words.count("step") < 1 or words[1] != "step":
        return None
    steps, current = [], None
    for word in words[1:]:
        if word == "step":
            current = []
            steps.append(current)
        else:
            current.append(word)
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
