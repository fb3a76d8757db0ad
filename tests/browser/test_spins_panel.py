"""The spin-system panel in the offline single file: run a preset, see the
first-order check table and the several-fields view, an error beside its input
(named by the spin's label), a cancel that restarts Python, spins labelled as
chemists write them, the transition table with its CSV header block, the
expanded view of each multiplet, the shared row helper (add, remove, matrix
view), and no request beyond the file itself.

Expected values come from nmrcalc.api.handle on CPython: these tests check that
the page shows what the package computes (the physics is tested elsewhere)."""

from __future__ import annotations

import csv

import pytest
from playwright.sync_api import expect

from nmrcalc.api import handle

VINYL = {"op": "spin_system", "observe": "1H", "spectrometer": "300 MHz",
         "spins": [{"nucleus": "1H", "shift": f"{d} ppm", "count": 1, "label": name}
                   for d, name in (("5.30", "A"), ("5.42", "B"), ("6.05", "X"))],
         "couplings": [{"between": ["A", "B"], "J": "1.5 Hz"}, {"between": ["A", "X"], "J": "10.8 Hz"},
                       {"between": ["B", "X"], "J": "17.4 Hz"}]}
# the ethyl preset at 60 MHz with 0.2 Hz lines: the CH2 quartet lines are split by second-order effects
ETHYL = {"op": "spin_system", "observe": "1H", "spectrometer": "60", "linewidth": "0.2", "spectrum": True, "first_order": True,
         "spins": [{"label": "CH₃", "nucleus": "1H", "shift": "1.22", "count": 3},
                   {"label": "CH₂", "nucleus": "1H", "shift": "3.65", "count": 2}],
         "couplings": [{"between": ["CH₃", "CH₂"], "J": "7.1"}]}
FIELDS = ["60", "400", "1200"]


def _open(dist, open_page):
    url = (dist / "nmrcalc.html").resolve().as_uri()
    rec = open_page(url, offline=True)
    rec.context.route("**/*", lambda route: route.continue_() if route.request.url == url else route.abort())
    rec.page.click("#tab-spins")
    return url, rec


def _settled(page):
    page.wait_for_function("() => window.nmrcalcStatus.pending === 0 && document.querySelector('#spins-busy').hidden",
                           timeout=120_000)


def test_preset_checks_fields_error_and_cancel(dist, open_page):
    url, rec = _open(dist, open_page)
    page = rec.page
    page.fill("#spins-fields", ", ".join(FIELDS))
    page.get_by_role("button", name="ABX-type vinyl group").click()
    _settled(page)

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
    bad = handle({**VINYL, "spins": [{"nucleus": "1H", "shift": "x", "count": 1, "label": "A"}, *VINYL["spins"][1:]]})["error"]
    assert bad["field"] == "spins.0.shift" and bad["message"].startswith("spins.0.shift: ")
    # beside the field the path "spins.0.shift" becomes the spin's label
    expect(page.locator("#spins-s0-shift-error")).to_have_text(bad["message"].replace("spins.0.shift", "Spin A, shift"))
    expect(page.locator("#spins-s0-shift")).to_have_attribute("aria-invalid", "true")

    # cancel ends the worker; a fresh one answers the next run
    page.fill("#spins-s0-shift", "5.30")
    page.evaluate("nmrcalcTest.cancel()")
    page.click("#form-spins button[type=submit]")
    expect(page.locator("#spins-s0-shift-error")).to_be_empty(timeout=60_000)
    expect(rows).to_have_count(len(want["checks"]))

    assert set(rec.requests) == {url}, f"unexpected requests: {sorted(set(rec.requests) - {url})}"
    assert not rec.errors


def test_labels_name_spins_everywhere(dist, open_page):
    url, rec = _open(dist, open_page)
    page = rec.page
    page.get_by_role("button", name="ABX-type vinyl group").click()
    _settled(page)
    # row fields take their labels (with the unit) from the op's declaration
    expect(page.locator("label[for=spins-s0-shift]")).to_have_text("Shift (ppm)")
    expect(page.locator("label[for=spins-c0-J]")).to_have_text("J (Hz)")
    expect(page.locator("#spins-s0-label")).to_have_value("A")
    page.fill("#spins-s0-label", "H-3")
    expect(page.locator("#spins-list legend").first).to_have_text("Spin H-3")
    expect(page.locator("#spins-couplings legend").first).to_have_text("Coupling J(H-3,B)")
    expect(page.locator("#spins-c0-i option").first).to_have_text("H-3 · 5.30 ppm")
    page.click("#form-spins button[type=submit]")
    _settled(page)
    expect(page.locator("#spins-checks tbody")).to_contain_text("H-3–B (1H)")
    expect(page.locator("#spins-clusters")).to_contain_text("H-3, B, X")
    assert "spin 0" not in page.locator("#card-spins").inner_text().lower()  # no numbering from 0 anywhere

    # a blank label is given the first letter no other spin uses, shown as the placeholder
    page.fill("#spins-s1-label", "A")
    page.fill("#spins-s0-label", "")
    expect(page.locator("#spins-s0-label")).to_have_attribute("placeholder", "B (automatic)")
    expect(page.locator("#spins-list legend").first).to_have_text("Spin B")
    page.fill("#spins-s1-label", "B")

    # two spins with one label: the API's message beside the second label
    page.fill("#spins-s0-label", "B")
    page.click("#form-spins button[type=submit]")
    spins = [{**VINYL["spins"][0], "label": "B"}, *VINYL["spins"][1:]]
    bad = handle({**VINYL, "spins": spins, "couplings": []})["error"]
    assert bad["field"] == "spins.1.label"
    expect(page.locator("#spins-s1-label-error")).to_have_text(bad["message"])

    # the matrix view is labelled by spin too, and a J error lands in it
    page.fill("#spins-s0-label", "A")
    page.click("#spins-view-matrix")
    expect(page.locator("#spins-couplings thead th")).to_have_text(["J (Hz)", "A", "B", "X"])
    page.fill("#spins-m0-2", "abc")
    page.click("#form-spins button[type=submit]")
    expect(page.locator("#spins-matrix-error")).to_contain_text("J(A,X): 'abc' is not a number")
    expect(page.locator("#spins-m0-2")).to_have_attribute("aria-invalid", "true")
    page.fill("#spins-m0-2", "10.8")
    page.click("#spins-view-list")

    # rows helper: add a spin (next free letter, declared default count), couple it, remove it again
    page.click("#spins-add-spin")
    expect(page.locator("#spins-s3-label")).to_have_value("C")
    expect(page.locator("#spins-s3-count")).to_have_value("1")
    page.click("#spins-add-coupling")
    page.select_option("#spins-c3-j", "3")
    expect(page.locator("#spins-couplings legend").nth(3)).to_have_text("Coupling J(A,C)")
    page.get_by_role("button", name="Remove spin C").click()
    expect(page.locator("#spins-list fieldset")).to_have_count(3)
    expect(page.locator("#spins-couplings fieldset")).to_have_count(3)  # its coupling went with it
    assert not rec.errors


def test_transition_table_csv_and_expanded_multiplets(dist, open_page):
    url, rec = _open(dist, open_page)
    page = rec.page
    page.get_by_role("button", name="Ethyl group", exact=True).click()
    page.fill("#spins-linewidth", "0.2")
    page.click("#form-spins button[type=submit]")
    _settled(page)
    want = handle(ETHYL)["result"]
    ordered = sorted(want["transitions"], key=lambda t: -t["ppm"])  # high to low ppm, as spectra are read

    rows = page.locator("#spins-transitions tbody tr")
    expect(rows).to_have_count(len(want["transitions"]))
    expect(rows.first).to_contain_text(f"{ordered[0]['ppm']:.4f}")
    expect(rows.first).to_contain_text(f"{ordered[0]['Hz']:.3f}")
    expect(rows.first).to_contain_text(ordered[0]["label"])

    with page.expect_download() as info:
        page.click("#spins-lines-csv")
    text = open(info.value.path(), encoding="utf-8").read()
    head = [line for line in text.splitlines() if line.startswith("# ")]
    assert head[0].startswith("# nmrcalc ") and "# calculation: spin_system" in head
    spins_line = next(line for line in head if line.startswith("# Spins: "))
    assert "label CH₃" in spins_line and "label CH₂" in spins_line
    assert any(line.startswith("# Couplings: ") and "CH₃" in line for line in head)
    assert "offset from 0 ppm" in head[-1]
    table = list(csv.reader(line for line in text.splitlines() if not line.startswith("# ")))
    assert table[0] == ["ppm", "Hz", "intensity", "spin"]
    assert len(table) == 1 + len(ordered)
    for row, t in zip(table[1:], ordered):
        assert [float(v) for v in row[:3]] == pytest.approx([t["ppm"], t["Hz"], t["intensity"]], rel=1e-6, abs=1e-9)
        assert row[3] == t["label"]

    # one expanded view per multiplet, high ppm first; each spans its spin's lines only
    insets = page.locator("#spins-insets .inset")
    expect(insets).to_have_count(2)
    expect(insets.first.locator(".inset-title")).to_contain_text("CH₂")
    expect(insets.nth(1).locator(".inset-title")).to_contain_text("CH₃")
    lo, hi = (float(v) for v in insets.first.locator("svg").get_attribute("data-view").split(","))
    ch2 = [t["ppm"] for t in want["transitions"] if t["label"] == "CH₂"]
    assert lo < min(ch2) and max(ch2) < hi and hi - lo < 0.6, (lo, hi)
    # second-order splittings of the CH2 quartet lines (0.16 to 0.53 Hz) are drawn as separate
    # lines, at least 3 px apart, without any zooming (x grows as ppm falls: the axis is reversed)
    hz = sorted((t["Hz"] for t in want["transitions"] if t["label"] == "CH₂"), reverse=True)
    xs = sorted(float(x) for x in insets.first.locator("svg g[stroke-width='2'] line").evaluate_all(
        "(lines) => lines.map((l) => l.getAttribute('x1'))"))
    assert len(xs) == len(hz)
    split = [(a - b, q - p) for a, b, p, q in zip(hz, hz[1:], xs, xs[1:]) if a - b < 1]
    assert any(0.1 < d_hz < 0.3 for d_hz, _ in split), split
    assert all(d_px >= 3 for d_hz, d_px in split if d_hz >= 0.1), split
    assert not rec.errors


def test_a_slow_several_fields_view_waits_for_a_tap(dist, open_page):
    # the made-up 16-H aryl + chain example: its main result comes alone; the six-field view, which would take
    # many seconds more, is offered behind a button and drawn when asked, with the clusters named by label
    url, rec = _open(dist, open_page)
    page = rec.page
    page.fill("#spins-fields", ", ".join(str(300 + 75 * k) for k in range(12)))  # 12 fields: > 4 s on any machine
    page.get_by_role("button", name="Aryl ring + 3-methylbutyl chain (made-up, 16 H, two clusters joined by weak links)").click()
    _settled(page)
    expect(page.locator("#spins-clusters")).to_contain_text("H-2, H-6, H-3, H-5, H-4: weak links to first order")
    expect(page.locator("#spins-stack-note")).to_contain_text("so that view waits for you")
    expect(page.locator("#spins-stack")).to_be_hidden()
    page.click("#spins-stack-run")
    expect(page.locator("#spins-stack")).to_be_visible(timeout=180_000)
    expect(page.locator("#spins-stack-note")).to_be_hidden()
    assert not rec.errors
