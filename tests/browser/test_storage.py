"""Storage that loses nothing and exports that can be filed (offline single file unless stated):
two tabs pin and type at once and keep both; a 7-million-character paste is refused with a message
while every other input keeps saving; another local file's junk under the notebook's key is kept
aside, never wiped; a share link is computed from its fields, not its stored request; pins show
labels, units and rounded values; every CSV cell that a spreadsheet would run is neutralised and
each CSV opens with a commented header; PNG export works under the CSP of both builds."""

from __future__ import annotations

import base64
import csv
import io
import json

from pinning import pin
from playwright.sync_api import expect


def _calculate(page, tab, form_id):
    page.click(f"#tab-{tab}")
    page.click(f"#form-{form_id} button[type=submit]")
    page.wait_for_function("() => window.nmrcalcStatus.pending === 0")
    expect(page.locator(f"#card-{form_id} .pin-open")).to_be_enabled()


def _download(page, selector):
    with page.expect_download() as info:
        page.click(selector)
    return info.value.suggested_filename, open(info.value.path(), "rb").read()


def _b64url(data) -> str:
    return base64.urlsafe_b64encode(json.dumps(data).encode()).decode().rstrip("=")


def test_two_tabs_keep_both_pins_and_inputs(dist, open_page):
    url = (dist / "nmrcalc.html").resolve().as_uri()
    rec = open_page(url, offline=True)
    a = rec.page
    b = rec.context.new_page()
    b.goto(url)
    b.wait_for_selector("#boot[data-state=ready]", state="attached", timeout=90_000)

    a.click("#tab-coupling")
    a.fill("#scale-J", "32")
    _calculate(a, "coupling", "scale")
    pin(a, "scale", "from tab A")
    b.click("#tab-energy")
    b.fill("#energy-temperature", "77")
    _calculate(b, "magnet", "larmor")
    pin(b, "larmor", "from tab B")  # tab B loaded before A pinned: last writer must not win

    for page in (a, b):
        page.reload()
        page.wait_for_selector("#boot[data-state=ready]", state="attached", timeout=90_000)
        notes = page.evaluate("nmrcalcTest.notebook.list().map((p) => p.note)")
        assert sorted(notes) == ["from tab A", "from tab B"]
        page.click("#tab-coupling")
        expect(page.locator("#scale-J")).to_have_value("32")
        page.click("#tab-energy")
        expect(page.locator("#energy-temperature")).to_have_value("77")
    # a delete in one tab is not undone by the other tab's next pin
    a.click("#tab-notebook")
    a.locator("#notebook-pins .pin-delete").first.click()
    _calculate(b, "coupling", "scale")
    pin(b, "scale", "third")
    assert len(a.evaluate("JSON.parse(localStorage.getItem('nmrcalc.notebook.v1'))")) == 2
    expect(a.locator("#notebook-pins > li")).to_have_count(2)


def test_oversized_paste_and_foreign_storage(dist, open_page):
    url = (dist / "nmrcalc.html").resolve().as_uri()
    rec = open_page(url, offline=True)
    page = rec.page
    page.click("#tab-identify")
    page.evaluate("""() => {
        const box = document.querySelector('#ident-peaklist');
        box.value = '1.0 '.repeat(1_750_000);  // 7 million characters
        box.dispatchEvent(new Event('input', { bubbles: true }));
    }""")
    expect(page.locator("#page-notice")).to_contain_text("too long to keep")
    page.click("#tab-coupling")
    page.fill("#scale-J", "41.5")
    page.reload()
    rec.wait_ready()
    page.click("#tab-coupling")
    expect(page.locator("#scale-J")).to_have_value("41.5")

    # another local file writes junk under our keys: the page starts, shows a message, keeps the junk aside
    page.evaluate("""() => {
        localStorage.setItem('nmrcalc.notebook.v1', JSON.stringify([{ id: 1 }, 'x']));
        localStorage.setItem('nmrcalc.inputs.v1', '[1, 2');
    }""")
    page.reload()
    rec.wait_ready()
    expect(page.locator("#page-notice")).to_contain_text("could not be read")
    _calculate(page, "magnet", "larmor")
    pin(page, "larmor", "after junk")
    stored = page.evaluate("JSON.parse(localStorage.getItem('nmrcalc.notebook.v1'))")
    assert {"id": 1} in stored and "x" in stored and any(p.get("note") == "after junk" for p in stored if isinstance(p, dict))
    assert not rec.errors, rec.errors


def test_share_link_is_computed_from_its_fields(dist, open_page):
    url = (dist / "nmrcalc.html").resolve().as_uri()
    rec = open_page(url, offline=True)
    page = rec.page
    inputs = {"energy.nucleus": {"value": "1H"}, "energy.temperature": {"value": "298"}}
    fragment = "#calc=" + _b64url({"panel": "energy", "form": "energy", "inputs": inputs,
                                   "request": {"op": "energy", "nucleus": "1H", "spectrometer": "500 MHz", "temperature": "4 K"}})
    page.evaluate("(h) => nmrcalcTest.openShareLink(h)", fragment)
    expect(page.locator("#energy-temperature")).to_have_value("298")
    page.wait_for_function("() => window.nmrcalcStatus.pending === 0")
    expect(page.locator("#card-energy .pin-open")).to_be_enabled()
    pin(page, "energy", "link")
    assert page.evaluate("nmrcalcTest.notebook.list()[0].request.temperature") == "298"  # as typed: a bare number is in K


def test_pins_and_csv_are_fileable(dist, open_page):
    url = (dist / "nmrcalc.html").resolve().as_uri()
    rec = open_page(url, offline=True)
    page = rec.page
    _calculate(page, "magnet", "larmor")
    pin(page, "larmor", "-5 =cmd @x")
    page.click("#tab-notebook")
    card = page.locator("#notebook-pins > li").first
    shown = card.inner_text()
    for api_key in ("field_T", "_MHz", "_ppm", '{"', "[{"):
        assert api_key not in shown, (api_key, shown)
    assert "undefined" not in shown
    # no float noise and no long raw numbers among the values shown
    for value in card.locator("dd").all_inner_texts():
        digits = "".join(c for c in value if c.isdigit())
        assert len(digits) <= 12, value

    _, raw = _download(page, "#notebook-export-csv")
    text = raw.decode("utf-8")
    lines = text.splitlines()
    assert lines[0].startswith("# nmrcalc ") and lines[1].startswith("# exported ")
    body = "\r\n".join(line for line in lines if not line.startswith("# "))
    rows = list(csv.DictReader(io.StringIO(body)))
    assert rows[0]["note"] == "'-5 =cmd @x"
    for row in rows:
        for cell in row.values():
            assert not cell or cell[0] not in "=+-@\t\r" or cell.lstrip("-+").replace(".", "", 1).isdigit(), cell
    guards = page.evaluate("['=1', '+1+A1', '-1+cmd', '@a', '\\t1', '\\r1', '1', '-57.9'].map((c) => nmrcalcTest.notebook.csvCell(c))")
    assert guards == ["'=1", "'+1+A1", "'-1+cmd", "'@a", "'\t1", "\"'\r1\"", "1", "-57.9"]
    assert page.evaluate("nmrcalcTest.notebook.cleanNumber(-57.900000000000006)") == "-57.9"


def test_multiplet_csv_header_and_order(dist, open_page):
    url = (dist / "nmrcalc.html").resolve().as_uri()
    rec = open_page(url, offline=True)
    page = rec.page
    page.click("#tab-multiplet")
    page.click("#form-mult button[type=submit]")
    page.wait_for_function("() => window.nmrcalcStatus.pending === 0")
    _, raw = _download(page, "#mult-csv")
    lines = raw.decode("utf-8").splitlines()
    head = [line for line in lines if line.startswith("# ")]
    assert head[0].startswith("# nmrcalc ") and any("Magnet" in h or "MHz" in h or " T" in h for h in head), head
    table = list(csv.DictReader(io.StringIO("\n".join(line for line in lines if not line.startswith("# ")))))
    key = "ppm" if table[0]["ppm"] else "Hz"
    values = [float(r[key]) for r in table]
    assert values == sorted(values, reverse=True)
    assert all(len(r["Hz"].split(".")[-1]) <= 7 for r in table)


def _png_export(page):
    page.evaluate("""() => { window.cspViolations = [];
        document.addEventListener('securitypolicyviolation', (e) => window.cspViolations.push(e.violatedDirective)); }""")
    page.click("#tab-multiplet")
    page.click("#form-mult button[type=submit]")
    page.wait_for_function("() => window.nmrcalcStatus.pending === 0")
    button = page.locator("#card-mult .plot-tool[aria-label='Export PNG']").first
    with page.expect_download() as info:
        button.click()
    data = open(info.value.path(), "rb").read()
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    assert page.evaluate("window.cspViolations") == []


def test_png_export_single_file(dist, open_page):
    rec = open_page((dist / "nmrcalc.html").resolve().as_uri(), offline=True)
    _png_export(rec.page)


def test_png_export_folder_build_and_offline_ready(site_url, open_page):
    rec = open_page(site_url)
    _png_export(rec.page)
    page = rec.page
    page.wait_for_function("() => (window.nmrcalcStatus.offline || '').startsWith('Ready for offline use')", timeout=60_000)
    page.click("#tab-about")
    expect(page.locator("#offline-status")).to_contain_text("Ready for offline use")


def test_svg_caption_print_and_safety(dist, open_page):
    rec = open_page((dist / "nmrcalc.html").resolve().as_uri(), offline=True)
    page = rec.page
    page.click("#tab-multiplet")
    page.fill("#mult-linewidth", "1.5")
    page.click("#form-mult button[type=submit]")
    page.wait_for_function("() => window.nmrcalcStatus.pending === 0")
    with page.expect_download() as info:
        page.locator("#card-mult .plot-tool[aria-label='Export SVG']").first.click()
    svg = open(info.value.path(), encoding="utf-8").read()
    caption = svg[svg.rindex("<rect"):]  # the caption block appended under the plot
    for part in ("nmrcalc 0.", "13C", "Line width", "1.5 Hz", "400 MHz"):
        assert part in caption, (part, caption)
    page.emulate_media(media="print")
    assert not page.locator("#card-mult .plot > figcaption").first.is_visible()  # no zoom hints on paper
    page.emulate_media(media="screen")
    page.click("#tab-about")
    expect(page.locator("#safety-title + ul")).to_contain_text("5 G line (0.5 mT)")
    expect(page.locator("#panel-about")).to_contain_text("file://")


def test_undo_after_example_and_stale_on_cleared_field(dist, open_page):
    rec = open_page((dist / "nmrcalc.html").resolve().as_uri(), offline=True)
    page = rec.page
    page.click("#tab-multiplet")
    page.fill("#mult-g0-J", "21.7")
    page.locator("#card-mult .preset").first.click()
    expect(page.locator("#mult-g0-J")).not_to_have_value("21.7")
    page.click("#undo-replace")
    expect(page.locator("#mult-g0-J")).to_have_value("21.7")
    expect(page.locator("#page-notice")).to_contain_text("previous inputs are back")

    # a required field cleared: the old result is marked stale, the message sits beside that field
    page.click("#tab-energy")
    page.click("#form-energy button[type=submit]")
    page.wait_for_function("() => window.nmrcalcStatus.pending === 0")
    page.fill("#energy-nucleus", "")
    page.fill("#energy-photon", "")
    page.click("#form-energy button[type=submit]")
    page.wait_for_function("() => window.nmrcalcStatus.pending === 0")
    expect(page.locator("#energy-result")).to_have_class("result stale")
    expect(page.locator("#energy-nucleus-error")).not_to_be_empty()
    assert "undefined" not in page.locator("#panel-energy").inner_text()
