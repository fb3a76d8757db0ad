"""Bench notebook and worker recovery in the offline single file: pin with a note
(rendered as text only), pins survive a reload, JSON export/import round trip, CSV
export, bad share links refused with a message, and a worker crash restarts Python
with the inputs, results and pins kept and pending calls answered with a retryable error.

Expected numbers come from nmrcalc.api.handle on CPython (the physics is tested elsewhere)."""

from __future__ import annotations

import base64
import csv
import io
import json

from pinning import pin
from playwright.sync_api import expect

from nmrcalc.api import handle

HOSTILE_NOTE = "<img src=x onerror=alert(1)> =SUM(A1) sample 7b, CDCl3"




def _download_text(page, button):
    with page.expect_download() as info:
        page.click(button)
    return info.value, open(info.value.path(), encoding="utf-8").read()


def test_notebook_and_crash_recovery(dist, open_page, tmp_path):
    url = (dist / "nmrcalc.html").resolve().as_uri()
    rec = open_page(url, offline=True)
    page = rec.page
    dialogs = []
    page.on("dialog", lambda d: (dialogs.append(d.message), d.dismiss()))

    # a coupling result, pinned with a note that looks like markup
    page.click("#tab-coupling")
    page.fill("#scale-J", "32")
    page.fill("#scale-from", "2H")
    page.fill("#scale-to", "1H")
    page.click("#form-scale button[type=submit]")
    want = handle({"op": "scale_coupling", "J": "32 Hz", "from": "2H", "to": "1H", "partner": "13C"})["result"]
    expect(page.locator("#scale-result")).to_contain_text(f"{want['J_Hz']:#.5g}")
    pin(page, "scale", HOSTILE_NOTE)
    page.click("#tab-magnet")
    page.click("#form-larmor button[type=submit]")
    expect(page.locator("#larmor-result")).not_to_be_empty()
    pin(page, "larmor", "second pin")

    # the notebook lists both, newest first, the note as literal text
    page.click("#tab-notebook")
    pins = page.locator("#notebook-pins > li")
    expect(pins).to_have_count(2)
    expect(pins.nth(0).locator("h3")).to_contain_text("One nucleus")  # the card's title, not the op name
    expect(pins.nth(1).locator(".pin-note-text")).to_have_text(HOSTILE_NOTE)
    assert page.locator("#notebook-pins img, main img").count() == 0
    expect(pins.nth(1).locator(".pin-results")).not_to_contain_text("J_Hz")  # labels, not API keys
    expect(pins.nth(1).locator(".pin-results")).to_contain_text(" Hz")
    expect(pins.nth(1).locator(".pin-inputs")).to_contain_text("32")  # the J field as typed

    # pins survive a reload
    page.reload()
    rec.wait_ready()
    expect(page.locator("#notebook-pins > li")).to_have_count(2)
    assert not dialogs

    # JSON export -> delete all -> import -> export again: identical
    _, first = _download_text(page, "#notebook-export-json")
    exported = json.loads(first)
    assert [p["op"] for p in exported["pins"]] == ["frequency", "scale_coupling"]
    assert exported["pins"][1]["note"] == HOSTILE_NOTE
    page.locator("#notebook-pins .pin-delete").first.click()
    page.locator("#notebook-pins .pin-delete").first.click()
    expect(page.locator("#notebook-pins > li")).to_have_count(0)
    saved = tmp_path / "notebook.json"
    saved.write_text(first, encoding="utf-8")
    page.set_input_files("#notebook-import", str(saved))
    expect(page.locator("#notebook-status")).to_contain_text("Imported 2 pins")
    _, second = _download_text(page, "#notebook-export-json")
    assert second == first
    # importing it again adds nothing; a file that is not a notebook is refused with a reason
    page.set_input_files("#notebook-import", str(saved))
    expect(page.locator("#notebook-status")).to_contain_text("Imported 0 pins")
    bad = tmp_path / "bad.json"
    bad.write_text('{"format": "nmrcalc-notebook", "version": 1, "pins": [{"id": 3}]}', encoding="utf-8")
    page.set_input_files("#notebook-import", str(bad))
    expect(page.locator("#notebook-status")).to_contain_text("Not imported: an entry has no id")

    # CSV: one row per pin, the note kept as text (a leading = is neutralised)
    _, text = _download_text(page, "#notebook-export-csv")
    assert text.startswith("# nmrcalc ")
    rows = list(csv.DictReader(io.StringIO("".join(line for line in text.splitlines(True) if not line.startswith("# ")))))
    assert [json.loads(r["request_json"])["op"] for r in rows] == ["frequency", "scale_coupling"]
    assert rows[1]["note"] == HOSTILE_NOTE
    assert json.loads(rows[1]["request_json"]) == exported["pins"][1]["request"]

    # re-open a pin: its panel is shown and its request computed
    page.click("#tab-coupling")
    page.fill("#scale-J", "5")
    page.click("#tab-notebook")
    page.locator("#notebook-pins > li").nth(1).locator(".pin-reopen").click()
    expect(page.locator("#tab-coupling")).to_have_attribute("aria-selected", "true")
    expect(page.locator("#scale-J")).to_have_value("32")
    expect(page.locator("#scale-result")).to_contain_text(f"{want['J_Hz']:#.5g}")

    _bad_share_links(page)
    _older_spin_link(page)
    _worker_crash(rec, want)
    _panel_with_rows(rec)
    assert not rec.errors, rec.errors
    assert set(rec.requests) == {url}, sorted(set(rec.requests) - {url})


def _b64url(data) -> str:
    return base64.urlsafe_b64encode(json.dumps(data).encode()).decode().rstrip("=")


def _bad_share_links(page):
    """The same code path as a #calc= fragment at load time: refused with a message, no exception."""
    cases = {
        "#calc=%%%": "not base64url",
        "#calc=" + _b64url("just text")[:-1] + "!": "not base64url",
        "#calc=" + base64.urlsafe_b64encode(b"{not json").decode(): "does not hold JSON",
        "#calc=" + _b64url({"panel": "nowhere", "form": "scale", "request": {"op": "x"}}): "panel this page does not have",
        "#calc=" + _b64url({"panel": "coupling", "form": "larmor", "request": {"op": "x"}}): "calculation this panel does not have",
        "#calc=" + _b64url({"panel": "coupling", "form": "scale", "request": [1]}): "request is not an object",
        "#calc=" + _b64url({"panel": "coupling", "form": "scale", "request": {"op": "scale_coupling"}, "inputs": {"x.y": {"value": "1"}}}): "input this page does not have",
        "#calc=" + _b64url({"panel": "coupling", "form": "scale", "request": {"op": "scale_coupling"}, "inputs": {"scale.J": None}}): "not a field value",
        "#calc=" + _b64url({"panel": "multiplet", "form": "mult", "request": {"op": "multiplet"}, "inputs": {"mult.rows": {"groups": "x"}}}): "form this page expects",
        "#calc=" + _b64url({"panel": "multiplet", "form": "mult", "request": {"op": "multiplet"}, "inputs": {"mult.rows": {"groups": [{"kind": 1}], "abundance": []}}}): "form this page expects",
    }
    for fragment, reason in cases.items():
        page.evaluate("(h) => nmrcalcTest.openShareLink(h)", fragment)
        expect(page.locator("#page-notice")).to_contain_text("could not be opened")
        expect(page.locator("#page-notice")).to_contain_text(reason)


def _older_spin_link(page):
    """A spin-system link written before spins had labels still opens; each spin gets a free letter."""
    rows = {"spins": [{"nucleus": "1H", "shift": "4.10", "count": "1"}, {"nucleus": "1H", "shift": "4.22", "count": "1"}],
            "couplings": [{"i": 0, "j": 1, "J": "-12.5"}]}
    link = {"panel": "spins", "form": "spins", "request": {"op": "spin_system"}, "inputs": {"spins.rows": rows}}
    page.evaluate("(h) => nmrcalcTest.openShareLink(h)", "#calc=" + _b64url(link))
    expect(page.locator("#tab-spins")).to_have_attribute("aria-selected", "true")
    expect(page.locator("#spins-s1-shift")).to_have_value("4.22")
    expect(page.locator("#spins-s1-label")).to_have_attribute("placeholder", "B (automatic)")
    expect(page.locator("#card-spins")).to_contain_text("Spin B")
    page.click("#tab-coupling")


def _worker_crash(rec, want):
    """A message the worker does not understand makes it throw outside Python: the page restarts it."""
    page = rec.page
    page.click("#tab-coupling")
    before = page.locator("#scale-result").inner_text()
    response = page.evaluate("""() => {
        nmrcalcTest.worker().postMessage({ type: "not-a-message-type" });
        return nmrcalcTest.api({ op: "nuclide", query: "1H" });
    }""")
    assert response["ok"] is False
    assert response["error"]["code"] == "worker_restarted" and response["error"]["retryable"] is True
    rec.wait_ready()
    expect(page.locator("#boot-text")).to_contain_text("restarted")
    assert page.evaluate("window.nmrcalcStatus.restarts") == 1
    # inputs, results and pins are still there, and the new worker computes
    expect(page.locator("#scale-J")).to_have_value("32")
    assert page.locator("#scale-result").inner_text() == before
    expect(page.locator("#tab-notebook")).to_be_visible()
    assert page.evaluate("nmrcalcTest.notebook.list().length") == 2
    page.click("#form-scale button[type=submit]")
    expect(page.locator("#scale-result")).to_contain_text(f"{want['J_Hz']:#.5g}")
    expect(page.locator("#scale-form-error")).to_be_empty()


def _panel_with_rows(rec):
    """A panel with its own rows (multiplet builder): pinned, edited, re-opened -> the pinned rows come back."""
    page = rec.page
    page.click("#tab-multiplet")
    page.fill("#mult-g0-J", "21.7")
    page.click("#form-mult button[type=submit]")
    page.wait_for_function("() => window.nmrcalcStatus.pending === 0")
    expect(page.locator("#card-mult .pin-open")).to_be_enabled()
    pin(page, "mult", "rows pin")
    link_state = page.evaluate("nmrcalcTest.notebook.list()[0]")
    assert link_state["form"] == "mult" and link_state["inputs"]["mult.rows"]["groups"][0]["J"] == "21.7"
    assert link_state["request"]["op"] == "multiplet"
    page.fill("#mult-g0-J", "3")
    page.click("#tab-notebook")
    page.evaluate("window.nmrcalcStayed = true")  # gone if the page were loaded again
    page.locator("#notebook-pins > li").first.locator(".pin-reopen").click()
    expect(page.locator("#tab-multiplet")).to_have_attribute("aria-selected", "true")
    expect(page.locator("#mult-g0-J")).to_have_value("21.7")
    assert page.evaluate("window.nmrcalcStayed === true"), "re-opening a pin must not reload the page"
    expect(page.locator("#mult-result")).not_to_be_empty()
