"""The spin-system panel in the offline single file: run a preset, see the
first-order check table and the several-fields view, an error beside its input,
a cancel that restarts Python, and no request beyond the file itself.

Expected values come from nmrcalc.api.handle on CPython: these tests check that
the page shows what the package computes (the physics is tested elsewhere)."""

from __future__ import annotations

from playwright.sync_api import expect

from nmrcalc.api import handle

VINYL = {"op": "spin_system", "observe": "1H", "spectrometer": "300 MHz",
         "spins": [{"nucleus": "1H", "shift": f"{d} ppm", "count": 1} for d in ("5.30", "5.42", "6.05")],
         "couplings": [{"between": [0, 1], "J": "1.5 Hz"}, {"between": [0, 2], "J": "10.8 Hz"},
                       {"between": [1, 2], "J": "17.4 Hz"}]}
FIELDS = ["60", "400", "1200"]


def test_preset_checks_fields_error_and_cancel(dist, open_page):
    url = (dist / "nmrcalc.html").resolve().as_uri()
    rec = open_page(url, offline=True)
    rec.context.route("**/*", lambda route: route.continue_() if route.request.url == url else route.abort())
    page = rec.page
    page.click("#tab-spins")
    page.fill("#spins-fields", ", ".join(FIELDS))
    page.get_by_role("button", name="ABX-type vinyl group").click()

    want = handle(VINYL)["result"]
    rows = page.locator("#spins-checks tbody tr")
    expect(rows).to_have_count(len(want["checks"]))
    for check in want["checks"]:
        pair = f"{check['labels'][0]}–{check['labels'][1]} ({check['nucleus']})"  # spins named by label, not index
        row = rows.filter(has_text=pair)
        expect(row).to_contain_text(f"{check['delta_nu_over_J']:.2f}")
        expect(row).to_contain_text("yes" if check["first_order"] else "no")
    # one trace and one label per field in the several-fields view
    expect(page.locator("#spins-stack svg polyline")).to_have_count(len(FIELDS))
    expect(page.locator("#spins-stack svg")).to_contain_text("1200 MHz")
    expect(page.locator("#spins-spectrum .plot-legend")).to_contain_text("first-order pattern")

    page.fill("#spins-s0-shift", "x")
    page.click("#form-spins button[type=submit]")
    bad = handle({**VINYL, "spins": [{"nucleus": "1H", "shift": "x", "count": 1}, *VINYL["spins"][1:]]})["error"]
    assert bad["field"] == "spins.0.shift"
    expect(page.locator("#spins-s0-shift-error")).to_have_text(bad["message"])

    # cancel ends the worker; a fresh one answers the next run
    page.fill("#spins-s0-shift", "5.30")
    page.evaluate("nmrcalcTest.cancel()")
    page.click("#form-spins button[type=submit]")
    expect(page.locator("#spins-s0-shift-error")).to_be_empty(timeout=60_000)
    expect(rows).to_have_count(len(want["checks"]))

    assert set(rec.requests) == {url}, f"unexpected requests: {sorted(set(rec.requests) - {url})}"
    assert not rec.errors
