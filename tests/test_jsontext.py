"""The response writer (nmrcalc.api.jsontext) against the standard library's json.dumps."""

import json
import math
import random

import pytest
from json_equal import assert_same_reply

from nmrcalc.api import handle, handle_json, jsontext


def test_long_lists_read_back_as_the_stdlib_writes_them():
    rng = random.Random(20261204)
    value = {
        "floats": [rng.uniform(-1e3, 1e3) * 10.0 ** rng.randint(-30, 30) for _ in range(500)],
        "records": [{"Hz": rng.uniform(0, 5000), "n": k, "label": rng.choice(["H-3", "é\"%s", None]),
                     "flag": k % 2 == 0} for k in range(300)],
        "short": [0.1, 0.2],
        "ints": list(range(100)),
        "pairs": [[rng.random(), rng.random()] for _ in range(100)],
        "mixed": [1.5] * 70 + ["x"],
        "uneven": [{"a": 1.0}] * 70 + [{"b": 1.0}],
        "nested": [{"a": [1.0] * 70}] * 70,
        7: [2.5] * 80,
        "per%cent": [{"x%s": 0.5}] * 80,
    }
    text = jsontext.dumps(value)
    assert_same_reply(json.loads(text), json.loads(json.dumps(value)))
    assert "  " not in text and ", " not in text  # compact, as json.dumps with separators (",", ":")


def test_short_and_non_numeric_content_is_written_exactly_as_json_dumps_does():
    value = {"ok": True, "result": {"J": 7.1, "x": [0.1, 0.2, 0.30000000000000004], "name": "CH₃ δ 1.2"},
             "warnings": ["a \"quoted\" note"]}
    assert jsontext.dumps(value) == json.dumps(value, ensure_ascii=False, separators=(",", ":"))


@pytest.mark.parametrize("bad", [[float("nan")] * 70, [{"a": math.inf}] * 70, [-math.inf] + [1.0] * 70,
                                 {"y": [float("nan")] * 3}])
def test_a_non_finite_number_is_refused_like_json_dumps_does(bad):
    with pytest.raises(ValueError):
        jsontext.dumps(bad)


def test_finite_values_whose_sum_overflows_are_accepted():
    assert json.loads(jsontext.dumps([1e308] * 80)) == [1e308] * 80


def test_a_spin_system_reply_carries_its_lines_and_spectrum_to_twelve_digits():
    request = {"op": "spin_system", "observe": "1H", "spectrometer": "400 MHz", "spectrum": True,
               "spins": [{"nucleus": "1H", "shift": s, "label": f"H-{k}"}
                         for k, s in enumerate((7.1, 7.0, 6.2, 3.65, 3.6, 1.2))],
               "couplings": [{"between": [i, j], "J": 1.0 + i + 0.5 * j} for i in range(6) for j in range(i + 1, 6)]}
    reply = json.loads(handle_json(json.dumps(request)))
    assert reply["ok"]
    assert_same_reply(reply, json.loads(json.dumps(handle(request))))
    assert len(reply["result"]["spectrum"]["y"]) > jsontext.LONG and len(reply["result"]["transitions"]) > jsontext.LONG
