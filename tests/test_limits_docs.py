"""The Limits section of DEVELOPERS.md is generated from the ops' declarations and says the truth:
every op states its worst case, the table matches `{"op": "describe"}`, the README points to it,
and each declared size bound is enforced (one item, character or unit beyond it is refused with
`too_large`, its message states the bound, and `field` names the key)."""

from __future__ import annotations

import importlib.util
from pathlib import Path

import pytest

from nmrcalc.api import MAX_REQUEST_CHARS, handle, handle_json
from nmrcalc.api.describe_ops import declarations
from nmrcalc.api.params import example_request

ROOT = Path(__file__).resolve().parents[1]
_spec = importlib.util.spec_from_file_location("limits_table", ROOT / "build_scripts" / "limits_table.py")
limits_table = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(limits_table)


def _section(text: str) -> str:
    start = text.index("-->", text.index(limits_table.START)) + 3
    return text[start:text.index(limits_table.END)].strip()


def test_developers_limits_table_matches_the_declarations():
    text = (ROOT / "DEVELOPERS.md").read_text()
    assert "## Limits" in text
    assert _section(text) == limits_table.limits_table(), \
        "DEVELOPERS.md Limits table is stale: run `python build_scripts/limits_table.py`"


def test_every_op_states_its_worst_case():
    ops = handle({"op": "describe"})["result"]["ops"]
    assert {op["op"] for op in ops} == set(declarations())
    missing = [op["op"] for op in ops if not op.get("limits", "").strip()]
    assert not missing, f"ops without a stated worst case (Op(limits=...)): {missing}"


def test_readme_points_to_the_limits():
    assert "DEVELOPERS.md#limits" in (ROOT / "README.md").read_text()


def _beyond(p):
    """(a value one step beyond p's declared size bound, the bound as the message writes it), or None."""
    if p.kind == "text" and p.max_chars:
        return "x" * (p.max_chars + 1), str(p.max_chars)
    if p.kind == "objects":
        return [{}] * (p.max_items + 1), str(p.max_items)
    if p.kind in ("quantities", "numbers", "texts"):
        return ["1"] * (p.max_items + 1), str(p.max_items)
    if p.kind == "integer" and p.bounds[1] is not None:
        return int(p.bounds[1]) + 1, f"{p.bounds[1]:g}"
    return None


CASES = [(name, p) for name, op in sorted(declarations().items()) for p in op.params if _beyond(p)]


@pytest.mark.parametrize(("name", "param"), CASES, ids=[f"{n}.{p.key}" for n, p in CASES])
def test_each_declared_bound_is_enforced(name, param):
    value, bound = _beyond(param)
    request = {**example_request(declarations()[name]), param.key: value}
    response = handle(request)
    assert response["ok"] is False, (name, param.key)
    error = response["error"]
    assert error["code"] == "too_large", error
    assert error["field"] == param.key, error
    assert bound in error["message"], error


def test_the_whole_request_is_bounded():
    response = handle_json('{"op": "nuclides", "search": "' + "x" * MAX_REQUEST_CHARS + '"}')
    assert '"too_large"' in response and f"{MAX_REQUEST_CHARS}" in response
