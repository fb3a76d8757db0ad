"""A long spin-system calculation reports its progress in the status line while it runs,
and the status line returns to ready afterwards (offline single file, no request beyond it)."""

from __future__ import annotations

# eight all-coupled spins-1/2 at three fields: long enough to see progress messages
SPINS = [{"nucleus": "1H", "shift": f"{1 + 0.13 * k:.2f} ppm"} for k in range(8)]
COUPLINGS = [{"between": [i, j], "J": f"{2 + (i * 7 + j) % 9} Hz"} for i in range(8) for j in range(i + 1, 8)]
REQUEST = {"op": "spin_system", "observe": "1H", "fields": ["300 MHz", "600 MHz", "900 MHz"],
           "spins": SPINS, "couplings": COUPLINGS}


def test_progress_shown_then_ready(dist, open_page):
    url = (dist / "nmrcalc.html").resolve().as_uri()
    rec = open_page(url, offline=True)
    page = rec.page
    page.evaluate("(req) => { window.__seen = []; const t = document.getElementById('boot-text');"
                  " new MutationObserver(() => window.__seen.push(t.textContent)).observe(t, {childList: true, characterData: true, subtree: true});"
                  " window.__reply = nmrcalcTest.api(req); }", REQUEST)
    reply = page.evaluate("async () => await window.__reply")
    assert reply["ok"], reply
    seen = page.evaluate("() => window.__seen")
    assert any(text.startswith("Calculating") for text in seen), seen
    assert page.text_content("#boot-text").startswith("Ready")
    assert rec.requests == [url] and not rec.errors
