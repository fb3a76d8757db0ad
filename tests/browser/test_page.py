"""The built page in a real browser: boot, calculate through the UI, field errors,
inputs kept across a reload, and no request beyond the page's own files.

Expected numbers come from nmrcalc.api.handle on CPython: these tests check that the
page shows what the package computes (the physics itself is tested elsewhere)."""

from __future__ import annotations

from urllib.parse import urlsplit

import pytest
from playwright.sync_api import expect

from nmrcalc.api import handle

TARGETS = ["single", "site"]


def _url(target, dist, request) -> str:
    if target == "single":
        return (dist / "nmrcalc.html").resolve().as_uri()
    return request.getfixturevalue("site_url") + "index.html"


def _open(target, dist, request, open_page):
    url = _url(target, dist, request)
    return url, open_page(url, offline=(target == "single"))


def _own_requests_only(target, url, requests):
    if target == "single":
        assert set(requests) == {url}, f"unexpected requests: {sorted(set(requests) - {url})}"
    else:
        origin = urlsplit(url)[:2]
        foreign = [r for r in requests if urlsplit(r)[:2] != origin]
        assert not foreign, f"requests outside the site: {foreign}"


@pytest.mark.parametrize("target", TARGETS)
def test_page(target, dist, request, open_page):
    """One boot and one reload per build (boots are the slow part)."""
    url, rec = _open(target, dist, request, open_page)
    page = rec.page
    _calculate_through_the_ui(page)
    _errors_beside_their_fields(page)
    if target == "single":
        _tablet_touch_targets_and_labels(page)
    if target == "site":
        _service_worker_has_cached_everything(page)
        rec.context.set_offline(True)  # the reload below then comes from the service worker's cache
    _inputs_survive_reload(rec)
    assert not rec.errors, rec.errors
    _own_requests_only(target, url, rec.requests)


def _calculate_through_the_ui(page):

    # frequency of 13C at a 400.13 MHz magnet, through the magnet panel
    page.click("#tab-magnet")
    page.fill("#freqs-magnet", "400.13")
    page.select_option("#freqs-magnet-unit", "MHz")
    page.fill("#larmor-nucleus", "13C")
    page.click("#form-larmor button[type=submit]")
    want = handle({"op": "frequency", "nucleus": "13C", "spectrometer": "400.13 MHz"})["result"]
    expect(page.locator("#larmor-result")).to_contain_text(f"{want['larmor_MHz']:.6f}")
    expect(page.locator("#larmor-result")).to_contain_text(f"{want['reference_MHz']:.6f}")

    # a scaled coupling 2H -> 1H with a 13C partner
    page.click("#tab-coupling")
    page.fill("#scale-J", "32")
    page.fill("#scale-from", "2H")
    page.fill("#scale-to", "1H")
    page.fill("#scale-partner", "13C")
    page.click("#form-scale button[type=submit]")
    got = handle({"op": "scale_coupling", "J": "32 Hz", "from": "2H", "to": "1H", "partner": "13C"})
    expect(page.locator("#scale-result")).to_contain_text(f"{got['result']['J_Hz']:#.5g}")
    expect(page.locator("#scale-warnings")).to_contain_text(got["warnings"][0])



def _errors_beside_their_fields(page):
    # a bad magnet value: the API's message appears beside the magnet input
    page.click("#tab-magnet")
    page.fill("#freqs-magnet", "abc")
    page.click("#form-larmor button[type=submit]")
    bad = handle({"op": "frequency", "nucleus": "13C", "spectrometer": "abc"})["error"]  # the text as typed
    assert bad["field"] == "spectrometer"
    error = page.locator("#freqs-magnet-error")
    expect(error).to_have_text(bad["message"])
    expect(page.locator("#freqs-magnet")).to_have_attribute("aria-invalid", "true")
    # the message sits in the same field box as the input it belongs to
    assert page.locator(".field.has-error").filter(has=page.locator("#freqs-magnet")).count() == 1
    # a bad nucleus is reported beside the nucleus input, not the magnet
    page.fill("#freqs-magnet", "400.13")
    page.fill("#larmor-nucleus", "Qq")
    page.click("#form-larmor button[type=submit]")
    expect(page.locator("#larmor-nucleus-error")).not_to_be_empty()
    expect(page.locator("#freqs-magnet-error")).to_be_empty()


SMALL_OR_UNLABELLED = """() => {
  const problems = [];
  for (const node of document.querySelectorAll("button, input, select, textarea, a[href]")) {
    const box = node.getBoundingClientRect();
    if (box.width === 0 && box.height === 0) continue;  // not on screen (other tab, skip link)
    if (node.classList.contains("skip")) continue;
    const target = node.type === "checkbox" ? node.closest("label").getBoundingClientRect() : box;
    if (target.height < 44 || target.width < 44) problems.push(`${node.id || node.textContent}: ${target.width}x${target.height}`);
    const named = node.labels?.length || node.getAttribute("aria-label") || node.textContent.trim();
    if (node.matches("input, select, textarea") && !named) problems.push(`${node.id}: no label`);
  }
  return problems;
}"""


def _tablet_touch_targets_and_labels(page):
    """Every visible control on every tab is at least 44 x 44 px at tablet size and has a label."""
    page.set_viewport_size({"width": 820, "height": 1180})
    for tab in page.locator("[role=tab]").all():
        tab.click()
        assert page.evaluate(SMALL_OR_UNLABELLED) == [], tab.text_content()
    page.set_viewport_size({"width": 1280, "height": 900})


def _service_worker_has_cached_everything(page):
    page.evaluate("navigator.serviceWorker.ready.then(() => true)")
    cached = page.evaluate("caches.keys().then(k => caches.open(k[0])).then(c => c.keys()).then(r => r.map(x => x.url))")
    for name in ("index.html", "pyodide.asm.wasm", "python_stdlib.zip", "nmrcalc.zip", "python-snapshot.bin", "worker.js",
                 "manifest.webmanifest"):
        assert any(u.endswith("/" + name) for u in cached), f"{name} not in the offline cache"


def _inputs_survive_reload(rec):
    page = rec.page
    page.click("#tab-coupling")
    page.fill("#scale-J", "21.5")
    page.fill("#scale-from", "13C")
    page.click("#tab-energy")
    page.select_option("#energy-magnet-unit", "T")
    page.fill("#energy-magnet", "14.1")
    page.reload()
    rec.wait_ready()
    expect(page.locator("#tab-energy")).to_have_attribute("aria-selected", "true")
    expect(page.locator("#energy-magnet")).to_have_value("14.1")
    expect(page.locator("#energy-magnet-unit")).to_have_value("T")
    expect(page.locator("#scale-J")).to_have_value("21.5")
    expect(page.locator("#scale-from")).to_have_value("13C")
    # the restored inputs are computed again after the reload
    want = handle({"op": "energy", "nucleus": "1H", "field": "14.1 T", "temperature": "298 K"})["result"]
    expect(page.locator("#energy-result")).to_contain_text(f"{want['field_T']:.6g}")


