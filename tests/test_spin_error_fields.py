"""A spin-system error names the input it comes from (the page puts it beside that input): a shift
typed far from the other spins (365 for 3.65) makes the sampled spectrum too long, and that is the
shift's error, not the line width's; a line too narrow for a normal system stays the line width's.
The line width the message suggests is enough (plain arithmetic on the sampling rule)."""

from __future__ import annotations

import copy
import re

import pytest

from nmrcalc.api import handle

ETHYL = {"op": "spin_system", "observe": "1H", "spectrum": True, "linewidth": "0.8", "spectrometer": "400",
         "first_order": True,
         "spins": [{"nucleus": "1H", "shift": "1.22", "count": 3}, {"nucleus": "1H", "shift": "3.65", "count": 2}],
         "couplings": [{"between": [0, 1], "J": "7.1"}]}
THREE = {**ETHYL, "spins": [*ETHYL["spins"], {"nucleus": "1H", "shift": "2.05", "count": 1}],
         "couplings": [*ETHYL["couplings"], {"between": [1, 2], "J": "3.2"}]}


def _with(base: dict, k: int, shift: str, **top) -> dict:
    request = copy.deepcopy(base)
    request["spins"][k]["shift"] = shift
    request.update(top)
    return request


@pytest.mark.parametrize("base", [ETHYL, THREE], ids=["two spins", "three spins"])
@pytest.mark.parametrize("k", [0, 1])
@pytest.mark.parametrize("shift", ["365", "-500", "1e6"])
def test_far_shift_is_the_shift_s_error(base, k, shift):
    for request in (_with(base, k, shift),
                    _with({key: v for key, v in base.items() if key != "spectrometer"}, k, shift, fields="60, 400")):
        error = handle(request)["error"]
        assert error["field"] == f"spins.{k}.shift", error
        assert error["code"] == "too_large"
        assert error["message"].startswith(f"spins.{k}.shift: spin {'AB'[k]} at ")
        for _ in range(2):  # with several fields, each magnet that is too wide names its own width
            wide = re.search(r"line width of at least ([\d,.]+) Hz", error["message"]).group(1).replace(",", "")
            request = {**request, "linewidth": wide}
            response = handle(request)
            if response["ok"]:
                break
            error = response["error"]
        assert response["ok"], (wide, request)


@pytest.mark.parametrize("width", ["0.0001", "0.01"])
def test_too_narrow_line_for_a_normal_system_is_the_line_width_s_error(width):
    error = handle({**ETHYL, "linewidth": width})["error"]
    assert error["field"] == "linewidth" and error["code"] == "too_large", error


def test_other_spin_errors_name_their_input():
    cases = {("spins", 1, "shift"): ["x", "", "5 Hz", "1,5"], ("spins", 1, "nucleus"): ["Qq", ""],
             ("spins", 1, "count"): ["x", 0], ("couplings", 0, "J"): ["x", "7 ppm"]}
    for (part, k, key), values in cases.items():
        for value in values:
            request = copy.deepcopy(ETHYL)
            request[part][k][key] = value
            assert handle(request)["error"]["field"] == f"{part}.{k}.{key}", (part, k, key, value)
