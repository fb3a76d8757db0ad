"""The same walk through both builds in each engine a lab uses: Blink (Debian's chromium),
Gecko (Debian's firefox-esr, Playwright over WebDriver-BiDi) and WebKit (WebKitGTK's
MiniBrowser through selenium). Boot, one calculation per panel with no error shown, a plot
export (SVG and PNG file contents), a pin that survives a reload, no request beyond the
page's own files, and no page error or CSP violation; Python starts from the build's memory
snapshot in every engine (tests/browser/test_snapshot.py checks the fallback without it).

The walk runs through the page's own DOM by script, so the three drivers do exactly the
same thing. Requests: Playwright's request log where it has one, and in every engine the
page's Performance API resource entries. Errors and CSP violations: the page's own record
(NMRBoot.problems(), kept from its first script on) plus Playwright's pageerror event.
Expected numbers come from nmrcalc.api.handle on CPython (the physics is tested elsewhere)."""

from __future__ import annotations

import base64
import json
import time
from urllib.parse import urlsplit

import pytest

from nmrcalc.api import handle

ENGINES = ["chromium", "firefox", "webkit"]
BOOT_TIMEOUT_S = 180  # WebKit boots slowest; a 2-core machine under load can take minutes
TARGETS = ["single", "site"]

IDLE = "return window.nmrcalcStatus.pending === 0 && [...document.querySelectorAll('.busy')].every(b => b.hidden)"
BOOT_STATE = "const b = document.getElementById('boot'); return b ? b.dataset.state || '' : ''"


class PlaywrightPage:
    """A Playwright page (chromium or firefox) with every request and page error recorded."""

    def __init__(self, browser):
        self.context = browser.new_context(viewport={"width": 1280, "height": 900})
        self.page = self.context.new_page()
        self.requests: list[str] = []
        self.errors: list[str] = []
        self.context.on("request", lambda request: self.requests.append(request.url))
        self.page.on("pageerror", lambda error: self.errors.append(str(error)))

    def goto(self, url):
        self.page.goto(url)

    def js(self, body):
        return self.page.evaluate(f"() => {{ {body} }}")

    def reload(self):
        self.page.reload()

    def close(self):
        self.context.close()


class SeleniumPage:
    """A WebKit MiniBrowser session: no request log and no console, so only the page's own records."""

    def __init__(self, new_session):
        self.driver = new_session()
        self.driver.set_window_size(1280, 900)
        self.requests: list[str] = []
        self.errors: list[str] = []

    def goto(self, url):
        self.driver.get(url)

    def js(self, body):
        return self.driver.execute_script(body)

    def reload(self):
        self.driver.refresh()

    def close(self):
        self.driver.quit()


def _poll(page, body, what, timeout_s):
    deadline = time.monotonic() + timeout_s
    while time.monotonic() < deadline:
        value = page.js(body)
        if value:
            return value
        time.sleep(0.1)
    raise AssertionError(f"timed out after {timeout_s} s waiting for {what}")


def _wait_ready(page, engine):
    state = _poll(page, f"const s = (() => {{ {BOOT_STATE} }})(); return ['ready', 'failed'].includes(s) && s",
                  "the worker to boot", BOOT_TIMEOUT_S)
    detail = page.js("return [document.getElementById('boot-text').textContent, window.nmrcalcStatus.error]")
    assert state == "ready", f"{engine}: boot failed: {detail}"
    # Python came from the build's memory snapshot, not from a normal start (web/worker.js)
    start = page.js("return window.nmrcalcStatus.start")
    assert start == {"how": "snapshot", "note": ""}, f"{engine}: Python did not start from the snapshot: {start}"


def _walk_every_panel(page, engine):
    tabs = page.js("return [...document.querySelectorAll('[role=tab]')].map(t => [t.id, t.getAttribute('aria-controls')])")
    assert len(tabs) >= 8, tabs
    for tab_id, panel_id in tabs:
        page.js(f"document.getElementById({json.dumps(tab_id)}).click()")
        assert page.js(f"return !document.getElementById({json.dumps(panel_id)}).hidden"), f"{engine}: {tab_id} not shown"
        buttons = page.js(f"""const panel = document.getElementById({json.dumps(panel_id)});
            const preset = panel.querySelector('.preset'); if (preset) preset.click();
            return panel.querySelectorAll('form button[type=submit]').length""")
        _poll(page, IDLE, f"{tab_id} preset", 60)
        for index in range(buttons):
            page.js(f"document.getElementById({json.dumps(panel_id)}).querySelectorAll('form button[type=submit]')[{index}].click()")
            time.sleep(0.05)
            _poll(page, IDLE, f"{tab_id} button {index}", 60)
        shown = page.js(f"""const panel = document.getElementById({json.dumps(panel_id)});
            return [panel.querySelectorAll('.is-error, .has-error').length,
                    [...panel.querySelectorAll('.form-error')].map(e => e.textContent.trim()).filter(Boolean)]""")
        assert shown == [0, []], f"{engine}: {tab_id} shows an error: {shown}"


def _a_coupling_result(page, engine):
    page.js("""document.getElementById('tab-coupling').click();
        const set = (id, v) => { const n = document.getElementById(id); n.value = v; n.dispatchEvent(new Event('input', {bubbles: true})); };
        set('scale-J', '32'); set('scale-from', '2H'); set('scale-to', '1H'); set('scale-partner', '13C');
        document.querySelector('#form-scale button[type=submit]').click()""")
    want = handle({"op": "scale_coupling", "J": "32 Hz", "from": "2H", "to": "1H", "partner": "13C"})["result"]
    text = f"{want['J_Hz']:#.5g}"
    _poll(page, f"return document.getElementById('scale-result').textContent.includes({json.dumps(text)})",
          f"{engine}: coupling result {text}", 30)


def _plot_exports(page, engine):
    """The first plot's SVG and PNG exports: the file each would save, caught at the download link."""
    page.js("""window.__saved = [];
        const click = HTMLAnchorElement.prototype.click;
        HTMLAnchorElement.prototype.click = function () {
          if (this.download) window.__saved.push([this.download, this.href]); else click.call(this);
        };
        const tools = [...document.querySelectorAll('button.plot-tool')];
        tools.find(b => b.textContent === 'SVG').click();
        tools.find(b => b.textContent === 'PNG').click();""")
    saved = _poll(page, "return window.__saved.length === 2 && window.__saved", f"{engine}: two plot exports", 20)
    (svg_name, svg_url), (png_name, png_url) = sorted(saved, key=lambda item: not item[0].endswith(".svg"))
    assert svg_name.endswith(".svg") and png_name.endswith(".png"), saved
    assert svg_url.startswith("data:image/svg+xml;base64,")
    svg = base64.b64decode(svg_url.split(",", 1)[1]).decode()
    assert svg.startswith("<svg") and ("<polyline" in svg or "<line" in svg), svg[:200]
    assert png_url.startswith("data:image/png;base64,")
    png = base64.b64decode(png_url.split(",", 1)[1])
    assert png.startswith(b"\x89PNG\r\n\x1a\n") and len(png) > 1000, f"{engine}: PNG export of {len(png)} bytes"


def _pin_survives_reload(page, engine):
    page.js("""const card = document.getElementById('card-scale');
        card.querySelector('.pin-open').click();
        const note = card.querySelector('.pin-note'); note.value = 'engine walk';
        note.dispatchEvent(new KeyboardEvent('keydown', {key: 'Enter', bubbles: true}));""")
    _poll(page, "return document.querySelector('#card-scale .pin-status').textContent.includes('Pinned')",
          f"{engine}: the pin", 10)
    page.reload()
    _wait_ready(page, engine)
    page.js("document.getElementById('tab-notebook').click()")
    notes = _poll(page, "const n = [...document.querySelectorAll('#notebook-pins .pin-note-text')].map(n => n.textContent); return n.length && n",
                  f"{engine}: the pin after a reload", 10)
    assert notes == ["engine walk"], notes


def _own_files_only(page, url, target, engine):
    loaded = page.js("return performance.getEntriesByType('resource').map(e => e.name)") + page.requests
    if target == "single":
        foreign = [r for r in loaded if r.split("#")[0] != url and not r.startswith(("data:", "blob:"))]
    else:
        foreign = [r for r in loaded if urlsplit(r)[:2] != urlsplit(url)[:2] and not r.startswith(("data:", "blob:"))]
    assert not foreign, f"{engine}: requests outside the page's own files: {foreign}"


@pytest.mark.parametrize("target", TARGETS)
@pytest.mark.parametrize("engine", ENGINES)
def test_engine_walk(engine, target, dist, request):
    if engine == "webkit":
        page = SeleniumPage(request.getfixturevalue("webkit"))
    else:
        page = PlaywrightPage(request.getfixturevalue("browser" if engine == "chromium" else "firefox"))
    url = (dist / "nmrcalc.html").resolve().as_uri() if target == "single" else request.getfixturevalue("site_url") + "index.html"
    try:
        page.goto(url)
        _wait_ready(page, engine)
        _walk_every_panel(page, engine)
        _a_coupling_result(page, engine)
        _plot_exports(page, engine)
        _pin_survives_reload(page, engine)
        _own_files_only(page, url, target, engine)
        problems = page.js("return NMRBoot.problems()") + page.errors
        assert not problems, f"{engine}: page errors or CSP violations: {problems}"
    finally:
        page.close()
