"""Fuzzing the JSON entry ``api.handle``: regression tests for bugs the fuzz found."""

from __future__ import annotations

import json
import time

import pytest

from nmrcalc.api import handle

CALL_BOUND_S = 5.0


def deep_list(depth: int):
    v: object = 0
    for _ in range(depth):
        v = [v]
    return v


# ---- regression tests for bugs this fuzz found (each was an internal error, non-JSON output,
# an error naming a key the request does not have, or a megabyte echoed back in a message)

def _err(request) -> dict:
    r = handle(request)
    assert r["ok"] is False, r
    json.dumps(r, allow_nan=False)
    return r["error"]


MULT = {"op": "multiplet", "observe": "1H", "groups": [{"partner": "1H", "count": 2, "J": 7}]}
SPINS = {"op": "spin_system", "observe": "1H", "spectrometer": 400,
         "spins": [{"nucleus": "1H", "shift": 1.0}, {"nucleus": "1H", "shift": 2.0}],
         "couplings": [{"between": [0, 1], "J": 7}]}


@pytest.mark.parametrize("request_, field", [
    ({"op": "frequency", "nucleus": "13C", "spectrometer": 1e308}, "spectrometer"),       # was Infinity in JSON
    ({"op": "frequency", "nucleus": "13C", "spectrometer": 5e-324}, "spectrometer"),      # was ZeroDivisionError
    ({"op": "ppm_hz", "nucleus": "13C", "field": "1e300", "ppm": 1}, "field"),
    ({"op": "ppm_hz", "nucleus": "13C", "spectrometer": 500, "ppm": 1e308}, "ppm"),
    ({"op": "scale_coupling", "J": "1e300 Hz", "from": "1H", "to": "2H"}, "J"),
    ({"op": "energy", "nucleus": "1H", "field": "1e-300 T"}, "field"),                     # was ZeroDivisionError
    ({"op": "energy", "nucleus": "1H", "spectrometer": 400, "temperature": 5e-324}, "temperature"),
    ({"op": "energy", "wavelength": "1e-300 nm"}, "wavelength"),
    ({"op": "sensitivity", "nucleus": "13C", "enrichment_percent": 1e-320}, "enrichment_percent"),
    ({**SPINS, "couplings": [{"between": [0, 1], "J": 5e-324}]}, "couplings.0.J"),        # Δν/J was Infinity
    ({"op": "frequency", "nucleus": "13C", "spectrometer": 10**400}, "spectrometer"),      # was field None
    ({**MULT, "spectrometer": 400, "center": 10**400}, "center"),
])
def test_out_of_range_numbers_are_refused_naming_the_field(request_, field):
    e = _err(request_)
    assert (e["code"], e["field"]) == ("invalid_value", field), e


def test_bounds_keep_zero_and_ordinary_values():
    assert handle({"op": "ppm_hz", "nucleus": "13C", "spectrometer": 500, "ppm": -0.0})["ok"]
    assert handle({"op": "frequency", "nucleus": "1H", "field": "1e-12 T"})["ok"]
    assert handle({"op": "scale_coupling", "J": "1e12 Hz", "from": "1H", "to": "2H"})["ok"]


def test_multiplet_isotopologue_limit_names_groups():
    """The physics calls element sites "sites"; the request has no such key."""
    e = _err({**MULT, "groups": [{"partner": "B", "count": 64, "J": 7}, {"partner": "Pt", "count": 64, "J": 7}]})
    assert (e["code"], e["field"]) == ("too_large", "groups"), e


def test_spin_system_limits_name_request_fields():
    e = _err({**SPINS, "spins": [{"nucleus": "1H", "shift": 1.0, "count": 65}, {"nucleus": "1H", "shift": 2.0}]})
    assert (e["code"], e["field"]) == ("too_large", "spins.0.count"), e     # was "sites.0.count"
    t0 = time.perf_counter()
    e = _err({**SPINS, "spins": [{"nucleus": "1H", "shift": k * 1e-3} for k in range(10**4)], "couplings": []})
    assert (e["code"], e["field"]) == ("too_large", "spins"), e             # took about 3 s per field
    assert time.perf_counter() - t0 < CALL_BOUND_S


@pytest.mark.parametrize("value", ["x" * 10**6, deep_list(1000)], ids=["long", "deep"])
def test_bad_spin_and_shape_are_not_echoed_whole(value):
    """A 10**6-character spin came back inside the message; a 1000-deep list broke repr()."""
    e = _err({**MULT, "groups": [{"spin": value, "count": 1, "J": 7}]})
    assert e["field"] == "groups.0.spin" and len(e["message"]) < 200, e["message"][:300]
    for req in ({**MULT, "spectrum": True}, {**SPINS, "spectrum": True}):
        e = _err({**req, "shape": value})
        assert e["field"] == "shape" and len(e["message"]) < 200, e["message"][:300]

