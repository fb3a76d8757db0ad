"""Every panel of both builds with its default inputs: each main compute button pressed,
no error shown and no request beyond the page's own files; the layout fits a 390 px
phone; text contrast in the light and dark themes; a panel used by keyboard alone; a
share link opened in a fresh browser context recreates the calculation offline.

Expected numbers come from nmrcalc.api.handle on CPython (the physics is tested elsewhere)."""

from __future__ import annotations

from urllib.parse import urlsplit

import pytest
from playwright.sync_api import expect

from nmrcalc.api import handle

IDLE = "() => window.nmrcalcStatus.pending === 0 && [...document.querySelectorAll('.busy')].every(b => b.hidden)"

# WCAG 2.x contrast of every visible text run on screen against the first opaque
# background behind it: 4.5 for normal text, 3 for large (>= 24 px, or >= 18.66 px bold).
LOW_CONTRAST = """() => {
  const rgb = (text) => (text.match(/[\\d.]+/g) || []).map(Number);
  const lum = ([r, g, b]) => {
    const f = (c) => { c /= 255; return c <= 0.03928 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4; };
    return 0.2126 * f(r) + 0.7152 * f(g) + 0.0722 * f(b);
  };
  const background = (node) => {
    for (let n = node; n; n = n.parentElement) {
      const c = rgb(getComputedStyle(n).backgroundColor);
      if (c.length === 3 || c[3] === 1) return c.slice(0, 3);
    }
    return rgb(getComputedStyle(document.body).backgroundColor).slice(0, 3);
  };
  const problems = [];
  const walker = document.createTreeWalker(document.body, NodeFilter.SHOW_TEXT);
  for (let t = walker.nextNode(); t; t = walker.nextNode()) {
    const node = t.parentElement;
    if (!t.textContent.trim() || !node || node.closest("svg, .stale, [disabled], .skip, option")) continue;
    const box = node.getBoundingClientRect();
    if (box.width === 0 || box.height === 0) continue;
    const style = getComputedStyle(node);
    if (style.visibility === "hidden") continue;
    const a = lum(rgb(style.color)), b = lum(background(node));
    const ratio = (Math.max(a, b) + 0.05) / (Math.min(a, b) + 0.05);
    const size = parseFloat(style.fontSize), bold = Number(style.fontWeight) >= 700;
    const need = size >= 24 || (bold && size >= 18.66) ? 3 : 4.5;
    if (ratio < need) problems.push(`${node.tagName}.${node.className} "${t.textContent.trim().slice(0, 30)}" ${ratio.toFixed(2)}`);
  }
  return [...new Set(problems)];
}"""


def _url(target, dist, request) -> str:
    if target == "single":
        return (dist / "nmrcalc.html").resolve().as_uri()
    return request.getfixturevalue("site_url") + "index.html"


def _walk_every_panel(page):
    tabs = page.locator("[role=tab]").all()
    assert len(tabs) >= 8
    for tab in tabs:
        tab.click()
        panel = page.locator("#" + tab.get_attribute("aria-controls"))
        expect(panel).to_be_visible()
        presets = panel.locator(".preset")
        if presets.count():  # a panel with examples starts from its first one (its defaults may be empty)
            presets.first.click()
            page.wait_for_timeout(50)
            page.wait_for_function(IDLE, timeout=60_000)
        for button in panel.locator("form button[type=submit]").all():
            button.click()
            page.wait_for_timeout(50)
            page.wait_for_function(IDLE, timeout=60_000)
        name = tab.text_content()
        assert panel.locator(".is-error, .has-error").count() == 0, name
        assert all(not e.strip() for e in panel.locator(".form-error").all_text_contents()), name


def _fits_a_phone(page):
    page.set_viewport_size({"width": 390, "height": 844})
    for tab in page.locator("[role=tab]").all():
        tab.click()
        page.wait_for_function(IDLE, timeout=60_000)
        width = page.evaluate("document.documentElement.scrollWidth")
        assert width <= 390, f"{tab.text_content()}: page is {width} px wide at 390 px"
    page.set_viewport_size({"width": 1280, "height": 900})


def _contrast_in_both_themes(page):
    for scheme in ("light", "dark"):
        page.emulate_media(color_scheme=scheme)
        for tab in page.locator("[role=tab]").all():
            tab.click()
            assert page.evaluate(LOW_CONTRAST) == [], f"{scheme} theme, {tab.text_content()}"
    page.emulate_media(color_scheme="light")


@pytest.mark.parametrize("target", ["single", "site"])
def test_every_panel_computes_with_own_files_only(target, dist, request, open_page):
    """The single file also carries the keyboard, phone, contrast and share-link checks (one boot fewer)."""
    url = _url(target, dist, request)
    rec = open_page(url, offline=(target == "single"))
    page = rec.page
    _walk_every_panel(page)
    if target == "single":
        _fits_a_phone(page)
        _contrast_in_both_themes(page)
        _keyboard_only_and_share_link(page, url, request.getfixturevalue("browser"))
    assert not rec.errors, rec.errors
    if target == "single":
        assert set(rec.requests) == {url}, sorted(set(rec.requests) - {url})
    else:
        foreign = [r for r in rec.requests if urlsplit(r)[:2] != urlsplit(url)[:2]]
        assert not foreign, foreign


def _keyboard_only_and_share_link(page, url, browser):
    # from the tab list, by keyboard: choose the coupling tab, Tab into its fields, Enter computes
    page.focus("[role=tab][aria-selected=true]")
    for _ in range(page.locator("[role=tab]").count()):
        if page.evaluate("document.activeElement.id") == "tab-coupling":
            break
        page.keyboard.press("ArrowRight")
    expect(page.locator("#tab-coupling")).to_have_attribute("aria-selected", "true")
    page.keyboard.press("Tab")
    if page.evaluate("document.activeElement.id") == "undo-replace":  # the one-step undo offered after an example
        page.keyboard.press("Tab")
    expect(page.locator("#scale-J")).to_be_focused()
    ring = page.evaluate("getComputedStyle(document.activeElement).outlineStyle + ' ' + getComputedStyle(document.activeElement).outlineWidth")
    assert ring == "solid 3px", ring
    page.keyboard.press("Control+A")
    page.keyboard.type("21.5")
    for field, text in (("#scale-from", "1H"), ("#scale-to", "3H"), ("#scale-partner", "13C")):
        page.keyboard.press("Tab")
        expect(page.locator(field)).to_be_focused()
        page.keyboard.press("Control+A")
        page.keyboard.type(text)
    page.keyboard.press("Enter")
    want = handle({"op": "scale_coupling", "J": "21.5 Hz", "from": "1H", "to": "3H", "partner": "13C"})["result"]
    expect(page.locator("#scale-result")).to_contain_text(f"{want['J_Hz']:#.5g}")
    # then on to the pin bar, still by keyboard: Tab reaches "Share link"
    for _ in range(10):
        page.keyboard.press("Tab")
        if page.evaluate("document.activeElement.classList.contains('pin-share')"):
            break
    page.keyboard.press("Enter")
    link = page.input_value("#pin-link-scale")
    assert link.startswith(url + "#calc=")

    # a fresh context (another device): offline, only the file itself may load
    context = browser.new_context(viewport={"width": 390, "height": 844})
    try:
        requests = []
        context.on("request", lambda r: requests.append(r.url))
        context.set_offline(True)
        context.route("**/*", lambda route: route.continue_() if route.request.url == url else route.abort())
        other = context.new_page()
        errors = []
        other.on("pageerror", lambda e: errors.append(str(e)))
        other.goto(link)
        other.wait_for_selector("#boot[data-state=ready]", state="attached", timeout=90_000)
        expect(other.locator("#tab-coupling")).to_have_attribute("aria-selected", "true")
        expect(other.locator("#scale-J")).to_have_value("21.5")
        expect(other.locator("#scale-to")).to_have_value("3H")
        expect(other.locator("#scale-result")).to_contain_text(f"{want['J_Hz']:#.5g}")
        expect(other.locator("#page-notice")).to_contain_text("A shared calculation (computed here, offline) replaced the inputs")
        assert not errors, errors
        assert set(requests) == {url}, requests
    finally:
        context.close()
