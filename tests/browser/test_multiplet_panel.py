"""The multiplet builder in the offline single file: build a multiplet, read the
ratio and the line table, export CSV, zoom a plot, see an error beside its input,
and make no request beyond the file itself.

Expected values come from nmrcalc.api.handle on CPython: these tests check that
the page shows what the package computes (the physics is tested elsewhere)."""

from __future__ import annotations

import csv

import pytest
from playwright.sync_api import expect

from nmrcalc.api import handle

REQUEST = {"op": "multiplet", "observe": "13C", "spectrometer": "400 MHz", "center": "77 ppm",
           "groups": [{"partner": "2H", "count": 3, "J": "19.3 Hz"}]}


def _open_single(dist, open_page):
    url = (dist / "nmrcalc.html").resolve().as_uri()
    rec = open_page(url, offline=True)
    rec.context.route("**/*", lambda route: route.continue_() if route.request.url == url else route.abort())
    return url, rec


def _view(page, selector):
    lo, hi = page.get_attribute(f"{selector} svg", "data-view").split(",")
    return float(lo), float(hi)


def test_build_export_zoom_and_errors(dist, open_page):
    url, rec = _open_single(dist, open_page)
    page = rec.page
    page.click("#tab-multiplet")
    page.fill("#mult-observe", "13C")
    page.fill("#mult-magnet", "400")
    page.select_option("#mult-magnet-unit", "MHz")
    page.fill("#mult-center", "77")
    page.select_option("#mult-g0-kind", "partner")
    page.fill("#mult-g0-partner", "2H")
    page.fill("#mult-g0-count", "3")
    page.fill("#mult-g0-J", "19.3")
    page.click("#form-mult button[type=submit]")

    want = handle(REQUEST)["result"]
    assert want["ratio"] == "1:3:6:7:6:3:1"  # three 1:1:1 triplets convolved (hand calculation)
    expect(page.locator("#mult-ratio")).to_contain_text(want["ratio"])
    rows = page.locator("#mult-lines tbody tr")
    expect(rows).to_have_count(len(want["lines"]))
    top = max(want["lines"], key=lambda line: line["ppm"])  # the table runs high to low ppm, Hz beside
    expect(rows.first).to_contain_text(f"{top['ppm']:.5f}")
    expect(rows.first).to_contain_text(f"{top['Hz']:.3f}")
    expect(page.locator("#mult-tree svg line").first).to_be_attached()

    with page.expect_download() as info:
        page.click("#mult-csv")
    with open(info.value.path(), newline="") as handle_csv:
        text = handle_csv.read()
    assert text.startswith("# nmrcalc ")  # the commented header block (version, date, inputs)
    table = list(csv.reader(line for line in text.splitlines() if not line.startswith("# ")))
    assert table[0] == ["ppm", "Hz", "intensity"]
    assert len(table) == 1 + len(want["lines"])
    ordered = sorted(want["lines"], key=lambda line: -line["ppm"])  # high to low ppm, as spectra are read
    for row, line in zip(table[1:], ordered):
        assert [float(v) for v in row] == pytest.approx([line["ppm"], line["Hz"], line["intensity"]], rel=1e-6, abs=1e-9)

    raw = page.get_attribute("#mult-spectrum svg", "data-view")
    before = _view(page, "#mult-spectrum")
    box = page.locator("#mult-spectrum svg").bounding_box()
    page.mouse.move(box["x"] + box["width"] / 2, box["y"] + box["height"] / 2)
    page.mouse.wheel(0, -400)
    page.wait_for_function("(old) => document.querySelector('#mult-spectrum svg').dataset.view !== old",
                           arg=raw, timeout=5000)
    after = _view(page, "#mult-spectrum")
    assert after[1] - after[0] < before[1] - before[0]
    page.click("#mult-spectrum button[aria-label='Reset view']")
    assert _view(page, "#mult-spectrum") == before

    page.fill("#mult-g0-J", "abc")
    page.click("#form-mult button[type=submit]")
    bad = handle({**REQUEST, "groups": [{"partner": "2H", "count": 3, "J": "abc"}]})["error"]  # the text as typed
    assert bad["field"] == "groups.0.J" and bad["message"].startswith("groups.0.J: ")
    # beside the field the request path becomes the row's name
    expect(page.locator("#mult-g0-J-error")).to_have_text(bad["message"].replace("groups.0.J", "Group 1, J"))
    expect(page.locator("#mult-g0-J")).to_have_attribute("aria-invalid", "true")

    # the partner groups and the fixed inputs survive a reload
    page.reload()
    rec.wait_ready()
    expect(page.locator("#tab-multiplet")).to_have_attribute("aria-selected", "true")
    expect(page.locator("#mult-g0-J")).to_have_value("abc")
    expect(page.locator("#mult-g0-partner")).to_have_value("2H")
    expect(page.locator("#mult-center")).to_have_value("77")

    assert set(rec.requests) == {url}, f"unexpected requests: {sorted(set(rec.requests) - {url})}"
    assert not rec.errors


def test_rows_helper_in_the_multiplet_builder(dist, open_page):
    """Rows drawn by the shared helper: declared labels, add and remove, errors by row name, no decimal keypad on typed units."""
    url, rec = _open_single(dist, open_page)
    page = rec.page
    page.click("#tab-multiplet")
    page.get_by_role("button", name="Made-up platinum hydride complex").click()
    expect(page.locator("#mult-g1-partner")).to_have_value("31P")
    expect(page.locator("label[for=mult-g0-J]")).to_have_text("J (Hz)")  # from the op's declaration
    expect(page.locator("label[for=mult-g0-quad]")).to_have_text("Quadrupolar splitting")
    for field in ("mult-magnet", "mult-center", "mult-linewidth", "mult-g0-J", "mult-g0-t1", "mult-g0-spct", "mult-g0-shppm"):
        assert page.get_attribute(f"#{field}", "inputmode") is None, field  # "19.3 Hz" needs letters
    page.click("#mult-add-group")
    expect(page.locator("#mult-groups fieldset")).to_have_count(3)
    page.fill("#mult-g2-count", "0")
    page.click("#form-mult button[type=submit]")
    expect(page.locator("#mult-g2-count-error")).to_contain_text("Group 3, How many:")
    page.get_by_role("button", name="Remove group 3").click()
    expect(page.locator("#mult-groups fieldset")).to_have_count(2)
    # a T1 typed with its own unit is sent as typed, a bare one in the field's ms
    page.get_by_role("button", name="Made-up ammonium salt: 14N splitting partly collapsed").click()
    page.fill("#mult-g0-t1", "0.5 s")
    page.click("#form-mult button[type=submit]")
    expect(page.locator("#mult-collapse")).to_contain_text("T1 = 500 ms")
    page.fill("#mult-g0-t1", "2")
    page.click("#form-mult button[type=submit]")
    expect(page.locator("#mult-collapse")).to_contain_text("T1 = 2 ms")
    expect(page.locator("#mult-g0-t1-error")).to_be_empty()
    page.click("#mult-add-abundance")
    page.fill("#mult-a0-iso", "15N")
    page.fill("#mult-a0-pct", "abc")
    page.click("#form-mult button[type=submit]")
    expect(page.locator("#mult-a0-pct-error")).not_to_be_empty()
    expect(page.locator("#mult-a0-pct")).to_have_attribute("aria-invalid", "true")
    assert not rec.errors
