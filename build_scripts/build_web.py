"""Build the nmrcalc web page from web/, the Pyodide npm package and the nmrcalc sources.

Outputs (default under dist/):

* ``site/``        a folder for any static host: index.html, css, js, worker.js,
                   the Pyodide core files, nmrcalc.zip, a service worker (sw.js)
                   that caches every file for offline use, and a web manifest.
* ``nmrcalc.html`` one self-contained file that works from file:// with no
                   network: every asset embedded (gzip + base64 where it helps).

Usage: python build_scripts/build_web.py [--out DIR] [--package-dir DIR]
Needs ``npm ci`` (or ``npm install``) first, for node_modules/pyodide and node_modules/.bin/esbuild.
"""

from __future__ import annotations

import argparse
import base64
import gzip
import hashlib
import io
import json
import shutil
import struct
import subprocess
import sys
import tempfile
import zipfile
import zlib
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
WEB = ROOT / "web"
PYODIDE_DIR = ROOT / "node_modules" / "pyodide"
CORE_FILES = ["pyodide.mjs", "pyodide.asm.mjs", "pyodide.asm.wasm", "python_stdlib.zip", "pyodide-lock.json"]
ZIP_DATE = (2020, 1, 1, 0, 0, 0)
APP_ZIP = "/home/pyodide/nmrcalc.zip"  # where web/worker.js puts nmrcalc.zip (imported from in place)

# Content-Security-Policy, set by <meta> (a static host or file:// gives no headers).
# Site: only the site's own files, plus the inline worker starter (web/boot.js) by its sha256 hash;
# img-src data: because the PNG plot export draws the plot's SVG, as a data: URL, into a canvas;
# 'wasm-unsafe-eval' is needed to compile Pyodide's wasm.
# Single file: inline style and script allowed by sha256 hash only; the worker and the two
# Pyodide JS modules must be data: URLs (a file:// page has an opaque origin, so blob: module
# workers do not start), hence script-src/worker-src data:; the worker fetches nothing
# (its fetch is answered from memory), hence connect-src 'none'.
# img-src data: in both: PNG export draws the plot's SVG (a data: URL) onto a canvas.
# Not possible by <meta>: frame-ancestors, report-uri/report-to, sandbox (header-only).
SITE_CSP = (
    "default-src 'self'; script-src 'self' 'wasm-unsafe-eval'; worker-src 'self'; "
    "connect-src 'self'; img-src 'self' data:; style-src 'self'; manifest-src 'self'; "
    "object-src 'none'; base-uri 'none'; form-action 'none'"
)


ESBUILD = ROOT / "node_modules" / ".bin" / "esbuild"  # npm `esbuild`, pinned in package-lock.json
PAGE_ENTRY = WEB / "js" / "main.js"


def page_script() -> str:
    """The page's ES modules (web/js/main.js and everything it imports) bundled by esbuild into one
    classic script (an IIFE: no module loading at run time, so the single file's inline script keeps
    working from file:// under its hash-only CSP). Strict mode, as in the modules, by a banner; no
    minifying, so the shipped script stays readable."""
    if not ESBUILD.exists():
        raise SystemExit(f"missing {ESBUILD}: run `npm ci` in {ROOT} first")
    run = subprocess.run(
        [str(ESBUILD), str(PAGE_ENTRY.relative_to(ROOT)), "--bundle", "--format=iife", "--charset=utf8",
         "--banner:js=\"use strict\";", "--log-level=warning"],
        capture_output=True, text=True, cwd=ROOT)
    if run.returncode != 0 or run.stderr.strip():
        raise SystemExit(f"esbuild could not bundle the page's modules:\n{run.stderr[-4000:]}")
    return run.stdout


def package_zip(package_dir: Path) -> bytes:
    """Every .py file of the package (as ``nmrcalc/...``) plus the worker bridge module, with bytecode."""
    return with_bytecode(source_zip(package_dir))


def with_bytecode(zip_bytes: bytes) -> bytes:
    """The zip plus bytecode beside each module, from Pyodide's own Python (build_scripts/bytecode.mjs, in Node)."""
    if f'"{APP_ZIP}"' not in (WEB / "worker.js").read_text():
        raise SystemExit(f"web/worker.js no longer imports the package from {APP_ZIP}: update APP_ZIP here")
    with tempfile.TemporaryDirectory() as tmp:
        source, compiled = Path(tmp) / "source.zip", Path(tmp) / "compiled.zip"
        source.write_bytes(zip_bytes)
        run = subprocess.run(["node", str(ROOT / "build_scripts" / "bytecode.mjs"), str(source), str(compiled), APP_ZIP],
                             capture_output=True, text=True)
        if run.returncode != 0:
            raise SystemExit(f"bytecode compilation in Pyodide failed:\n{run.stderr[-2000:]}")
        return compiled.read_bytes()


def source_zip(package_dir: Path) -> bytes:
    """Zip every .py file of the package (as ``nmrcalc/...``) plus the worker bridge module."""
    buffer = io.BytesIO()
    files = sorted(p for p in package_dir.rglob("*.py") if "__pycache__" not in p.parts)
    if not (package_dir / "__init__.py").exists():
        raise SystemExit(f"no Python package at {package_dir}")
    with zipfile.ZipFile(buffer, "w", zipfile.ZIP_DEFLATED, compresslevel=9) as archive:
        for path in files:
            name = "nmrcalc/" + path.relative_to(package_dir).as_posix()
            archive.writestr(zipfile.ZipInfo(name, ZIP_DATE), path.read_bytes(), zipfile.ZIP_DEFLATED)
        archive.writestr(zipfile.ZipInfo("nmrcalc_bridge.py", ZIP_DATE), (WEB / "bridge.py").read_bytes(), zipfile.ZIP_DEFLATED)
    return buffer.getvalue()


def package_version(package_dir: Path) -> str:
    for line in (package_dir / "__init__.py").read_text().splitlines():
        if line.startswith("__version__"):
            return line.split("=", 1)[1].strip().strip("\"'")
    return "dev"


def sha256_source(text: str) -> str:
    return "'sha256-" + base64.b64encode(hashlib.sha256(text.encode()).digest()).decode() + "'"


def png(size: int) -> bytes:
    """A small app icon: a teal rounded tile with a white three-line spectrum, as PNG bytes."""
    peaks = ((0.36, 0.5), (0.46, 0.5), (0.64, 1.0))

    def trace_y(x: float) -> float:
        width = 0.02
        height = sum(h * width**2 / ((x - c) ** 2 + width**2) for c, h in peaks)
        return 0.76 - 0.52 * height

    teal, white = bytes((29, 90, 99, 255)), b"\xff\xff\xff\xff"
    pixels = bytearray(size * size * 4)
    corner = 0.18
    for py in range(size):
        for px in range(size):
            x, y = (px + 0.5) / size, (py + 0.5) / size
            dx = max(corner - x, 0, x - (1 - corner))
            dy = max(corner - y, 0, y - (1 - corner))
            if dx * dx + dy * dy <= corner * corner:
                pixels[(py * size + px) * 4:(py * size + px) * 4 + 4] = teal
    radius = max(1.0, size * 0.014)

    def stamp(cx: float, cy: float) -> None:
        r = int(radius) + 1
        for py in range(max(0, int(cy) - r), min(size, int(cy) + r + 1)):
            for px in range(max(0, int(cx) - r), min(size, int(cx) + r + 1)):
                if (px + 0.5 - cx) ** 2 + (py + 0.5 - cy) ** 2 <= radius * radius:
                    pixels[(py * size + px) * 4:(py * size + px) * 4 + 4] = white

    steps = size * 12
    for i in range(steps + 1):
        x = 0.14 + 0.72 * i / steps
        stamp(x * size, trace_y(x) * size)
        stamp(x * size, 0.82 * size)
    rows = b"".join(b"\x00" + bytes(pixels[row * size * 4:(row + 1) * size * 4]) for row in range(size))

    def chunk(kind: bytes, data: bytes) -> bytes:
        return struct.pack(">I", len(data)) + kind + data + struct.pack(">I", zlib.crc32(kind + data))

    header = struct.pack(">IIBBBBB", size, size, 8, 6, 0, 0, 0)
    return b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", header) + chunk(b"IDAT", zlib.compress(rows, 9)) + chunk(b"IEND", b"")


def manifest() -> str:
    return json.dumps({
        "name": "nmrcalc — offline NMR calculator",
        "short_name": "nmrcalc",
        "description": "Larmor frequencies, isotopologue couplings, energies and receptivities, computed offline.",
        "start_url": "./index.html",
        "scope": "./",
        "display": "standalone",
        "background_color": "#f4f7f7",
        "theme_color": "#1d5a63",
        "icons": [
            {"src": "icons/icon-192.png", "sizes": "192x192", "type": "image/png"},
            {"src": "icons/icon-512.png", "sizes": "512x512", "type": "image/png"},
        ],
    }, indent=2)


def service_worker(files: list[str], version: str) -> str:
    """sw.js: cache every site file at install, answer from the cache first."""
    return (WEB / "sw.template.js").read_text().replace("@CACHE@", json.dumps(f"nmrcalc-{version}")).replace(
        "@FILES@", json.dumps(["./", *files], indent=2)
    )


def declarations_json(package_dir: Path) -> str:
    """Every op's declared parameters ({"op": "describe"}), for the panels' labels, units, hints and
    defaults; '<' escaped so the JSON cannot end its <script type="application/json"> block."""
    sys.path.insert(0, str(package_dir.resolve().parent))
    try:
        from nmrcalc.api import handle
        described = handle({"op": "describe"})["result"]
    finally:
        sys.path.pop(0)
    return json.dumps(described, ensure_ascii=False, separators=(",", ":")).replace("<", "\\u003c")


def fill(template: str, head: str, body: str, csp: str, version: str, params_json: str) -> str:
    return (template.replace("@CSP@", csp).replace("@VERSION@", version).replace("@HEAD@", head)
            .replace("@PARAMS@", params_json).replace("@BODY@", body))


def build_site(out: Path, package_bytes: bytes, version: str, params_json: str) -> None:
    if out.exists():
        shutil.rmtree(out)
    (out / "icons").mkdir(parents=True)
    for name in CORE_FILES:
        shutil.copyfile(PYODIDE_DIR / name, out / name)
    (out / "nmrcalc.zip").write_bytes(package_bytes)
    shutil.copyfile(WEB / "worker.js", out / "worker.js")
    shutil.copyfile(WEB / "css" / "app.css", out / "app.css")
    boot = (WEB / "boot.js").read_text()
    (out / "app.js").write_text(page_script())  # one file: one request, one parse
    (out / "icons" / "icon-192.png").write_bytes(png(192))
    (out / "icons" / "icon-512.png").write_bytes(png(512))
    (out / "manifest.webmanifest").write_text(manifest())
    head = "\n".join([
        # first, and inline: a script after a stylesheet or behind a fetch would wait; this one starts the worker
        f"<script>{boot}</script>",
        '<link rel="manifest" href="manifest.webmanifest">',
        '<link rel="icon" href="icons/icon-192.png" type="image/png">',
        '<link rel="apple-touch-icon" href="icons/icon-192.png">',
        '<link rel="stylesheet" href="app.css">',
    ])
    body = '<script defer src="app.js"></script>'
    csp = SITE_CSP.replace("script-src 'self'", f"script-src 'self' {sha256_source(boot)}")
    (out / "index.html").write_text(fill((WEB / "index.html").read_text(), head, body, csp, version, params_json))
    files = sorted(p.relative_to(out).as_posix() for p in out.rglob("*") if p.is_file())
    content = hashlib.sha256(b"".join((out / f).read_bytes() for f in files)).hexdigest()[:12]
    (out / "sw.js").write_text(service_worker(files, content))


def data_block(name: str, payload: bytes, kind: str, gzip_it: bool) -> str:
    data = gzip.compress(payload, 9, mtime=0) if gzip_it else payload
    text = base64.b64encode(data).decode()
    return (f'<script type="application/octet-stream" class="nmrcalc-asset" data-name="{name}" '
            f'data-kind="{kind}" data-gzip="{1 if gzip_it else 0}">{text}</script>')


def build_single(out_file: Path, package_bytes: bytes, version: str, params_json: str) -> None:
    css = (WEB / "css" / "app.css").read_text()
    script = page_script()
    # in the order the worker needs them; each is posted to it as soon as it is parsed
    files = [("pyodide-lock.json", "asset", True), ("pyodide.mjs", "module", False), ("pyodide.asm.mjs", "module", True),
             ("pyodide.asm.wasm", "asset", True), ("python_stdlib.zip", "asset", True), ("nmrcalc.zip", "asset", False)]
    payload = {name: (PYODIDE_DIR / name).read_bytes() for name, _, _ in files if name != "nmrcalc.zip"}
    payload["nmrcalc.zip"] = package_bytes
    boot, send = (WEB / "boot.js").read_text(), "NMRBoot.sendPrevious()"
    blocks = [
        f'<script type="application/octet-stream" id="nmrcalc-worker" data-assets="{" ".join(n for n, _, _ in files)}">'
        + base64.b64encode((WEB / "worker.js").read_bytes()).decode() + "</script>",
        f"<script>{boot}</script>",
        *(data_block(name, payload[name], kind, gz) + f"<script>{send}</script>" for name, kind, gz in files),
    ]
    hashes = " ".join(sha256_source(text) for text in (boot, send, script))
    csp = (
        f"default-src 'none'; script-src {hashes} data: 'wasm-unsafe-eval'; worker-src data:; "
        f"style-src {sha256_source(css)}; img-src data:; connect-src 'none'; object-src 'none'; "
        "base-uri 'none'; form-action 'none'"
    )
    head = '<link rel="icon" href="data:,">\n<style>' + css + "</style>"
    body = "\n".join(blocks) + "\n<script>" + script + "</script>"
    out_file.parent.mkdir(parents=True, exist_ok=True)
    out_file.write_text(fill((WEB / "index.html").read_text(), head, body, csp, version, params_json))


def core_size() -> int:
    """Total bytes of the Pyodide core files the page ships."""
    return sum((PYODIDE_DIR / name).stat().st_size for name in CORE_FILES)


def write_notices(folders: list[Path]) -> None:
    """THIRD-PARTY-NOTICES.txt (Pyodide's MPL-2.0, CPython's PSF licence) beside each built page."""
    pyodide_version = json.loads((PYODIDE_DIR / "package.json").read_text())["version"]
    text = (WEB / "THIRD-PARTY-NOTICES.txt").read_text().replace("@PYODIDE_VERSION@", pyodide_version)
    for folder in folders:
        (folder / "THIRD-PARTY-NOTICES.txt").write_text(text)


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", type=Path, default=ROOT / "dist", help="output folder (default dist/)")
    parser.add_argument("--package-dir", type=Path, default=ROOT / "nmrcalc", help="the nmrcalc package to pack")
    args = parser.parse_args(argv)
    missing = [name for name in CORE_FILES if not (PYODIDE_DIR / name).exists()]
    if missing:
        print(f"missing {', '.join(missing)} in {PYODIDE_DIR}: run `npm ci` in {ROOT} first", file=sys.stderr)
        return 1
    package_bytes = package_zip(args.package_dir)
    params_json = declarations_json(args.package_dir)
    version = package_version(args.package_dir)
    build_site(args.out / "site", package_bytes, version, params_json)
    build_single(args.out / "nmrcalc.html", package_bytes, version, params_json)
    write_notices([args.out, args.out / "site"])
    single = (args.out / "nmrcalc.html").stat().st_size
    print(f"nmrcalc {version}: {args.out / 'site'} and {args.out / 'nmrcalc.html'}")
    print(f"single file {single / 1e6:.2f} MB = {single / core_size():.3f} x Pyodide core ({core_size() / 1e6:.2f} MB)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
