"""Print nmrcalc's speed and size figures in one run, and write them to bench_results/latest.txt.

Sections are functions in SECTIONS, each taking the shared Bench and returning
(label, value, unit) rows; add new sections (multiplets, spin systems) to the list.

Page section (needs `npm ci` and chromium):
* bare Pyodide boot: a minimal page that only runs loadPyodide() from a localhost server;
* the page's time to first result: navigation start to the first computed value shown,
  for the single file from file:// and for the folder build on localhost (fresh context each run);
* single-file size against the Pyodide core files it embeds.

Usage: python build_scripts/benchmark.py [--runs N] [--only page]
"""

from __future__ import annotations

import argparse
import functools
import http.server
import shutil
import statistics
import sys
import tempfile
import threading
import time
from contextlib import contextmanager
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT / "build_scripts"))
import build_web  # noqa: E402  (sibling script)

RESULTS = ROOT / "bench_results" / "latest.txt"
CHROMIUM_ARGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking",
                 "--disable-component-update", "--disable-sync"]
BARE_PAGE = """<!doctype html><meta charset="utf-8"><title>bare Pyodide</title>
<script type="module">
import { loadPyodide } from "./pyodide.mjs";
const pyodide = await loadPyodide({ indexURL: "./" });
pyodide.runPython("1 + 1");
window.bareBootMs = performance.now();
</script>"""


class _Quiet(http.server.SimpleHTTPRequestHandler):
    extensions_map = {**http.server.SimpleHTTPRequestHandler.extensions_map,
                      ".mjs": "text/javascript", ".wasm": "application/wasm"}

    def log_message(self, *args):
        pass


@contextmanager
def serve(folder: Path):
    server = http.server.ThreadingHTTPServer(("127.0.0.1", 0), functools.partial(_Quiet, directory=str(folder)))
    threading.Thread(target=server.serve_forever, daemon=True).start()
    try:
        yield f"http://127.0.0.1:{server.server_port}/"
    finally:
        server.shutdown()
        server.server_close()


class Bench:
    """Shared state for the sections: run count and a lazily started browser."""

    def __init__(self, runs: int):
        self.runs = runs
        self._playwright = None
        self._browser = None

    def browser(self):
        if self._browser is None:
            from playwright.sync_api import sync_playwright

            chromium = shutil.which("chromium") or "/usr/bin/chromium"
            self._playwright = sync_playwright().start()
            self._browser = self._playwright.chromium.launch(executable_path=chromium, headless=True, args=CHROMIUM_ARGS)
        return self._browser

    def close(self):
        if self._browser is not None:
            self._browser.close()
            self._playwright.stop()


def _time_until(bench: Bench, url: str, expression: str, timeout_s: float = 120) -> float:
    """Milliseconds from navigation start until ``expression`` (evaluated in the page) is a number."""
    context = bench.browser().new_context()
    try:
        page = context.new_page()
        page.goto(url)
        deadline = time.monotonic() + timeout_s
        while time.monotonic() < deadline:
            value = page.evaluate(expression)
            if isinstance(value, (int, float)):
                return float(value)
            time.sleep(0.05)
        raise TimeoutError(f"{url}: {expression} not set within {timeout_s} s")
    finally:
        context.close()


FIRST_RESULT = "window.nmrcalcStatus && window.nmrcalcStatus.timings.firstResult"


def page_section(bench: Bench) -> list[tuple[str, float, str]]:
    dist = ROOT / "dist"
    if build_web.main(["--out", str(dist)]) != 0:
        raise SystemExit("build failed")
    single = dist / "nmrcalc.html"
    tmp_root = ROOT / "bench_results" / "tmp"
    tmp_root.mkdir(parents=True, exist_ok=True)
    timings: dict[str, list[float]] = {"bare": [], "single": [], "site": []}
    with tempfile.TemporaryDirectory(dir=tmp_root) as tmp:
        bare = Path(tmp)
        for name in build_web.CORE_FILES:
            shutil.copyfile(build_web.PYODIDE_DIR / name, bare / name)
        (bare / "index.html").write_text(BARE_PAGE)
        with serve(bare) as bare_url, serve(dist / "site") as site_url:
            # interleaved, so a change in machine load affects all three alike
            for _ in range(bench.runs):
                timings["bare"].append(_time_until(bench, bare_url + "index.html", "window.bareBootMs"))
                timings["single"].append(_time_until(bench, single.resolve().as_uri(), FIRST_RESULT))
                timings["site"].append(_time_until(bench, site_url + "index.html", FIRST_RESULT))
    bare_ms, single_ms, site_ms = (statistics.median(timings[k]) for k in ("bare", "single", "site"))
    core = build_web.core_size()
    size = single.stat().st_size
    return [
        ("bare Pyodide boot (localhost, main thread)", bare_ms / 1000, "s"),
        ("single file, file://: time to first result", single_ms / 1000, "s"),
        ("single file / bare boot", single_ms / bare_ms, "x"),
        ("folder build, localhost: time to first result", site_ms / 1000, "s"),
        ("folder build / bare boot", site_ms / bare_ms, "x"),
        ("Pyodide core files", core / 1e6, "MB"),
        ("single file size", size / 1e6, "MB"),
        ("single file / Pyodide core", size / core, "x"),
    ]


SECTIONS = {"page": page_section}


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description="nmrcalc benchmark figures")
    parser.add_argument("--runs", type=int, default=3, help="runs per timing; the median is printed")
    parser.add_argument("--only", choices=sorted(SECTIONS), action="append", help="run only these sections")
    args = parser.parse_args(argv)
    bench = Bench(args.runs)
    lines = [f"nmrcalc benchmark, {time.strftime('%Y-%m-%d %H:%M:%S %Z')}, median of {args.runs} runs"]
    try:
        for name in args.only or list(SECTIONS):
            lines.append(f"[{name}]")
            for label, value, unit in SECTIONS[name](bench):
                lines.append(f"  {label:<48} {value:10.3f} {unit}")
    finally:
        bench.close()
    text = "\n".join(lines)
    print(text)
    RESULTS.parent.mkdir(parents=True, exist_ok=True)
    RESULTS.write_text(text + "\n")
    return 0


if __name__ == "__main__":
    sys.exit(main())
