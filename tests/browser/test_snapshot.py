"""Python's start from the build's memory snapshot (build_scripts/snapshot.mjs, web/worker.js), in Chromium:
the worker loads that snapshot in both builds, and when the snapshot is missing, corrupt or made for another
Pyodide build it says why and starts Python the normal way, and the page still computes.

The folder build's snapshot is replaced on the way by a Playwright route; the single file's is altered in a
copy of the page. test_engines.py checks the snapshot start in all three engines."""

from __future__ import annotations

import base64
import gzip
import re

import pytest
from conftest import BOOT_TIMEOUT_MS

SNAPSHOT = "python-snapshot.bin"
BLOCK = re.compile(r'(<script type="application/octet-stream" class="nmrcalc-asset" data-name="python-snapshot\.bin"[^>]*>)([^<]*)(</script>)')


def _boot(browser, url: str, route=None) -> dict:
    """Open url in a fresh context (route answering the snapshot's request, if given), wait for the first
    result, and return how Python started, the snapshot requests seen and any page errors."""
    context = browser.new_context()
    try:
        seen: list[str] = []
        context.on("request", lambda request: seen.append(request.url) if request.url.endswith(SNAPSHOT) else None)
        if route is not None:
            context.route(f"**/{SNAPSHOT}", route)
        page = context.new_page()
        errors: list[str] = []
        page.on("pageerror", lambda error: errors.append(str(error)))
        page.goto(url)
        page.wait_for_selector("#boot[data-state=ready], #boot[data-state=failed]", state="attached", timeout=BOOT_TIMEOUT_MS)
        assert page.get_attribute("#boot", "data-state") == "ready", page.text_content("#boot-text")
        page.wait_for_function("() => typeof window.nmrcalcStatus.timings.firstResult === 'number'", timeout=60_000)
        return {"start": page.evaluate("() => window.nmrcalcStatus.start"), "requests": seen,
                "errors": errors + page.evaluate("() => NMRBoot.problems()")}
    finally:
        context.close()


def _snapshot_bytes(dist) -> bytes:
    return (dist / "site" / SNAPSHOT).read_bytes()


def test_site_loads_the_snapshot(browser, site_url):
    booted = _boot(browser, site_url + "index.html")
    assert booted["start"] == {"how": "snapshot", "note": ""}
    assert booted["requests"] == [site_url + SNAPSHOT]
    assert not booted["errors"]


def test_single_file_loads_the_snapshot(browser, dist):
    assert BLOCK.search((dist / "nmrcalc.html").read_text()), "the single file embeds no snapshot"
    booted = _boot(browser, (dist / "nmrcalc.html").resolve().as_uri())
    assert booted["start"] == {"how": "snapshot", "note": ""}
    assert not booted["errors"]


def _corrupt(data: bytes) -> bytes:
    """The gzip stream with a run of bytes in its middle inverted (its CRC no longer matches, if it inflates at all)."""
    middle = len(data) // 2
    return data[:middle] + bytes(b ^ 0xFF for b in data[middle:middle + 64]) + data[middle + 64:]


def _other_build(data: bytes) -> bytes:
    """A readable snapshot whose header names another Pyodide build (bytes 16-47 hold the build id)."""
    raw = bytearray(gzip.decompress(data))
    raw[16:48] = bytes(32)
    return gzip.compress(bytes(raw), 1)


@pytest.mark.parametrize(("case", "why"), [("missing", "HTTP 404"), ("corrupt", "start-up snapshot could not be used"),
                                           ("other build", "build id mismatch")])
def test_site_falls_back_without_a_usable_snapshot(browser, site_url, dist, case, why):
    good = _snapshot_bytes(dist)
    if case == "missing":
        def route(r):
            r.fulfill(status=404, body="not here")
    else:
        body = _corrupt(good) if case == "corrupt" else _other_build(good)

        def route(r):
            r.fulfill(status=200, body=body, headers={"Content-Type": "application/octet-stream"})
    booted = _boot(browser, site_url + "index.html", route)
    assert booted["start"]["how"] == "fresh", booted
    assert why in booted["start"]["note"], booted
    assert not booted["errors"]


@pytest.mark.parametrize("case", ["corrupt", "cut short", "left out"])
def test_single_file_falls_back_without_a_usable_snapshot(browser, dist, tmp_path, case):
    html = (dist / "nmrcalc.html").read_text()
    match = BLOCK.search(html)
    assert match
    if case == "left out":  # a build without the snapshot: neither the block nor its name in the asset list
        changed = html[:match.start()] + html[match.end():].replace("<script>NMRBoot.sendPrevious()</script>", "", 1)
        changed = changed.replace(f" {SNAPSHOT} ", " ", 1)
        why = "no start-up snapshot in this build"
    else:
        data = base64.b64decode(match.group(2))
        data = _corrupt(data) if case == "corrupt" else data[: len(data) // 2]
        changed = html[:match.start(2)] + base64.b64encode(data).decode() + html[match.end(2):]
        why = "start-up snapshot could not be used"
    page = tmp_path / "nmrcalc.html"
    page.write_text(changed)
    booted = _boot(browser, page.resolve().as_uri())
    assert booted["start"]["how"] == "fresh", booted
    assert why in booted["start"]["note"], booted
    assert not booted["errors"]
