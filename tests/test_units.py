"""Typed quantities: the one table (tests/quantity_table.py) through the API, the parser's
rules (SI Brochure, 9th ed., 2019: case-sensitive prefixes, 1 G = 1e-4 T, 0 °C = 273.15 K)
and lists."""

import math

import pytest
from quantity_table import FIELDS, REFUSED, TABLE, request_for

from nmrcalc.api import handle
from nmrcalc.errors import InputError
from nmrcalc.units import parse_list, parse_quantity, split_list


@pytest.mark.parametrize("field,text,si", TABLE)
def test_typed_quantity_through_the_api(field, text, si):
    r = handle(request_for(field, text))
    assert r["ok"], r["error"]
    assert math.isclose(FIELDS[field]["si"](r["result"]), si, rel_tol=1e-9), (field, text)


@pytest.mark.parametrize("field,text,hint", REFUSED)
def test_refused_with_what_to_type(field, text, hint):
    r = handle(request_for(field, text))
    assert not r["ok"] and hint in r["error"]["message"], r
    assert r["error"]["field"] == FIELDS[field]["key"]


def test_prefixes_are_case_sensitive():
    # SI Brochure §3.1: m = 1e-3, M = 1e6
    assert parse_quantity("400 mHz", "coupling", "J") == pytest.approx(0.4)
    assert parse_quantity("400 MHz", "coupling", "J") == pytest.approx(4e8)
    assert parse_quantity("1 mT", "field", "f") == pytest.approx(1e-3)
    for text in ("1 MT", "3 khz", "1 Gt"):
        with pytest.raises(InputError, match="case-sensitive|give"):
            parse_quantity(text, "field" if "t" in text.lower() else "coupling", "x")


def test_no_float_noise_from_small_prefixes():
    # 10 µs is exactly 10e-6 s: divide by 1e6 rather than multiply by 1e-6 (plain arithmetic)
    assert parse_quantity("10 us", "time", "p") == 10.0
    assert parse_quantity("117500 G", "field", "f") == 11.75


def test_spaces_inside_a_number():
    assert parse_quantity("117\u2009500 G", "field", "f") == 11.75   # thin space: SI digit grouping
    with pytest.raises(InputError, match="without spaces"):
        parse_quantity("117 500 G", "field", "f")


def test_text_too_long_is_refused_at_once():
    with pytest.raises(InputError) as e:
        parse_quantity("1" * 10**6, "coupling", "J")
    assert e.value.code == "too_large"
    with pytest.raises(InputError) as e:
        split_list("1, " * 10**6, "fields")
    assert e.value.code == "too_large"


@pytest.mark.parametrize("text,items", [
    ("400, 600 MHz", ["400 MHz", "600 MHz"]),           # one unit for all
    ("400 MHz, 600", ["400 MHz", "600 MHz"]),           # the example
    ("400 MHz; 14.1 T", ["400 MHz", "14.1 T"]),         # a unit per item
    ("300 400 600", ["300", "400", "600"]),             # bare: the field's unit
    ("7.26 ppm, 1.2 ppm", ["7.26 ppm", "1.2 ppm"]),
])
def test_lists(text, items):
    assert split_list(text, "fields") == items


def test_list_with_mixed_units_and_bare_items_is_ambiguous():
    with pytest.raises(InputError, match="different units"):
        split_list("300, 14.1 T, 400 MHz", "fields")
    assert parse_list("19.3 Hz, 7", "coupling", "J") == [19.3, 7.0]


def test_several_fields_typed_as_text_through_the_api():
    # the several-fields list of a spin system accepts the text as typed
    base = {"op": "spin_system", "observe": "1H", "spins": [{"nucleus": "1H", "shift": "7.0"},
                                                          {"nucleus": "1H", "shift": "7.2"}],
            "couplings": [{"between": [0, 1], "J": "8 Hz"}]}
    r = handle({**base, "fields": "400 MHz, 600"})
    assert r["ok"], r["error"]
    assert [round(f["spectrometer_MHz"]) for f in r["result"]["fields"]] == [400, 600]
