"""A pattern-finder result can be pinned to the bench notebook like every other panel's
(offline single file; nothing requested beyond the file)."""

from __future__ import annotations

from playwright.sync_api import expect


def test_pin_a_pattern_finder_result(dist, open_page):
    url = (dist / "nmrcalc.html").resolve().as_uri()
    rec = open_page(url, offline=True)
    page = rec.page
    page.click("#tab-identify")
    page.fill("#ident-peaklist", "Hz,intensity\n-29.25,1\n-9.75,3\n9.75,3\n29.25,1")
    page.click("#ident-find")
    expect(page.locator("#ident-result")).to_be_visible(timeout=60_000)
    card = page.locator("#card-ident")
    card.locator(".pin-open").click()
    card.locator(".pin-note").fill("made-up sample QX-12, methyl quartet")
    card.locator(".pin-note").press("Enter")
    expect(card.locator(".pin-status")).to_contain_text("Pinned")
    page.click("#tab-notebook")
    expect(page.locator("#notebook-pins > li").first).to_contain_text("made-up sample QX-12")
    assert rec.requests == [url] and not rec.errors
