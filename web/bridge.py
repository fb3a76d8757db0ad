"""The one Python function the web page's worker calls: JSON text in, JSON text out.

Packed into the page's package zip as the top-level module ``nmrcalc_bridge``.
The worker passes the request as a string argument, so no Python source is
ever assembled from user input.
"""

import json

import nmrcalc.api


def _error(code: str, message: str) -> str:
    return json.dumps({"ok": False, "error": {"code": code, "message": message, "field": None}})


def bridge(text: str) -> str:
    """Decode ``text`` as a JSON request, pass it to ``nmrcalc.api.handle``, encode the reply."""
    try:
        request = json.loads(text)
    except ValueError as exc:
        return _error("bad_json", f"request is not valid JSON: {exc}")
    try:
        response = nmrcalc.api.handle(request)
        return json.dumps(response, allow_nan=False)
    except Exception as exc:  # the API should never raise; this keeps a traceback off the page
        return _error("internal_error", f"{type(exc).__name__}: {exc}")
