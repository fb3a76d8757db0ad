"""Every error of the spin-system panel sits beside the input it belongs to, in the list and the
matrix coupling views: a bad, empty or far-away shift in either spin row (a far-away shift once
reported beside "Line width"), a unit that cannot apply, a bad count or nucleus, a bad J, a bad
field list; the old result is marked stale and no other input shows an error.

Expected messages come from nmrcalc.api.handle on CPython with the request the page sends."""

from __future__ import annotations

import copy
import re

from playwright.sync_api import expect

from nmrcalc.api import handle

# the panel's first view on empty storage: its ethyl example at 400 MHz, 0.8 Hz lines
BASE = {"op": "spin_system", "observe": "1H", "spectrum": True, "linewidth": "0.8", "spectrometer": "400",
        "first_order": True,
        "spins": [{"nucleus": "1H", "shift": "1.22", "count": 3}, {"nucleus": "1H", "shift": "3.65", "count": 2}],
        "couplings": [{"between": [0, 1], "J": "7.1"}]}
ROW_INPUTS = {"nucleus": "#spins-s{k}-nucleus", "shift": "#spins-s{k}-shift", "count": "#spins-s{k}-count"}


def _expected(path: list, value) -> dict:
    request = copy.deepcopy(BASE)
    node = request
    for step in path[:-1]:
        node = node[step]
    node[path[-1]] = value
    error = handle(request)["error"]
    return error


def _submit_and_wait(page):
    page.click("#form-spins button[type=submit]")
    page.wait_for_function("() => window.nmrcalcStatus.pending === 0")


def _only_error_at(page, selector: str, message: str):
    """message beside selector's input (its own error line), the result stale, no other error on the panel
    (a spin's label in the message is the page's own: "spin A" here may read "spin CH₃" there; the
    message's leading request path, "spins.0.shift: ", reads as the row's name there, "Spin CH₃, shift: ")."""
    rest = re.sub(r"^(?:spins|couplings)\.\d+\.[\w.]+: ", "", message)
    named = "(?:.+?: )?" if rest != message else ""
    pattern = re.compile("^" + named + re.escape(rest).replace(r"spin\ A\ at", r"spin\ \S+\ at").replace(r"spin\ B\ at", r"spin\ \S+\ at") + "$")
    expect(page.locator(selector)).to_have_text(pattern)
    expect(page.locator("#spins-result")).to_have_class("result stale")
    shown = page.evaluate("""() => [...document.querySelectorAll('#panel-spins .field-error, #panel-spins .form-error')]
        .filter((n) => n.textContent.trim()).map((n) => n.id)""")
    assert shown == [selector.lstrip("#")], (selector, shown)
    assert "undefined" not in page.locator("#panel-spins").inner_text()


def _good_again(page):
    page.fill("#spins-s0-shift", "1.22")
    page.fill("#spins-s1-shift", "3.65")
    _submit_and_wait(page)
    expect(page.locator("#spins-result")).not_to_have_class("result stale")


def test_spin_panel_errors_beside_their_inputs(dist, open_page):
    rec = open_page((dist / "nmrcalc.html").resolve().as_uri(), offline=True)
    page = rec.page
    page.click("#tab-spins")
    page.wait_for_function("() => window.nmrcalcStatus.pending === 0")
    expect(page.locator("#spins-checks tbody tr")).to_have_count(1)

    # shifts on each row: not a number, empty, a decimal comma, a unit that cannot apply, far away
    # (100 or 7100 ppm: a misplaced decimal point, which makes the sampled spectrum too long)
    for k in (0, 1):
        for bad in ("x", "", "1,5", "5 Hz", "400 MHz", "100", "7100"):
            page.fill(f"#spins-s{k}-shift", bad)
            _submit_and_wait(page)
            want = _expected(["spins", k, "shift"], bad)
            assert want["field"] == f"spins.{k}.shift", (k, bad, want)
            _only_error_at(page, f"#spins-s{k}-shift-error", want["message"])
        _good_again(page)

    # the second row's nucleus and count
    for key, bad, value in (("nucleus", "Qq", "Qq"), ("nucleus", "", ""), ("count", "x", "x"), ("count", "0", 0)):
        page.fill(ROW_INPUTS[key].format(k=1), bad)
        _submit_and_wait(page)
        want = _expected(["spins", 1, key], value)
        _only_error_at(page, f"#spins-s1-{key}-error", want["message"])
        page.fill(ROW_INPUTS[key].format(k=1), {"nucleus": "1H", "count": "2"}[key])
    _good_again(page)

    # a coupling in the list view: not a number, a unit that cannot apply
    for bad in ("x", "7 ppm"):
        page.fill("#spins-c0-J", bad)
        _submit_and_wait(page)
        want = _expected(["couplings", 0, "J"], bad)
        _only_error_at(page, "#spins-c0-J-error", want["message"])
    page.fill("#spins-c0-J", "7.1")

    # the matrix view: a bad J goes under the matrix, a bad shift still beside its row
    page.click("#spins-view-matrix")
    page.fill("#spins-m0-1", "x")
    _submit_and_wait(page)
    _only_error_at(page, "#spins-matrix-error", _expected(["couplings", 0, "J"], "x")["message"])
    page.fill("#spins-m0-1", "7.1")
    for bad in ("x", "100"):
        page.fill("#spins-s1-shift", bad)
        _submit_and_wait(page)
        _only_error_at(page, "#spins-s1-shift-error", _expected(["spins", 1, "shift"], bad)["message"])
    _good_again(page)

    # several fields: a bad magnet in the list goes beside that list, the single spectrum stays current
    page.fill("#spins-fields", "60, abc")
    _submit_and_wait(page)
    several = {key: v for key, v in BASE.items() if key not in ("spectrometer", "first_order")}
    want = handle({**several, "fields": "60, abc"})["error"]
    assert want["field"].startswith("fields"), want
    expect(page.locator("#spins-fields-error")).to_have_text(want["message"])
    expect(page.locator("#spins-result")).not_to_have_class("result stale")
    expect(page.locator("#spins-s1-shift-error")).to_be_empty()
    # a too narrow line for a normal system is the line width's error
    page.fill("#spins-fields", "60, 400")
    page.fill("#spins-linewidth", "0.0001")
    _submit_and_wait(page)
    want = _expected(["linewidth"], "0.0001")
    assert want["field"] == "linewidth", want
    _only_error_at(page, "#spins-linewidth-error", want["message"])
    assert not rec.errors
