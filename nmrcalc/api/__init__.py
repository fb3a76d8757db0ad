"""The one JSON entry of nmrcalc: ``handle(request: dict) -> dict``.

Every front end (the CLI, the page's Web Worker, scripts, tests) calls this.
It never raises.  A response is either
``{"ok": true, "result": {...}, "warnings": [...]}`` or
``{"ok": false, "error": {"code", "message", "field"}}``, where ``field``
names the request key (dotted for nested keys) that caused the error.
"""

from __future__ import annotations

import json

from nmrcalc.api.core_ops import OPS as CORE_OPS
from nmrcalc.api.fields import PROGRESS
from nmrcalc.api.identify_ops import OPS as IDENTIFY_OPS
from nmrcalc.api.multiplet_ops import OPS as MULTIPLET_OPS
from nmrcalc.api.spin_system_ops import OPS as SPIN_SYSTEM_OPS
from nmrcalc.errors import InputError

OPS = {**CORE_OPS, **MULTIPLET_OPS, **SPIN_SYSTEM_OPS, **IDENTIFY_OPS}
MAX_REQUEST_CHARS = 1_000_000


def _error(code: str, message: str, field: str | None = None) -> dict:
    return {"ok": False, "error": {"code": code, "message": message, "field": field}}


def handle(request, progress=None) -> dict:
    """Run one request; return a response dict (never raises).

    ``progress``, if given, is called with a fraction in [0, 1] during long
    computations (spin systems), so a front end can show how far it got.
    """
    token = PROGRESS.set(progress)
    try:
        if not isinstance(request, dict):
            raise InputError("The request must be a JSON object with an 'op'.", None, "bad_request")
        op = request.get("op")
        if not isinstance(op, str) or not op:
            raise InputError(f"Name the calculation in 'op': one of {', '.join(sorted(OPS))}.", "op", "missing_field")
        fn = OPS.get(op)
        if fn is None:
            raise InputError(f"Unknown op '{op[:40]}'; use one of {', '.join(sorted(OPS))}.", "op", "unknown_op")
        warnings: list[str] = []
        result = fn(request, warnings)
        return {"ok": True, "result": result, "warnings": warnings}
    except InputError as e:
        return _error(e.code, e.message, e.field)
    except (RecursionError, MemoryError, OverflowError):
        return _error("too_large", "The request is too large or too deeply nested to compute.")
    except Exception as e:  # a bug: report it without a traceback
        return _error("internal", f"Internal error ({type(e).__name__}); the inputs are kept. Please report it.")
    finally:
        PROGRESS.reset(token)


def handle_json(text: str, progress=None) -> str:
    """Text in, text out: the bridge used by the Web Worker and ``python -m nmrcalc api``."""
    try:
        if not isinstance(text, str) or len(text) > MAX_REQUEST_CHARS:
            response = _error("too_large", f"The request is longer than {MAX_REQUEST_CHARS} characters.")
        else:
            response = handle(json.loads(text), progress)
    except (ValueError, RecursionError):
        response = _error("bad_request", "The request is not valid JSON.")
    try:
        return json.dumps(response, allow_nan=False, ensure_ascii=False)
    except (ValueError, TypeError):
        return json.dumps(_error("internal", "The result could not be encoded (a non-finite number)."))
