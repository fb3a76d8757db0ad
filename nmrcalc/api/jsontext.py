"""JSON text of a response, with its long arrays of numbers written in one formatting step each.

``json.dumps`` writes every float with ``repr`` (the shortest text that reads back to the same
double), about 2 µs a number under WebAssembly: the 80,000 numbers of a 16-nucleus spectrum
(its sampled ordinates and abscissae, the line and transition lists) took a tenth of a second.
Here a list of more than ``LONG`` entries that are all floats, or all objects with the same keys
whose values are floats (and other JSON scalars), is written with one ``%`` formatting of the
whole list, every float to ``DIGITS`` significant digits (relative rounding 5·10⁻¹³, far below
what any of these numbers is computed to).  Everything else is written by ``json.dumps`` as
before (a long list of anything else in one call; compact separators, no ASCII escaping, no NaN
or infinity).
"""

from __future__ import annotations

import json
from itertools import chain
from typing import Any

from nmrcalc.physics.numeric import all_finite

LONG = 64  # lists longer than this are written in one step
DIGITS = 12  # significant digits of a float in such a list
_FLOAT = f"%.{DIGITS}g"
_SCALAR = (str, int, bool, type(None))


def dumps(value: Any) -> str:
    """``value`` (a JSON-able response) as compact JSON text; ValueError on a non-finite float."""
    if isinstance(value, dict):
        return "{" + ",".join(_key(k) + ":" + dumps(v) for k, v in value.items()) + "}"
    if isinstance(value, list):
        if len(value) <= LONG:
            return "[" + ",".join(map(dumps, value)) + "]"
        fast = _floats(value) if type(value[0]) is float else _records(value) if type(value[0]) is dict else None
        if fast is not None:
            return fast
    return _plain(value)


def _plain(value: Any) -> str:
    """``json.dumps`` with the response's settings."""
    return json.dumps(value, allow_nan=False, ensure_ascii=False, separators=(",", ":"))


def _key(key: Any) -> str:
    """An object key as ``json.dumps`` writes it (a number, boolean or null key becomes a string)."""
    return _plain(key) if isinstance(key, str) else _plain({key: None})[1:-len(":null}")]


def _finite(values: list[float]) -> None:
    """ValueError unless every value is finite, as json.dumps raises."""
    if not all_finite(values):
        raise ValueError("Out of range float values are not JSON compliant")


def _floats(values: list) -> str | None:
    """A list of floats in one step; None if another type is among them."""
    if not all([type(v) is float for v in values]):
        return None
    _finite(values)
    return "[" + ",".join([_FLOAT] * len(values)) % tuple(values) + "]"


def _records(rows: list) -> str | None:
    """A list of objects with the same keys in one step; None unless every value of a key is a float,
    or every one is another JSON scalar (a string, an integer, a boolean or null)."""
    keys = tuple(rows[0])
    if not all([type(r) is dict and tuple(r) == keys for r in rows]):
        return None
    columns = [[r[k] for r in rows] for k in keys]
    fields = []
    for k, column in zip(keys, columns):
        if all([type(v) is float for v in column]):
            _finite(column)
            fields.append(_key(k).replace("%", "%%") + ":" + _FLOAT)
        elif all([isinstance(v, _SCALAR) for v in column]):
            texts: dict[Any, str] = {}
            column[:] = [texts.get((type(v), v)) or texts.setdefault((type(v), v), _plain(v)) for v in column]
            fields.append(_key(k).replace("%", "%%") + ":%s")
        else:
            return None
    row = "{" + ",".join(fields) + "}"
    return "[" + ",".join([row] * len(rows)) % tuple(chain.from_iterable(zip(*columns))) + "]"
