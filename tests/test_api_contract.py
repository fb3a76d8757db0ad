"""The JSON contract: field-named errors, warnings, and a handle() that never raises."""

import json

from hypothesis import given, settings
from hypothesis import strategies as st

from nmrcalc.api import OPS, handle, handle_json


def err(request):
    r = handle(request)
    assert not r["ok"], r
    return r["error"]


def test_response_shapes():
    r = handle({"op": "nuclide", "query": "13C"})
    assert set(r) == {"ok", "result", "warnings"}
    assert r["result"]["spin"] == "1/2" and r["result"]["xi_percent"] == 25.14502
    assert handle({"op": "nuclide", "query": "133Cs"})["result"]["spin"] == "7/2"
    assert handle({"op": "nuclide", "query": "Ir-193"})["result"]["xi_percent"] is None


def test_errors_name_the_field():
    assert err({"op": "frequency", "nucleus": "13C", "field": "abc"})["field"] == "field"
    assert err({"op": "frequency", "nucleus": "13C", "field": "0 T"})["field"] == "field"
    assert err({"op": "frequency", "nucleus": "13C", "field": "-2 T"})["field"] == "field"
    assert err({"op": "frequency", "nucleus": "13C"})["code"] == "missing_field"
    assert err({"op": "frequency", "nucleus": "qq", "spectrometer": 400})["field"] == "nucleus"
    assert err({"op": "frequency", "nucleus": "12C", "spectrometer": 400})["code"] == "not_magnetic"
    assert err({"op": "energy", "nucleus": "1H", "spectrometer": 400, "temperature": "-5 K"})["field"] == "temperature"
    assert err({"op": "energy", "nucleus": "1H", "spectrometer": 400, "temperature": "NaN"})["field"] == "temperature"
    assert err({"op": "warp"})["code"] == "unknown_op"
    assert err({})["field"] == "op"
    assert err([1, 2])["code"] == "bad_request"
    assert err({"op": "scale_coupling", "J": "12 Hz", "from": "2H"})["field"] == "to"


def test_implausible_field_is_a_warning():
    r = handle({"op": "frequency", "nucleus": "1H", "field": "40 T"})
    assert r["ok"] and any("28 T" in w for w in r["warnings"])


def test_handle_json_round_trip():
    text = handle_json('{"op": "nuclide", "query": "D"}')
    assert json.loads(text)["result"]["symbol"] == "2H"
    assert json.loads(handle_json("{not json"))["error"]["code"] == "bad_request"


json_values = st.recursive(
    st.none() | st.booleans() | st.integers() | st.floats(allow_nan=True) | st.text(max_size=20),
    lambda inner: st.lists(inner, max_size=4) | st.dictionaries(st.text(max_size=8), inner, max_size=4),
    max_leaves=20)
KEYS = ["op", "query", "nucleus", "spectrometer", "field", "ppm", "Hz", "J", "from", "to", "partner",
        "temperature", "wavelength", "wavenumber", "relative_to", "enrichment_percent", "search",
        "spin_half_only", "min_MHz", "max_MHz", "sort", "carrier_ppm", "scale"]
requests = st.fixed_dictionaries({"op": st.sampled_from(sorted(OPS)) | st.text(max_size=5)},
                                 optional={k: json_values | st.sampled_from(["13C", "2H", "500 MHz", "11 T", "1e400", "-0", ""]) for k in KEYS[1:]})


@settings(max_examples=400, deadline=None)
@given(requests)
def test_never_raises_on_requests(request):
    r = handle(request)
    assert r["ok"] in (True, False)
    json.dumps(r, allow_nan=False)
    if not r["ok"]:
        assert set(r["error"]) == {"code", "message", "field"} and r["error"]["code"] != "internal", r


@settings(max_examples=200, deadline=None)
@given(json_values)
def test_never_raises_on_any_json(value):
    r = handle(value)
    assert r["ok"] is False or isinstance(r["result"], dict)


def test_op_table_names_each_modules_ops():
    # the lazily imported op table must list exactly the ops each module defines
    import importlib

    from nmrcalc.api import OP_MODULES
    modules = sorted(set(OP_MODULES.values()))
    defined = {op: m for m in modules for op in importlib.import_module(f"nmrcalc.api.{m}").OPS}
    assert defined == OP_MODULES
    assert all(callable(OPS[op]) for op in OPS)
