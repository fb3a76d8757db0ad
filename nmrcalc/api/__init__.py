"""The one JSON entry of nmrcalc: ``handle(request: dict) -> dict``.

Every front end (the CLI, the page's Web Worker, scripts, tests) calls this.
It never raises.  A response is either
``{"ok": true, "result": {...}, "warnings": [...]}`` or
``{"ok": false, "error": {"code", "message", "field"}}``, where ``field``
names the request key (dotted for nested keys) that caused the error.
"""

from __future__ import annotations

import importlib
import json
import re
from collections.abc import Callable, Iterator, Mapping
from typing import Any

from nmrcalc.api import jsontext
from nmrcalc.api.fields import PROGRESS
from nmrcalc.api.params import Op, check
from nmrcalc.errors import InputError

# Each op and the module of this package that defines it (in that module's OPS).
# A module is imported when one of its ops is first asked for, so a front end's
# first result does not wait for the spin-system and pattern-finder code.
OP_MODULES = {
    **dict.fromkeys(["nuclide", "nuclides", "frequency", "ppm_hz", "scale_coupling", "energy", "sensitivity",
                     "acquisition_window"],
                    "core_ops"),
    "multiplet": "multiplet_ops",
    "spin_system": "spin_system_ops",
    "identify": "identify_ops",
    **dict.fromkeys(["read_spectrum", "pick_peaks", "fit_spin_system"], "spectrum_ops"),
    **dict.fromkeys(["peak_at", "integrate", "compare_region"], "region_ops"),
    "deuteration": "deuteration_ops",
    "solvents": "solvent_ops",
    "describe": "describe_ops",
}
_SURROGATE = re.compile("[\ud800-\udfff]")  # one C-level scan: a spectrum's text is long
MAX_REQUEST_CHARS = 16_000_000  # a measured spectrum (256k points, its file or its ordinates) travels as text


class _Ops(Mapping[str, Callable[[dict, list[str]], dict]]):
    """``OPS[name]``: the function ``(request, warnings) -> result`` of an op, imported on first use."""

    def __getitem__(self, name: str) -> Callable[[dict, list[str]], dict]:
        return importlib.import_module(f"nmrcalc.api.{OP_MODULES[name]}").OPS[name]

    def declaration(self, name: str) -> Op:
        """The op's declaration (``nmrcalc.api.params.Op``), from the ``DECLARED`` table of its module."""
        return importlib.import_module(f"nmrcalc.api.{OP_MODULES[name]}").DECLARED[name]

    def __iter__(self) -> Iterator[str]:
        return iter(OP_MODULES)

    def __len__(self) -> int:
        return len(OP_MODULES)


OPS = _Ops()


def _error(code: str, message: str, field: str | None = None) -> dict:
    return {"ok": False, "error": {"code": code, "message": message, "field": field}}


def handle(request: Any, progress: Callable[[float], None] | None = None) -> dict:
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
        if op not in OP_MODULES:
            raise InputError(f"Unknown op '{op[:40]}'; use one of {', '.join(sorted(OPS))}.", "op", "unknown_op")
        fn = OPS[op]
        request = check(OPS.declaration(op), request)
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


def _check_unicode(text: str, request: Any) -> None:
    """Refuse text that is not valid Unicode (a lone surrogate, raw or written as an escape)."""
    if "\\ud" in text.lower() or _SURROGATE.search(text):
        try:
            json.dumps(request, ensure_ascii=False).encode("utf-8")
        except UnicodeEncodeError as e:
            raise InputError(f"The request holds a lone surrogate (U+{ord(e.object[e.start]):04X}): "
                             "not valid Unicode text; retype or re-save that value.", None, "bad_request") from None


def handle_json(text: str, progress: Callable[[float], None] | None = None) -> str:
    """Text in, text out: the bridge used by the Web Worker and ``python -m nmrcalc api``
    (compact JSON: no spaces after separators; long arrays of numbers to 12 significant digits, ``jsontext``)."""
    try:
        if not isinstance(text, str) or len(text) > MAX_REQUEST_CHARS:
            response = _error("too_large", f"The request is longer than {MAX_REQUEST_CHARS} characters.")
        else:
            request = json.loads(text)
            _check_unicode(text, request)
            response = handle(request, progress)
    except InputError as e:
        response = _error(e.code, e.message, e.field)
    except (ValueError, RecursionError):
        response = _error("bad_request", "The request is not valid JSON.")
    try:
        return jsontext.dumps(response)
    except (ValueError, TypeError):
        return json.dumps(_error("internal", "The result could not be encoded (a non-finite number)."))
