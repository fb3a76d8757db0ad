"""Fixtures for the browser tests: a fresh build, one shared headless Debian chromium,
a localhost server for the folder build, and pages that record every request; for the
engine walk also Debian's firefox-esr (Playwright over WebDriver-BiDi) and WebKitGTK's
MiniBrowser (selenium through WebKitWebDriver, under an Xvfb display started here)."""

from __future__ import annotations

import functools
import http.server
import importlib.util
import os
import shutil
import subprocess
import sys
import threading
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
_spec = importlib.util.spec_from_file_location("webkit_driver", ROOT / "build_scripts" / "webkit_driver.py")
webkit_setup = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(webkit_setup)
DIST = ROOT / "dist"
SINGLE = DIST / "nmrcalc.html"
SITE = DIST / "site"
CHROMIUM_ARGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking",
                 "--disable-component-update", "--disable-sync"]
BOOT_TIMEOUT_MS = 90_000


def _sources() -> list[Path]:
    files = [ROOT / "build_scripts" / name for name in ("build_web.py", "bytecode.mjs", "snapshot.mjs")]
    files.append(ROOT / "package-lock.json")
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


def _need(what: str, install: str) -> None:
    message = f"{what} is required for the browser tests (apt-get install {install}; build_scripts/setup.sh --test does it)"
    if os.environ.get("CI") == "true":
        pytest.fail(message)
    pytest.skip(message + "; skipped off CI")


@pytest.fixture(scope="session")
def playwright_instance():
    from playwright.sync_api import sync_playwright

    with sync_playwright() as playwright:
        yield playwright


@pytest.fixture(scope="session")
def browser(playwright_instance):
    chromium = shutil.which("chromium") or ("/usr/bin/chromium" if Path("/usr/bin/chromium").exists() else None)
    if chromium is None:
        _need("chromium", "chromium")
    browser = playwright_instance.chromium.launch(executable_path=chromium, headless=True, args=CHROMIUM_ARGS)
    yield browser
    browser.close()


@pytest.fixture(scope="session")
def firefox(playwright_instance):
    """Debian's Firefox ESR, driven by Playwright's WebDriver-BiDi mode (see pyproject.toml for the pin)."""
    executable = shutil.which("firefox-esr")
    if executable is None:
        _need("firefox-esr", "firefox-esr")
    browser = playwright_instance.firefox.launch(channel="moz-firefox", executable_path=executable, headless=True)
    yield browser
    browser.close()


@pytest.fixture(scope="session")
def webkit_driver():
    """WebKitWebDriver drawing into a private Xvfb display (build_scripts/webkit_driver.py); both stopped at the end."""
    for what, package in webkit_setup.missing():
        _need(what, package)
    driver = webkit_setup.WebKitDriver().start()
    try:
        yield driver
    finally:
        driver.stop()


@pytest.fixture(scope="session")
def webkit(webkit_driver):
    """webkit() -> a fresh MiniBrowser session (its own empty storage) through selenium; quit it after use."""
    return webkit_driver.new_session


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
