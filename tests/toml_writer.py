"""A small TOML writer for test documents (inline tables, quoted keys); the project only reads TOML."""

from __future__ import annotations

import json
import math


def value(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return repr(v)
    if isinstance(v, str):
        return json.dumps(v, ensure_ascii=False)
    if isinstance(v, list):
        return "[" + ", ".join(value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{ " + ", ".join(f"{json.dumps(str(k), ensure_ascii=False)} = {value(x)}" for k, x in v.items()) + " }"
    raise TypeError(type(v))


def dumps(doc: dict) -> str:
    """Every top-level key as ``"key" = value`` (tables inline)."""
    return "\n".join(f"{json.dumps(str(k), ensure_ascii=False)} = {value(v)}" for k, v in doc.items()) + "\n"
