"""Fixtures for the browser tests: a fresh build, one shared headless Debian chromium,
a localhost server for the folder build, and pages that record every request."""

from __future__ import annotations

import functools
import http.server
import os
import shutil
import subprocess
import sys
import threading
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
DIST = ROOT / "dist"
SINGLE = DIST / "nmrcalc.html"
SITE = DIST / "site"
CHROMIUM_ARGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking",
                 "--disable-component-update", "--disable-sync"]
BOOT_TIMEOUT_MS = 90_000


def _sources() -> list[Path]:
    files = [ROOT / "build_scripts" / "build_web.py", ROOT / "build_scripts" / "bytecode.mjs", ROOT / "package-lock.json"]
    files += [p for p in (ROOT / "web").rglob("*") if p.is_file()]
    files += [p for p in (ROOT / "nmrcalc").rglob("*.py") if "__pycache__" not in p.parts]
    return files


def _stale() -> bool:
    outputs = [SINGLE, SITE / "index.html", SITE / "sw.js"]
    if not all(p.exists() for p in outputs):
        return True
    built = min(p.stat().st_mtime for p in outputs)
    return any(p.stat().st_mtime > built for p in _sources())


@pytest.fixture(scope="session")
def dist() -> Path:
    """dist/, rebuilt first if it is missing or older than any source."""
    if _stale():
        if not (ROOT / "node_modules" / "pyodide" / "pyodide.asm.wasm").exists():
            message = "node_modules/pyodide is missing: run `npm ci` in the repository to build the page"
            if os.environ.get("CI") == "true":
                pytest.fail(message)
            pytest.skip(message)
        subprocess.run([sys.executable, str(ROOT / "build_scripts" / "build_web.py")], check=True, cwd=ROOT)
    return DIST


@pytest.fixture(scope="session")
def browser():
    chromium = shutil.which("chromium") or ("/usr/bin/chromium" if Path("/usr/bin/chromium").exists() else None)
    if chromium is None:
        if os.environ.get("CI") == "true":
            pytest.fail("chromium is required for the browser tests on CI (apt-get install chromium)")
        pytest.skip("chromium not installed (apt-get install chromium); browser tests skipped off CI")
    from playwright.sync_api import sync_playwright

    with sync_playwright() as playwright:
        browser = playwright.chromium.launch(executable_path=chromium, headless=True, args=CHROMIUM_ARGS)
        yield browser
        browser.close()


class _QuietHandler(http.server.SimpleHTTPRequestHandler):
    extensions_map = {**http.server.SimpleHTTPRequestHandler.extensions_map,
                      ".mjs": "text/javascript", ".js": "text/javascript", ".wasm": "application/wasm",
                      ".webmanifest": "application/manifest+json"}

    def log_message(self, *args):
        pass


@pytest.fixture(scope="session")
def site_url(dist):
    """The folder build served by a thread on 127.0.0.1 at a random port."""
    server = http.server.ThreadingHTTPServer(("127.0.0.1", 0), functools.partial(_QuietHandler, directory=str(dist / "site")))
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    yield f"http://127.0.0.1:{server.server_port}/"
    server.shutdown()
    server.server_close()


class Recorded:
    """A page plus every request its browser context made (page, workers, service worker)."""

    def __init__(self, context, page):
        self.context = context
        self.page = page
        self.requests: list[str] = []
        self.errors: list[str] = []
        context.on("request", lambda request: self.requests.append(request.url))
        page.on("pageerror", lambda error: self.errors.append(str(error)))

    def wait_ready(self):
        """Wait until the worker reports ready (or failed); fail with the boot error."""
        self.page.wait_for_selector("#boot[data-state=ready], #boot[data-state=failed]", state="attached",
                                    timeout=BOOT_TIMEOUT_MS)
        state = self.page.get_attribute("#boot", "data-state")
        assert state == "ready", f"boot failed: {self.page.text_content('#boot-text')} {self.errors}"


@pytest.fixture()
def open_page(browser):
    """open_page(url, offline=False) -> Recorded, booted; its context closes after the test."""
    contexts = []

    def _open(url: str, offline: bool = False) -> Recorded:
        context = browser.new_context(viewport={"width": 1280, "height": 900}, service_workers="allow")
        contexts.append(context)
        page = context.new_page()
        recorded = Recorded(context, page)
        if offline:
            context.set_offline(True)
            # and refuse every route except the page itself
            context.route("**/*", lambda route: route.continue_() if route.request.url == url else route.abort())
        page.goto(url)
        recorded.wait_ready()
        return recorded

    yield _open
    for context in contexts:
        context.close()
