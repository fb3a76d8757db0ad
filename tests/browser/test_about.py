"""The about section names the licences of what the page embeds, as THIRD-PARTY-NOTICES.txt beside
the built page does: Pyodide (MPL-2.0, with its version), the CPython interpreter and standard library
(PSF licence) and the helper lines esbuild writes into the bundle (MIT, its licence text)."""

from __future__ import annotations

import json
from pathlib import Path

from playwright.sync_api import expect

ROOT = Path(__file__).resolve().parents[2]


def test_about_shows_the_notices(dist, open_page):
    page = open_page((dist / "nmrcalc.html").resolve().as_uri(), offline=True).page
    page.click("#tab-about")
    card = page.locator("#about-licences")
    expect(card).to_be_visible()
    shown = card.inner_text()
    notices = (dist / "THIRD-PARTY-NOTICES.txt").read_text()
    pyodide = json.loads((ROOT / "node_modules" / "pyodide" / "package.json").read_text())["version"]
    esbuild_licence = (ROOT / "node_modules" / "esbuild" / "LICENSE.md").read_text().strip()
    for text in (f"Pyodide {pyodide}", "Mozilla Public License 2.0 (MPL-2.0)",
                 "Python Software Foundation License Version 2 (PSF-2.0)",
                 "Copyright (c) 2001 Python Software Foundation; All Rights Reserved", "esbuild"):
        assert text.replace(" (MPL-2.0)", "").replace(" (PSF-2.0)", "") in notices, text
        assert text in shown, text
    assert esbuild_licence in notices
    assert page.locator("#about-licences pre").text_content() == esbuild_licence
