"""Print nmrcalc's speed and size figures in one run, and write them to bench_results/latest.txt.

Sections are functions in SECTIONS, each taking the shared Bench and returning
(label, value, unit) rows; add new sections (multiplets, spin systems) to the list.

Page section (needs `npm ci` and chromium):
* bare Pyodide boot: a minimal page that only runs loadPyodide() from a localhost server;
* the page's time to first result: navigation start to the first computed value shown,
  for the single file from file:// and for the folder build on localhost (fresh context each run;
  at least BOOT_RUNS boots of each, interleaved), with median, min and max, each round's ratio to
  its bare boot, and how many boots started Python from the build's memory snapshot;
* single-file size against the Pyodide core files it embeds, and the snapshot's size.
* summary: each speed and size target with PASS or MISS (a report: the script exits 0 either way).

Compute sections (one fresh folder build in bench_results/tmp/web, one page on localhost;
page figures are timed in the page with performance.now around nmrcalcTest.api, worker round trip included):
* latency: median and max of a typical request per API op, page and CPython;
* multiplets: large first-order patterns, CPython and page, beside numpy.convolve peers;
* spins: 8 all-coupled spins-1/2 (page, CPython with and without numpy), the largest
  all-coupled system within 5 s in the page, and chains with equivalence factoring on and off;
* identify: the pattern finder on a 20-line multiplet, page and CPython.

Engines section (chromium, firefox-esr, WebKitGTK's MiniBrowser under Xvfb; see tests/browser/conftest.py):
* per engine, one run each: bare Pyodide boot, first result of both builds as ratios to it
  (and whether Python started from the snapshot);
* Python's wasm memory after each panel (reported by the worker with every reply).

Usage: python build_scripts/benchmark.py [--runs N] [--only page|engines|latency|multiplets|spins|identify|summary]
"""

from __future__ import annotations

import argparse
import functools
import http.server
import io
import os
import platform
import shutil
import statistics
import subprocess
import sys
import tempfile
import threading
import time
from contextlib import ExitStack, contextmanager, redirect_stdout
from fractions import Fraction
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT / "build_scripts"))
import build_web  # noqa: E402  (sibling script)
import webkit_driver  # noqa: E402  (sibling script)

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
        if getattr(self, "_firefox", None) is not None:
            self._firefox.close()
        if self._browser is not None:
            self._browser.close()
            self._playwright.stop()


def _in_fresh_page(bench: Bench, url: str, expression: str, timeout_s: float = 120):
    """The first value of ``expression`` (polled in url, opened in a fresh browser context) that is not null."""
    context = bench.browser().new_context()
    try:
        page = context.new_page()
        page.goto(url)
        deadline = time.monotonic() + timeout_s
        while time.monotonic() < deadline:
            value = page.evaluate(expression)
            if value is not None:
                return value
            time.sleep(0.05)
        raise TimeoutError(f"{url}: {expression} not set within {timeout_s} s")
    finally:
        context.close()


def _time_until(bench: Bench, url: str, expression: str) -> float:
    """Milliseconds from navigation start until ``expression`` (evaluated in the page) is a number."""
    return float(_in_fresh_page(bench, url, f"(() => {{ const v = {expression}; return typeof v === 'number' ? v : null; }})()"))


BOOT_RUNS = 9
FIRST_RESULT = "window.nmrcalcStatus && window.nmrcalcStatus.timings.firstResult"


@contextmanager
def bare_and_site(dist: Path):
    """(bare_url, site_url): a bare Pyodide boot page beside the core files, and the folder build,
    each served on localhost while the block runs."""
    tmp_root = ROOT / "bench_results" / "tmp"
    tmp_root.mkdir(parents=True, exist_ok=True)
    with tempfile.TemporaryDirectory(dir=tmp_root) as tmp:
        bare = Path(tmp)
        for name in build_web.CORE_FILES:
            shutil.copyfile(build_web.PYODIDE_DIR / name, bare / name)
        (bare / "index.html").write_text(BARE_PAGE)
        with serve(bare) as bare_url, serve(dist / "site") as site_url:
            yield bare_url, site_url


# one boot of the page: navigation start to the first result shown (first) and to the worker's
# ready message (ready), and how Python started ("snapshot" or "fresh")
PAGE_BOOT = """(() => { const s = window.nmrcalcStatus;
  if (!s || typeof s.timings.firstResult !== "number") return null;
  return { first: s.timings.firstResult, ready: s.timings.ready, start: s.start ? s.start.how : "unknown" }; })()"""


def _spread(values: list[float], unit: str = "s", scale: float = 1000) -> str:
    return f"median {statistics.median(values) / scale:.3f} {unit}, min {min(values) / scale:.3f}, max {max(values) / scale:.3f}"


def page_section(bench: Bench) -> list:
    """Boot: the page's time to first result in both builds beside a bare Pyodide boot (Chromium), and sizes."""
    dist = ROOT / "dist"
    if build_web.main(["--out", str(dist)]) != 0:
        raise SystemExit("build failed")
    single = dist / "nmrcalc.html"
    bare: list[float] = []
    boots: dict[str, list[dict]] = {"single": [], "site": []}
    with bare_and_site(dist) as (bare_url, site_url):
        # interleaved, so a change in machine load affects all three alike; at least
        # BOOT_RUNS boots each, since one boot varies by about a tenth on a 2-core machine
        for _ in range(max(bench.runs, BOOT_RUNS)):
            bare.append(_time_until(bench, bare_url + "index.html", "window.bareBootMs"))
            boots["single"].append(_in_fresh_page(bench, single.resolve().as_uri(), PAGE_BOOT))
            boots["site"].append(_in_fresh_page(bench, site_url + "index.html", PAGE_BOOT))
    bare_ms = statistics.median(bare)
    core = build_web.core_size()
    size = single.stat().st_size
    snapshot = (dist / "site" / build_web.SNAPSHOT).stat().st_size
    rows: list = [f"  {len(bare)} boots each, interleaved (bare, single file, folder, bare, ...); fresh browser context each",
                  f"  bare Pyodide boot (localhost, main thread: loadPyodide + one runPython): {_spread(bare)}"]
    for key, text in (("single", "single file, file://"), ("site", "folder build, localhost")):
        first = [b["first"] for b in boots[key]]
        ratio = statistics.median(first) / bare_ms
        per_round = [b["first"] / a for b, a in zip(boots[key], bare)]
        starts = sum(b["start"] == "snapshot" for b in boots[key])
        rows += [f"  {text}: time to first result: {_spread(first)}",
                 f"  {text}: worker ready: {_spread([b['ready'] for b in boots[key]])}",
                 (f"{text}: first result / bare boot (medians)", ratio, "x"),
                 f"    each round's ratio: min {min(per_round):.3f}, max {max(per_round):.3f};"
                 f" Python from the snapshot in {starts} of {len(first)} boots"]
        _target(bench, f"{key}: time to first result / bare boot", ratio, 1.00, "x", at_most=True)
    _target(bench, "single file size / Pyodide core files", size / core, 1.5, "x", at_most=True)
    return rows + [
        ("Pyodide core files", core / 1e6, "MB"),
        ("single file size", size / 1e6, "MB"),
        ("single file / Pyodide core", size / core, "x"),
        ("start-up snapshot (gzip; in the folder build)", snapshot / 1e6, "MB"),
        ("start-up snapshot in the single file (base64)", 4 * -(-snapshot // 3) / 1e6, "MB"),
    ]


# ---- compute sections: API latency, multiplets, spin systems, pattern finder ----
# Page figures are timed inside the page (performance.now around nmrcalcTest.api), so they
# include the worker round trip and JSON both ways; CPython figures time
# nmrcalc.api.handle (or the physics function) in this process.

PAGE_CALL = """async ([request, n, limitMs]) => {
  const times = [];
  for (let i = 0; i < n; i++) {
    let timer;
    const late = new Promise((resolve) => { timer = setTimeout(() => resolve(null), limitMs); });
    const t0 = performance.now();
    const response = await Promise.race([nmrcalcTest.api(request), late]);
    const ms = performance.now() - t0;
    clearTimeout(timer);
    if (response === null) { nmrcalcTest.cancel(); return { timeout: true, ms }; }
    if (!response.ok) return { error: response.error, ms };
    times.push(ms);
  }
  return { times };
}"""
TYPICAL_MULTIPLET = {"op": "multiplet", "observe": "1H", "spectrometer": "400 MHz", "spectrum": True,
                     "linewidth": "0.8 Hz", "groups": [
                         {"partner": "1H", "count": 1, "J": "15.9 Hz"}, {"partner": "1H", "count": 2, "J": "7.1 Hz"},
                         {"partner": "1H", "count": 3, "J": "6.8 Hz"}, {"partner": "19F", "count": 1, "J": "2.4 Hz"},
                         {"partner": "31P", "count": 1, "J": "1.1 Hz"}]}
TYPICAL_SPINS = {"op": "spin_system", "observe": "1H", "spectrometer": "400 MHz", "spectrum": True,
                 "spins": [{"nucleus": "1H", "shift": 7.10}, {"nucleus": "1H", "shift": 7.00},
                           {"nucleus": "1H", "shift": 6.2}],
                 "couplings": [{"between": [0, 1], "J": 8.0}, {"between": [0, 2], "J": 1.5},
                               {"between": [1, 2], "J": 3.0}]}
TYPICAL_OPS = [
    ("nuclide", {"op": "nuclide", "query": "13C"}),
    ("nuclides", {"op": "nuclides"}),
    ("frequency", {"op": "frequency", "nucleus": "13C", "spectrometer": "500 MHz"}),
    ("ppm_hz", {"op": "ppm_hz", "nucleus": "13C", "spectrometer": "500.13 MHz", "ppm": 77.16}),
    ("scale_coupling", {"op": "scale_coupling", "J": "14.3 Hz", "from": "1H", "to": "2H"}),
    ("energy", {"op": "energy", "nucleus": "1H", "spectrometer": "500 MHz", "temperature": "298 K"}),
    ("sensitivity", {"op": "sensitivity", "nucleus": "15N", "relative_to": "13C"}),
    ("multiplet (5 groups, spectrum)", TYPICAL_MULTIPLET),
    ("multiplet (5 groups, lines only)", {**TYPICAL_MULTIPLET, "spectrum": False}),
    ("spin_system (ABX, spectrum)", TYPICAL_SPINS),
    ("identify (quartet)", {"op": "identify", "observe": "1H", "spectrometer": "400 MHz", "tolerance": "0.5 Hz",
                            "lines": [{"position": f"{1234.5 + x} Hz", "intensity": y}
                                      for x, y in [(-10.5, 1), (-3.5, 3), (3.5, 3), (10.5, 1)]]}),
]
SPIN_LIMIT_S = 5.0
_STACK = ExitStack()  # the live page and its server, closed by main()
if str(ROOT) not in sys.path:
    sys.path.insert(1, str(ROOT))  # the nmrcalc package, for the CPython figures


def machine_line() -> str:
    """CPU model, cores, memory, Python and chromium versions, for the results header."""
    info = Path("/proc/cpuinfo").read_text() if Path("/proc/cpuinfo").exists() else ""
    cpu = next((l.split(":", 1)[1].strip() for l in info.splitlines() if l.startswith("model name")), "unknown CPU")
    mem = next((int(l.split()[1]) / 2**20 for l in Path("/proc/meminfo").read_text().splitlines()
                if l.startswith("MemTotal")), 0.0) if Path("/proc/meminfo").exists() else 0.0
    chromium = shutil.which("chromium") or "/usr/bin/chromium"
    try:
        version = subprocess.run([chromium, "--version"], capture_output=True, text=True, timeout=30).stdout.strip()
    except (OSError, subprocess.SubprocessError):
        version = "chromium version unknown"
    load = ("load average {:.2f} {:.2f} {:.2f} at start".format(*os.getloadavg()) if hasattr(os, "getloadavg")
            else "load unknown")
    return (f"machine: {cpu}, {os.cpu_count()} cores, {mem:.1f} GiB memory, {load}; "
            f"CPython {platform.python_version()}; {version or 'chromium version unknown'}")


def _target(bench: Bench, text: str, value: float, limit: float, unit: str, at_most: bool = False) -> None:
    """A figure and its limit for the summary: below ``limit`` (or at most ``limit``) passes."""
    bench.__dict__.setdefault("targets", []).append((text, value, limit, unit, at_most))


def _table(header: list[str], rows: list[list]) -> list[str]:
    """Rows as aligned text: first column left, the others right-aligned; floats to 3 significant figures."""
    cells = [header] + [[c if isinstance(c, str) else f"{c:.3g}" for c in row] for row in rows]
    widths = [max(len(r[k]) for r in cells) for k in range(len(header))]
    return ["  " + "  ".join(c.ljust(w) if k == 0 else c.rjust(w) for k, (c, w) in enumerate(zip(r, widths)))
            for r in cells]


def _live_page(bench: Bench):
    """One page of a fresh folder build on localhost, booted and idle; reused by all compute sections."""
    if "live_page" not in bench.__dict__:
        out = ROOT / "bench_results" / "tmp" / "web"
        with redirect_stdout(io.StringIO()):
            if build_web.main(["--out", str(out)]) != 0:
                raise SystemExit("build failed")
        url = _STACK.enter_context(serve(out / "site"))
        context = bench.browser().new_context()
        _STACK.callback(context.close)
        page = context.new_page()
        page.goto(url + "index.html")
        deadline = time.monotonic() + 180
        while not isinstance(page.evaluate(FIRST_RESULT), (int, float)):  # polled: the page's CSP forbids eval
            if time.monotonic() > deadline:
                raise TimeoutError("page: no first result within 180 s")
            time.sleep(0.1)
        time.sleep(2)  # let the first panel's own calls finish
        bench.live_page = page
    return bench.live_page


def _page_run(bench: Bench, request: dict, n: int, limit_s: float) -> dict:
    """PAGE_CALL in the live page; after a timeout (nmrcalcTest.cancel restarts the worker) wait for the
    new worker with an untimed small request, so the next figure does not include a boot."""
    out = _live_page(bench).evaluate(PAGE_CALL, [request, n, limit_s * 1000])
    if out.get("timeout"):
        settle = {**TYPICAL_SPINS, "spectrum": False}
        if "error" in _live_page(bench).evaluate(PAGE_CALL, [settle, 1, 180_000]):
            raise RuntimeError("page: the restarted worker did not answer")
    return out


def page_times(bench: Bench, request: dict, n: int, limit_s: float = 60.0) -> list[float] | None:
    """Milliseconds of n calls of ``request`` in the page; None when one passes limit_s (the worker is restarted)."""
    out = _page_run(bench, request, n, limit_s)
    if out.get("timeout"):
        return None
    if "error" in out:
        raise RuntimeError(f"page: {request['op']} failed: {out['error']}")
    return out["times"]


def page_call_or_refused(bench: Bench, request: dict, limit_s: float):
    """(seconds, None) for one call; (None, "timeout") or (None, error code) otherwise."""
    out = _page_run(bench, request, 1, limit_s)
    if out.get("timeout"):
        return None, f"> {limit_s:g} s"
    if "error" in out:
        return None, out["error"].get("code") or "error"
    return out["times"][0] / 1000, None


def fresh_page_median(bench: Bench, request: dict, limit_s: float):
    """page_call_or_refused's median over bench.runs requests that differ only by k × 1e-9 Hz in the first
    coupling, so that no run reuses the previous run's remembered weak-link split (spin_system._joined_split)."""
    times = []
    for k in range(bench.runs):
        couplings = [dict(request["couplings"][0], J=request["couplings"][0]["J"] + k * 1e-9),
                     *request["couplings"][1:]]
        seconds, why = page_call_or_refused(bench, {**request, "couplings": couplings}, limit_s)
        if why is not None:
            return None, why
        times.append(seconds)
    return statistics.median(times), None


def cpython_times(fn, n: int) -> list[float]:
    """Milliseconds of n calls of fn() in this process."""
    times = []
    for _ in range(n):
        t0 = time.perf_counter()
        fn()
        times.append((time.perf_counter() - t0) * 1000)
    return times


def _handled(request: dict):
    from nmrcalc.api import handle

    def call():
        r = handle(request)
        if not r["ok"]:
            raise RuntimeError(f"CPython: {request['op']} failed: {r['error']}")
        return r
    return call


def latency_section(bench: Bench) -> list:
    """Median and max latency of a typical request per op, in the page and on CPython."""
    n = 15
    rows, worst = [], 0.0
    for name, request in TYPICAL_OPS:
        page = page_times(bench, request, n)
        local = cpython_times(_handled(request), n)
        med = statistics.median(page)
        worst = max(worst, med)
        rows.append([name, med, max(page), statistics.median(local), med / statistics.median(local)])
        if request is TYPICAL_MULTIPLET:
            _target(bench, "typical multiplet (5 groups) recompute in the page, median", med, 50, "ms")
    _target(bench, "typical ops in the page, slowest median", worst, 50, "ms")
    return [f"  {n} calls per op; page = nmrcalcTest.api round trip timed in the page"] + _table(
        ["op", "page median ms", "page max ms", "CPython median ms", "page/CPython"], rows)


def _numpy_peer(groups, dtype):
    """Lines of first-order groups by numpy.convolve: each group's coefficients by repeated
    convolution with ones(2I + 1), then groups combined by outer sums of positions and outer
    products of weights, coinciding positions (to 1e-9 Hz) summed."""
    import numpy as np

    pos, weight = np.zeros(1), np.ones(1, dtype=dtype)
    for spin, count, J in groups:
        m = int(2 * spin) + 1
        coeff = np.ones(1, dtype=dtype)
        for _ in range(count):
            coeff = np.convolve(coeff, np.ones(m, dtype=dtype))
        offsets = (np.arange(len(coeff)) - (len(coeff) - 1) / 2) * J
        pos = np.add.outer(pos, offsets).ravel()
        weight = np.multiply.outer(weight, coeff).ravel()
    keys, where = np.unique(np.round(pos, 9), return_inverse=True)
    summed = np.zeros(len(keys), dtype=dtype)
    np.add.at(summed, where, weight)
    return keys, summed


def multiplet_section(bench: Bench) -> list:
    """Large first-order patterns: CPython physics, API op on CPython and in the page, numpy.convolve peers."""
    half, one, three_half, nine_half = Fraction(1, 2), Fraction(1), Fraction(3, 2), Fraction(9, 2)
    cases = [
        ("12 x I=1/2 + 6 x I=1 + 3 x I=3/2", [(half, 12, 7.1), (one, 6, 2.3), (three_half, 3, 0.9)]),
        ("20 x I=9/2", [(nine_half, 20, 3.0)]),
        ("50 x I=1/2", [(half, 50, 7.0)]),
    ]
    from nmrcalc.physics.multiplet import multiplet

    n = max(3, bench.runs)
    rows, ratio_rows = [], []
    for name, groups in cases:
        request = {"op": "multiplet", "observe": "1H", "spectrometer": "400 MHz",
                   "groups": [{"spin": str(s), "count": c, "J": J} for s, c, J in groups]}
        lines = len(multiplet(groups))
        physics = statistics.median(cpython_times(lambda groups=groups: multiplet(groups), n))
        api = statistics.median(cpython_times(_handled(request), n))
        page = statistics.median(page_times(bench, request, n))
        _numpy_peer(groups, "float64")  # warm-up: the numpy import and first-call costs are not timed
        f64 = statistics.median(cpython_times(lambda groups=groups: _numpy_peer(groups, "float64"), n))
        obj = statistics.median(cpython_times(lambda groups=groups: _numpy_peer(groups, object), n))
        rows.append([name, str(lines), physics, api, page, f64, obj])
        ratio_rows.append([name, page / api, physics / f64, physics / obj])
    return ([f"  median of {n}; times in ms; 'API' = the multiplet op (lines, tree, no spectrum)"]
            + _table(["pattern", "lines", "CPython physics", "CPython API", "page API",
                      "numpy f64", "numpy object"], rows)
            + ["  ratios (same run):"]
            + _table(["pattern", "page/CPython API", "physics/numpy f64", "physics/numpy object"], ratio_rows))


def _all_coupled(n: int) -> tuple[list, list]:
    """n distinct spins-1/2 between 1 and 3 ppm at 400 MHz, every pair coupled (2 to 9 Hz)."""
    spins = [{"nucleus": "1H", "shift": round(1.0 + 2.0 * k / max(n - 1, 1), 4)} for k in range(n)]
    couplings = [{"between": [i, j], "J": round(2.0 + 0.7 * ((7 * i + 3 * j) % 11), 2)}
                 for i in range(n) for j in range(i + 1, n)]
    return spins, couplings


def _chain(k: int) -> tuple[list, list]:
    """CH3-(CH2)k: a methyl and k methylene groups 0.05 ppm apart (second order at 400 MHz), vicinal J ≈ 7 Hz."""
    spins = [{"nucleus": "1H", "shift": 0.90, "count": 3}]
    spins += [{"nucleus": "1H", "shift": round(1.20 + 0.05 * g, 3), "count": 2} for g in range(k)]
    couplings = [{"between": [g, g + 1], "J": round(7.0 + 0.2 * g, 2)} for g in range(k)]
    return spins, couplings


def spin_section(bench: Bench) -> list:
    """Exact spectra of coupled spins: 8 all-coupled in the page and on CPython; largest within 5 s."""
    from nmrcalc.physics.spin_system import Site, simulate

    gauge = _gauge_s()
    base = {"op": "spin_system", "observe": "1H", "spectrometer": "400 MHz"}
    spins, couplings = _all_coupled(8)
    request = {**base, "spins": spins, "couplings": couplings}
    sites = [Site("1H", Fraction(1, 2), s["shift"] * 400.0, 1) for s in spins]
    pairs = [(c["between"][0], c["between"][1], c["J"]) for c in couplings]
    n = max(3, bench.runs)
    page = statistics.median(page_times(bench, request, n)) / 1000
    pure = statistics.median(cpython_times(lambda: simulate(sites, pairs, "1H", use_numpy=False), n)) / 1000
    try:
        fast = statistics.median(cpython_times(lambda: simulate(sites, pairs, "1H", use_numpy=True), n)) / 1000
    except Exception:  # numpy missing: report the pure figure only
        fast = float("nan")
    _target(bench, "8 coupled spins-1/2 in the page, median", page, 1.0, "s")
    out = [f"  8 spins-1/2, all 28 couplings non-zero (median of {n}; s)"]
    out += _table(["where", "time s", "ratio"], [
        ["page (spin_system op)", page, page / pure],
        ["CPython, pure Python", pure, 1.0],
        ["CPython, numpy.linalg.eigh", fast, fast / pure],
    ])
    out.append("  ratio = time / CPython pure Python")

    out.append(f"  largest all-coupled system within {SPIN_LIMIT_S:g} s in the page (one call each; s)")
    rows, best = [], None
    for size in range(4, 13):
        spins, couplings = _all_coupled(size)
        seconds, why = page_call_or_refused(bench, {**base, "spins": spins, "couplings": couplings}, SPIN_LIMIT_S)
        rows.append([f"n = {size}", seconds if why is None else why])
        if why is not None or seconds > SPIN_LIMIT_S:
            break
        best = size
    out += _table(["spins-1/2", "page s"], rows)
    out.append(f"  largest within {SPIN_LIMIT_S:g} s: n = {best}")

    out.append(f"  CH3-(CH2)k chains, equivalence factoring on vs off, page (one call each; s; stop past {SPIN_LIMIT_S:g} s)")
    rows, best = [], {True: None, False: None}
    going = {True: True, False: True}
    for k in range(1, 9):
        spins, couplings = _chain(k)
        row = [f"k = {k} ({3 + 2 * k} nuclei)"]
        for factor in (True, False):
            if not going[factor]:
                row.append("-")
                continue
            req = {**base, "spins": spins, "couplings": couplings, "factor_equivalence": factor}
            seconds, why = page_call_or_refused(bench, req, SPIN_LIMIT_S)
            row.append(seconds if why is None else why)
            if why is None and seconds <= SPIN_LIMIT_S:
                best[factor] = 3 + 2 * k
            else:
                going[factor] = False
        rows.append(row)
        if not any(going.values()):
            break
    out += _table(["chain", "factored s", "expanded s"], rows)
    out.append(f"  largest chain within {SPIN_LIMIT_S:g} s: factored {best[True]} nuclei"
               + (" (still under the limit at k = 8, the largest tried)" if going[True] else "")
               + f", expanded {best[False]} nuclei")
    return [_gauge("at start", gauge)] + out + _molecule_rows(bench, base) + [_gauge("at end", _gauge_s())]


def _gauge(when: str, seconds: float) -> str:
    """One line: a fixed CPython workload's time (``_gauge_s``), so that runs on a machine of varying speed compare."""
    return f"  machine gauge {when}: 10^7 CPython additions in {seconds:.3f} s"


def _gauge_s() -> float:
    """Seconds of a fixed pure-CPython loop (10^7 integer additions), the best of three."""
    best = float("inf")
    for _ in range(3):
        t0, total = time.perf_counter(), 0
        for i in range(10 ** 7):
            total += i
        best = min(best, time.perf_counter() - t0)
    return best


def _phenyl_isopentyl() -> tuple[list, list]:
    """Made-up (3-methylbutyl)phenyl fragment, 16 nuclei in two clusters joined by weak links.

    Ring (5 H): H-2/H-6 and H-3/H-5 chemically but not magnetically equivalent (AA'BB'C), so five
    separate spins; chain (11 H): CH2 (H-1'), CH2 (H-2'), CH (H-3'), two equivalent CH3 (H-4', 6 H);
    benzylic 0.6 Hz couplings H-1'/H-2,6 are the weak links at 400 MHz (|Δν| = 1.8 kHz).
    """
    ring = ((7.17, "H-2"), (7.17, "H-6"), (7.27, "H-3"), (7.27, "H-5"), (7.16, "H-4"))
    spins = [{"nucleus": "1H", "shift": s, "label": n} for s, n in ring]
    spins += [{"nucleus": "1H", "shift": s, "count": c, "label": n} for s, c, n in
              ((2.62, 2, "H-1'"), (1.50, 2, "H-2'"), (1.60, 1, "H-3'"), (0.94, 6, "H-4'"))]
    J = [(("H-2", "H-3"), 7.6), (("H-6", "H-5"), 7.6), (("H-3", "H-4"), 7.4), (("H-5", "H-4"), 7.4),
         (("H-2", "H-4"), 1.2), (("H-6", "H-4"), 1.2), (("H-2", "H-6"), 1.8), (("H-3", "H-5"), 1.4),
         (("H-2", "H-5"), 0.6), (("H-6", "H-3"), 0.6), (("H-1'", "H-2'"), 7.9), (("H-2'", "H-3'"), 6.8),
         (("H-3'", "H-4'"), 6.6), (("H-2", "H-1'"), 0.6), (("H-6", "H-1'"), 0.6)]
    return spins, [{"between": list(p), "J": j} for p, j in J]


def _numpy_eigh_s(request: dict) -> float:
    """Seconds numpy.linalg.eigh takes for every block the request's spin system diagonalizes (CPython)."""
    import numpy

    from nmrcalc.api import handle
    from nmrcalc.physics import spin_system

    blocks: list = []
    solver = spin_system._solver

    def recording(use_numpy):
        def solve(H):
            blocks.append(numpy.array(H, dtype=float))
            return solver(True)(H)
        return solve
    spin_system._solver = recording
    spin_system._joined_split.cache_clear()  # the weak-link split's own eigensolves count too
    try:
        handle({**request, "spectrum": False})
    finally:
        spin_system._solver = solver
    t0 = time.perf_counter()
    for H in blocks:
        numpy.linalg.eigh(H)
    return time.perf_counter() - t0


def _molecule_rows(bench: Bench, base: dict) -> list:
    """16-nucleus two-cluster molecule (weak links) and 10 all-coupled spins: page, CPython pure, numpy."""
    from nmrcalc.physics import spin_system

    out = [f"  issue 14 targets, with the sampled spectrum (0.5 Hz lines): page (median of {bench.runs}) vs CPython,"
           " one run (s)"]
    rows = []
    for name, (spins, couplings), limit in (("phenyl + 3-methylbutyl, 16 nuclei, weak links", _phenyl_isopentyl(), 1.0),
                                            ("10 all-coupled spins-1/2, exact", _all_coupled(10), 5.0)):
        req = {**base, "spins": spins, "couplings": couplings, "spectrum": True, "linewidth": "0.5 Hz"}
        page, why = fresh_page_median(bench, req, 3 * limit)
        times, cpu = [], 0.0
        for use_numpy in (False, True):
            solver = spin_system._solver
            spin_system._solver = lambda _u, use_numpy=use_numpy, solver=solver: solver(use_numpy)
            spin_system._joined_split.cache_clear()  # a fresh request: the weak-link split is worked out again
            try:
                c0 = time.process_time()
                times.append(statistics.median(cpython_times(_handled(req), 1)) / 1000)
                cpu = cpu or time.process_time() - c0
            finally:
                spin_system._solver = solver
        eigh_s = _numpy_eigh_s(req)
        nuclei = sum(s.get("count", 1) for s in spins)
        rows.append([f"{name} ({nuclei})", page if why is None else why, times[0], cpu, times[1], eigh_s,
                     (page / times[0]) if why is None else "-", (page / times[1]) if why is None else "-",
                     "PASS" if why is None and page < limit else "MISS", f"< {limit:g}"])
        if why is None:
            _target(bench, f"{name} in the page", page, limit, "s")
    out += _table(["system", "page s", "CPython pure s", "pure CPU s", "CPython numpy s", "numpy eigh only s",
                   "page/pure", "page/numpy", "target", "limit s"], rows)
    out.append("  CPython numpy = the same op with numpy.linalg.eigh for the blocks; eigh only = those eigh calls alone;"
               " pure CPU s = the pure run's process CPU time (less sensitive to a loaded machine than wall time)")
    from nmrcalc.api import handle

    spins, couplings = _phenyl_isopentyl()
    split = handle({**base, "spins": spins, "couplings": couplings})["result"]["clusters"]
    out.append("  16-nucleus molecule, stated line error per cluster (error_Hz, spin_system.clusters): "
               + "; ".join(f"{c['method']} {c['error_Hz']:.3g} Hz" for c in split))
    return out


def _twenty_lines() -> list[dict]:
    """A doublet of doublets of quintets (J 12.0, 7.3, 2.1 Hz): 2 x 2 x 5 = 20 distinct lines at 1000 Hz."""
    from nmrcalc.physics.multiplet import multiplet

    half = Fraction(1, 2)
    sticks = multiplet([(half, 1, 12.0), (half, 1, 7.3), (half, 4, 2.1)])
    if len(sticks) != 20:
        raise RuntimeError(f"expected 20 lines, got {len(sticks)}")
    top = max(w for _, w in sticks)
    return [{"position": f"{1000.0 + x:.4f} Hz", "intensity": round(w / top, 6)} for x, w in sticks]


def identify_section(bench: Bench) -> list:
    """The pattern finder (identify op) on a 20-line multiplet, in the page and on CPython."""
    request = {"op": "identify", "observe": "1H", "spectrometer": "400 MHz", "tolerance": "0.3 Hz",
               "lines": _twenty_lines()}
    n = max(3, bench.runs)
    page = statistics.median(page_times(bench, request, n)) / 1000
    local = statistics.median(cpython_times(_handled(request), n)) / 1000
    top = _handled(request)()["result"]["candidates"]
    label = top[0]["label"] if top else "none"
    _target(bench, "pattern finder, 20-line multiplet in the page, median", page, 0.5, "s")
    return [f"  d of d of quintet (20 lines), median of {n}; top candidate: {label}"] + _table(
        ["where", "time s", "ratio"], [["page (identify op)", page, page / local], ["CPython (identify op)", local, 1.0]])


class _EngineDriver:
    """One engine for the engines section: open(url), js(body), close(); chromium and firefox through
    Playwright, WebKit (WebKitGTK's MiniBrowser) through selenium under a private Xvfb display."""

    def __init__(self, bench: Bench, engine: str):
        self.engine, self.page, self.session, self.webkit = engine, None, None, None
        if engine == "webkit":
            self.webkit = webkit_driver.WebKitDriver().start()
        else:
            bench.browser()  # starts Playwright
            if engine == "firefox":
                if getattr(bench, "_firefox", None) is None:
                    bench._firefox = bench._playwright.firefox.launch(
                        channel="moz-firefox", executable_path=shutil.which("firefox-esr"), headless=True)
                self.browser = bench._firefox
            else:
                self.browser = bench.browser()

    def open(self, url: str):
        self.close_page()
        if self.engine == "webkit":
            self.session = self.webkit.new_session()
            self.session.get(url)
        else:
            self.context = self.browser.new_context()
            self.page = self.context.new_page()
            self.page.goto(url)

    def js(self, body: str):
        if self.engine == "webkit":
            return self.session.execute_script(body)
        return self.page.evaluate(f"() => {{ {body} }}")

    def close_page(self):
        if self.session is not None:
            self.session.quit()
            self.session = None
        if self.page is not None:
            self.context.close()
            self.page = None

    def close(self):
        self.close_page()
        if self.webkit is not None:
            self.webkit.stop()


def _engine_time(driver: _EngineDriver, url: str, expression: str, timeout_s: float = 180) -> float:
    driver.open(url)
    deadline = time.monotonic() + timeout_s
    while time.monotonic() < deadline:
        value = driver.js(f"return {expression}")
        if isinstance(value, (int, float)):
            return float(value)
        time.sleep(0.1)
    raise TimeoutError(f"{driver.engine} {url}: {expression} not set within {timeout_s} s")


START_JS = "return window.nmrcalcStatus.start ? 'from ' + window.nmrcalcStatus.start.how : 'start unknown'"
IDLE_JS = "window.nmrcalcStatus.pending === 0 && [...document.querySelectorAll('.busy')].every(b => b.hidden)"


def _wait_js(driver: _EngineDriver, expression: str, timeout_s: float = 120) -> None:
    deadline = time.monotonic() + timeout_s
    while not driver.js(f"return {expression}"):
        if time.monotonic() > deadline:
            raise TimeoutError(f"{expression} not true within {timeout_s} s")
        time.sleep(0.1)


def _memory_per_panel(driver: _EngineDriver, url: str) -> list:
    """Python's wasm memory after each panel's examples are computed, in walk order (it only grows,
    so each figure is the peak so far; the first panel's includes the boot)."""
    driver.open(url)
    _wait_js(driver, "window.nmrcalcStatus && window.nmrcalcStatus.state === 'ready'")
    rows = []
    for tab, panel in driver.js("return [...document.querySelectorAll('[role=tab]')].map(t => [t.id, t.getAttribute('aria-controls')])"):
        count = driver.js(f"""document.getElementById('{tab}').click();
            const p = document.getElementById('{panel}'); const preset = p.querySelector('.preset'); if (preset) preset.click();
            return p.querySelectorAll('form button[type=submit]').length""")
        _wait_js(driver, IDLE_JS)
        for index in range(count):
            driver.js(f"document.getElementById('{panel}').querySelectorAll('form button[type=submit]')[{index}].click()")
            time.sleep(0.05)
            _wait_js(driver, IDLE_JS)
        rows.append((f"wasm memory after the {tab.removeprefix('tab-')} panel", (driver.js("return window.nmrcalcStatus.wasmBytes") or 0) / 2**20, "MiB"))
    return rows


def engines_section(bench: Bench) -> list:
    """Per engine, one run: bare Pyodide boot, and the first result of each build, as ratios to it;
    then Python's wasm memory per panel (Chromium; the wasm and so its memory are the same in every engine)."""
    dist = ROOT / "dist"
    if build_web.main(["--out", str(dist)]) != 0:
        raise SystemExit("build failed")
    rows = ["  one run per engine (not a median): boots vary by a tenth or more on this machine"]
    memory: list = []
    with bare_and_site(dist) as (bare_url, site_url):
        for engine in ("chromium", "firefox", "webkit"):
            driver = _EngineDriver(bench, engine)
            try:
                bare_ms = _engine_time(driver, bare_url + "index.html", "window.bareBootMs")
                single_ms = _engine_time(driver, (dist / "nmrcalc.html").resolve().as_uri(), FIRST_RESULT)
                single_start = driver.js(START_JS)
                site_ms = _engine_time(driver, site_url + "index.html", FIRST_RESULT)
                site_start = driver.js(START_JS)
                rows += [(f"{engine}: bare Pyodide boot", bare_ms / 1000, "s"),
                         (f"{engine}: single file first result / bare boot", single_ms / bare_ms, "x"),
                         (f"{engine}: folder build first result / bare boot", site_ms / bare_ms, "x"),
                         f"    {engine}: first result {single_ms / 1000:.3f} s (single file, Python {single_start}),"
                         f" {site_ms / 1000:.3f} s (folder build, Python {site_start})"]
                if engine == "chromium":
                    memory = _memory_per_panel(driver, site_url + "index.html")
            except Exception as exc:  # one engine that fails must not hide the others
                rows.append(f"  {engine}: FAILED: {type(exc).__name__}: {exc}")
            finally:
                driver.close()
    return rows + ["  Python's wasm memory (peak so far; the walk runs each panel's first example and buttons):"] + memory


def _big_spectrum_text(n: int = 262_144) -> str:
    """An invented 256k-point 1H spectrum (Lorentzians on noise) as JCAMP-DX DIFDUP, by the tests' writer."""
    import random
    sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))
    from jcamp_writer import write_xydata
    rng = random.Random(5)
    centres = [n * f for f in (0.1, 0.3, 0.31, 0.55, 0.8)]
    ys = [round(sum(20000 / (1 + ((k - c) / 3) ** 2) for c in centres)) + rng.randint(-20, 20) for k in range(n)]
    return write_xydata(ys, "DIFDUP", first_x=6000.0, last_x=-1000.0, x_factor=7000.0 / (n - 1), per_line=72)


def spectrum_section(bench: Bench) -> list:
    """read_spectrum of a 256k-point JCAMP-DX file (DIFDUP), then pick_peaks and integrate on its 256k
    ordinates, in the page and on CPython (wall time, and CPython's CPU time: the machine is shared)."""
    from nmrcalc.api import handle

    request = {"op": "read_spectrum", "text": _big_spectrum_text(), "filename": "invented-256k.jdx"}
    read = handle(request)["result"]
    trace = {"first_x": read["first_x"], "last_x": read["last_x"], "x_unit": read["x_unit"], "y": read["y"],
             "observe_MHz": 400.0}
    span = read["first_x"] - read["last_x"]
    cases = [("read_spectrum (file text in, 256k y out)", request),
             ("pick_peaks (256k y in)", {"op": "pick_peaks", **trace, "threshold": "5 sigma"}),
             ("integrate, 4 regions (256k y in)", {"op": "integrate", **trace, "regions": [
                 {"from": read["first_x"] - f * span, "to": read["first_x"] - (f + 0.05) * span}
                 for f in (0.08, 0.28, 0.53, 0.78)]})]
    n = max(3, bench.runs)
    rows = []
    for label, req in cases:
        page = statistics.median(page_times(bench, req, n)) / 1000
        local = statistics.median(cpython_times(_handled(req), n)) / 1000
        cpu = []
        for _ in range(n):
            t0 = time.process_time()
            handle(req)
            cpu.append(time.process_time() - t0)
        rows.append([label, page, local, statistics.median(cpu), page / local])
        if req is request:
            _target(bench, "256k-point JCAMP-DX spectrum read in the page, median", page, 1.0, "s")
    return [f"  {len(request['text']) / 1e6:.2f} MB of text, 262144 points, median of {n}; "
            f"load average {os.getloadavg()[0]:.1f} at the end"] + _table(
        ["op", "page s", "CPython s", "CPython CPU s", "page / CPython"], rows)


def summary_section(bench: Bench) -> list:
    """Each speed target collected by the sections run before, with PASS or MISS (a report only)."""
    targets = bench.__dict__.get("targets", [])
    if not targets:
        return ["  no targets measured (run the page, latency, multiplets, spins or identify sections)"]
    return _table(["target", "measured", "limit", "result"],
                  [[text, f"{value:.3g} {unit}", f"{'<=' if at_most else '<'} {limit:g} {unit}",
                    "PASS" if (value <= limit if at_most else value < limit) else "MISS"]
                   for text, value, limit, unit, at_most in targets])


SECTIONS = {"page": page_section, "engines": engines_section, "latency": latency_section, "multiplets": multiplet_section,
            "spins": spin_section, "identify": identify_section, "spectrum": spectrum_section,
            "summary": summary_section}


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description="nmrcalc benchmark figures")
    parser.add_argument("--runs", type=int, default=3, help="runs per timing; the median is printed")
    parser.add_argument("--only", choices=sorted(SECTIONS), action="append", help="run only these sections")
    args = parser.parse_args(argv)
    bench = Bench(args.runs)
    lines = [f"nmrcalc benchmark, {time.strftime('%Y-%m-%d %H:%M:%S %Z')}, median of {args.runs} runs", machine_line()]
    failed = []
    try:
        for name in args.only or list(SECTIONS):
            lines.append(f"[{name}]")
            began = time.monotonic()
            try:
                rows = SECTIONS[name](bench)
            except Exception as exc:  # one broken section must not hide the others' figures
                failed.append(name)
                rows = [f"  FAILED: {type(exc).__name__}: {exc}"]
            for row in rows:  # (label, value, unit) or a preformatted line
                lines.append(row if isinstance(row, str) else f"  {row[0]:<48} {row[1]:10.3f} {row[2]}")
            load = "load average {:.2f} {:.2f} {:.2f}".format(*os.getloadavg()) if hasattr(os, "getloadavg") else "load unknown"
            lines.append(f"  (section took {time.monotonic() - began:.0f} s; {load} at its end)")
            print(f"benchmark: {name} {'FAILED' if name in failed else 'done'}", file=sys.stderr, flush=True)
    finally:
        _STACK.close()
        bench.close()
    text = "\n".join(lines)
    print(text)
    RESULTS.parent.mkdir(parents=True, exist_ok=True)
    RESULTS.write_text(text + "\n")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
