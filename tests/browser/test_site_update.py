"""The folder build's service worker, served over http from a copy of dist/site: "ready for offline use"
appears only once every file of the folder is cached (one file is held back by the server while the
worker installs), and after a file of the folder changes (the copy rebuilt with a new app.css and the
sw.js that build_web.py writes for it) a reload shows "a new version is ready — reload"; "Reload now"
switches to the new version, whose cache replaces the old one."""

from __future__ import annotations

import functools
import http.server
import importlib.util
import shutil
import threading
import time
from pathlib import Path

from conftest import ROOT, Recorded, _QuietHandler
from playwright.sync_api import expect

_spec = importlib.util.spec_from_file_location("build_web", ROOT / "build_scripts" / "build_web.py")
build_web = importlib.util.module_from_spec(_spec)
_spec.loader.exec_module(build_web)

HELD = "python_stdlib.zip"  # large, and fetched by the page's own boot before the service worker starts
OFFLINE = "() => window.nmrcalcStatus.offline || ''"


class _Gated(_QuietHandler):
    """Serves the folder; while the server's gate is closed, a request for HELD waits for it."""

    def do_GET(self):
        if self.path.split("?")[0].endswith("/" + HELD) and not self.server.gate.is_set():
            self.server.held.set()
            self.server.gate.wait(90)
        super().do_GET()


def _serve(folder: Path):
    server = http.server.ThreadingHTTPServer(("127.0.0.1", 0), functools.partial(_Gated, directory=str(folder)))
    server.gate, server.held = threading.Event(), threading.Event()
    server.gate.set()
    threading.Thread(target=server.serve_forever, daemon=True).start()
    return server


def _cached(page) -> set[str]:
    return set(page.evaluate("""async () => { const names = await caches.keys();
        const cache = await caches.open(names[0]); return (await cache.keys()).map((r) => r.url); }"""))


def test_offline_ready_only_when_all_cached_then_update_prompt(dist, browser, tmp_path):
    folder = tmp_path / "site"
    shutil.copytree(dist / "site", folder)
    server = _serve(folder)
    url = f"http://127.0.0.1:{server.server_port}/"
    context = browser.new_context(service_workers="allow")
    try:
        rec = Recorded(context, context.new_page())
        page = rec.page
        page.goto(url + "index.html")
        rec.wait_ready()
        server.gate.clear()  # from now on the service worker's copy of HELD waits

        deadline = time.monotonic() + 60
        while not server.held.is_set() and time.monotonic() < deadline:
            page.wait_for_timeout(200)
        assert server.held.is_set(), "the service worker never asked for " + HELD
        page.wait_for_timeout(1000)
        assert page.evaluate(OFFLINE) == "Storing the files for offline use…"
        page.click("#tab-about")
        expect(page.locator("#offline-status")).not_to_contain_text("Ready")
        server.gate.set()
        page.wait_for_function(f"() => ({OFFLINE})().startsWith('Ready for offline use')", timeout=60_000)
        expect(page.locator("#offline-status")).to_contain_text("Ready for offline use")
        files = {url + p.relative_to(folder).as_posix() for p in folder.rglob("*") if p.is_file() and p.name != "sw.js"}
        assert files | {url} <= _cached(page), sorted(files - _cached(page))
        first_cache = page.evaluate("caches.keys()")

        # a new build: one changed file, and the sw.js the build writes for the folder
        (folder / "app.css").write_text((folder / "app.css").read_text() + "\n/* build 2 */\n")
        build_web.write_service_worker(folder)
        page.reload()
        rec.wait_ready()
        reload_button = page.locator("#update-reload")
        expect(reload_button).to_be_visible(timeout=60_000)
        expect(page.locator("#page-notice")).to_contain_text("A new version of nmrcalc is ready")
        # offered only once the new worker holds every file (installed, waiting for the reload)
        assert page.evaluate("navigator.serviceWorker.getRegistration().then((r) => r.waiting && r.waiting.state)") \
            == "installed"
        assert "a new version is stored too" in page.evaluate(OFFLINE)
        with page.expect_navigation():
            reload_button.click()
        rec.wait_ready()
        assert "build 2" in page.evaluate("fetch('app.css').then((r) => r.text())")
        caches_now = page.evaluate("caches.keys()")
        assert len(caches_now) == 1 and caches_now != first_cache, (first_cache, caches_now)
        expect(page.locator("#update-reload")).to_have_count(0)
        assert not rec.errors, rec.errors
    finally:
        server.gate.set()
        context.close()
        server.shutdown()
        server.server_close()
