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
    expect(rows.first).to_contain_text(f"{want['lines'][0]['ppm']:.5f}")
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
    assert bad["field"] == "groups.0.J"
    expect(page.locator("#mult-g0-J-error")).to_have_text(bad["message"])
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
