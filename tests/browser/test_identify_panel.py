"""The pattern finder in the offline single file: paste a peak list, read the
ranked candidates, pick one by keyboard, see errors beside their inputs, hand
the chosen candidate to the multiplet builder, and make no request beyond the
file itself.

Expected labels and messages come from nmrcalc.api.handle on CPython: these
tests check that the page shows what the package computes (the physics of
the search is tested in tests/test_identify*.py)."""

from __future__ import annotations

import csv
import re

import pytest
from playwright.sync_api import expect

from nmrcalc.api import handle

# three equivalent spin-1 partners, J 19.5 Hz: 1:3:6:7:6:3:1  # three 1:1:1 triplets convolved (hand calculation)
RATIO = [1, 3, 6, 7, 6, 3, 1]
PEAKLIST = "Hz\tintensity\n" + "\n".join(f"{2000 + 19.5 * i:.2f}\t{w}" for i, w in enumerate(RATIO)) + "\n"
BASE = {"op": "identify", "observe": "13C", "spectrometer": "400 MHz", "max_groups": 3, "peaklist": PEAKLIST}


def _open_single(dist, open_page):
    url = (dist / "nmrcalc.html").resolve().as_uri()
    rec = open_page(url, offline=True)
    return url, rec


def _find(page):
    page.click("#ident-find")


def test_find_pick_errors_and_hand_over(dist, open_page):
    url, rec = _open_single(dist, open_page)
    page = rec.page
    page.click("#tab-identify")
    page.fill("#ident-observe", "13C")
    page.fill("#ident-magnet", "400")
    page.select_option("#ident-magnet-unit", "MHz")
    page.select_option("#ident-unit", "")
    page.click("#ident-mode-paste")
    page.fill("#ident-peaklist", PEAKLIST)

    # bare spins: the best candidate is three spin-1 partners
    page.fill("#ident-partners", "")
    _find(page)
    want = handle(BASE)["result"]
    assert want["candidates"][0]["groups"] == [{"spin": "1", "count": 3, "J_Hz": 19.5}]
    expect(page.locator("#ident-pick-0")).to_have_text(want["candidates"][0]["label"])
    rows = page.locator("#ident-candidates tbody tr")
    expect(rows).to_have_count(len(want["candidates"]))
    expect(rows.first).to_contain_text("3 × spin (I=1), J 19.5 Hz")
    expect(page.locator("#ident-notes li")).to_have_count(len(want["notes"]))

    # the chosen candidate's lines: a table high to low ppm with Hz beside, and a CSV with the header block
    lines = sorted(want["candidates"][0]["lines"], key=lambda line: -line["ppm"])
    expect(page.locator("#ident-lines tbody tr")).to_have_count(len(lines))
    expect(page.locator("#ident-lines tbody tr").first).to_contain_text(f"{lines[0]['Hz']:.3f}")
    with page.expect_download() as info:
        page.click("#ident-lines-csv")
    text = open(info.value.path(), encoding="utf-8").read()
    head = [line for line in text.splitlines() if line.startswith("# ")]
    assert head[0].startswith("# nmrcalc ") and "# calculation: identify" in head
    assert any(line.startswith("# Observed nucleus: 13C") for line in head), head
    table = list(csv.reader(line for line in text.splitlines() if not line.startswith("# ")))
    assert table[0] == ["ppm", "Hz", "intensity"] and len(table) == 1 + len(lines)
    for row, line in zip(table[1:], lines):
        assert [float(v) for v in row] == pytest.approx([line["ppm"], line["Hz"], line["intensity"]], rel=1e-6, abs=1e-9)

    # keyboard: arrow down moves the choice and the plot follows
    page.focus("#ident-pick-0")
    page.keyboard.press("ArrowDown")
    expect(page.locator("#ident-pick-1")).to_have_attribute("aria-pressed", "true")
    expect(page.locator("#ident-pick-1")).to_be_focused()
    expect(page.locator("#ident-plot .plot-legend")).to_contain_text(f"candidate 2: {want['candidates'][1]['label']}")
    page.keyboard.press("ArrowUp")
    expect(page.locator("#ident-pick-0")).to_have_attribute("aria-pressed", "true")

    # partners "2H": three deuterons
    page.fill("#ident-partners", "2H")
    _find(page)
    want = handle({**BASE, "partners": ["2H"]})["result"]
    assert want["candidates"][0]["groups"] == [{"partner": "2H", "count": 3, "J_Hz": 19.5}]
    expect(rows.first).to_contain_text("3 × 2H (I=1), J 19.5 Hz")

    # errors beside the field they belong to
    page.fill("#ident-partners", "Xx")
    _find(page)
    bad = handle({**BASE, "partners": ["Xx"]})["error"]
    assert bad["field"] == "partners.0"
    expect(page.locator("#ident-partners-error")).to_have_text(bad["message"])
    page.fill("#ident-partners", "2H")
    page.fill("#ident-peaklist", "2000 1\nabc 3\n")
    _find(page)
    bad = handle({**BASE, "partners": ["2H"], "peaklist": "2000 1\nabc 3\n"})["error"]
    assert bad["field"] == "peaklist" and "line 2" in bad["message"]
    expect(page.locator("#ident-peaklist-error")).to_have_text(bad["message"])
    expect(page.locator("#ident-peaklist")).to_have_attribute("aria-invalid", "true")
    expect(page.locator("#ident-partners-error")).to_be_hidden()

    # typed lines: a row with no position is skipped, an error lands beside its own cell
    page.click("#ident-mode-table")
    page.fill("#ident-l0-position", "")
    page.click("#ident-add-line")
    page.fill("#ident-l1-position", "2000")
    page.fill("#ident-l1-intensity", "x")
    _find(page)
    bad = handle({**{k: v for k, v in BASE.items() if k != "peaklist"}, "partners": ["2H"],
                  "lines": [{"position": "2000", "intensity": "x"}]})["error"]
    assert bad["field"] == "lines.0.intensity"
    # beside its own cell the message's leading "lines.0.intensity" path names the row as shown (line 2)
    assert bad["message"].startswith("lines.0.intensity: ")
    expect(page.locator("#ident-l1-intensity-error")).to_have_text(re.sub(r"^lines\.0\.intensity", "Line 2, intensity", bad["message"]))
    expect(page.locator("#ident-l1-intensity")).to_have_attribute("aria-invalid", "true")
    assert page.get_attribute("#ident-l1-position", "inputmode") is None  # positions take typed units
    assert page.get_attribute("#ident-tolerance", "inputmode") is None
    expect(page.locator("#ident-l0-position-error")).to_be_hidden()

    # back to the pasted list; the chosen candidate opens in the multiplet builder
    page.click("#ident-mode-paste")
    page.fill("#ident-peaklist", PEAKLIST)
    _find(page)
    expect(page.locator("#ident-pick-0")).to_have_attribute("aria-pressed", "true")
    expect(page.locator("#ident-result")).not_to_have_class("result stale")
    page.evaluate("window.nmrcalcStayed = true")  # gone if the page were loaded again
    page.click("#ident-open-multiplet")
    expect(page.locator("#tab-multiplet")).to_have_attribute("aria-selected", "true")
    expect(page.locator("#mult-g0-partner")).to_have_value("2H")
    expect(page.locator("#mult-g0-count")).to_have_value("3")
    expect(page.locator("#mult-g0-J")).to_have_value("19.5")
    expect(page.locator("#mult-observe")).to_have_value("13C")
    expect(page.locator("#mult-ratio")).to_contain_text("1:3:6:7:6:3:1")
    assert page.evaluate("window.nmrcalcStayed === true"), "the hand-over must not reload the page"

    # the pattern finder's inputs are still there, also after a reload
    page.reload()
    rec.wait_ready()
    page.click("#tab-identify")
    expect(page.locator("#ident-peaklist")).to_have_value(PEAKLIST)
    expect(page.locator("#ident-partners")).to_have_value("2H")

    assert set(rec.requests) == {url}, f"unexpected requests: {sorted(set(rec.requests) - {url})}"
    assert not rec.errors
