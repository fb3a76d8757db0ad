// Make the page's Pyodide memory snapshot at build time: Python started, the nmrcalc package
// imported from its zip and the first panel's requests answered once (tables parsed, modules
// imported), then Python's whole wasm memory saved. The page's worker restores it instead of
// starting Python and importing the package (web/worker.js); any failure there falls back to a
// normal start. The snapshot only fits the exact pyodide.asm.wasm it was made with (Pyodide checks
// its build id) and the exact package zip (the worker writes the same bytes to APP_ZIP).
//
// Before writing, the snapshot is restored here in a second Pyodide and must give the same
// answers to the same requests, so a snapshot that does not work is never shipped.
//
// Usage: node build_scripts/snapshot.mjs PACKAGE.zip OUT.snapshot APP_ZIP REQUESTS.json
// REQUESTS.json: a JSON list of request texts (each must answer "ok": true).
// Build tooling only: the Python below is fixed text; the paths and requests arrive as globals.
import { readFileSync, writeFileSync } from "node:fs";
import { fileURLToPath } from "node:url";

const pyodideDir = fileURLToPath(new URL("../node_modules/pyodide/", import.meta.url));
const { loadPyodide } = await import(new URL("../node_modules/pyodide/pyodide.mjs", import.meta.url).href);
const [packagePath, output, appZip, requestsPath] = process.argv.slice(2);
if (!packagePath || !output || !appZip || !requestsPath) {
  console.error("usage: node build_scripts/snapshot.mjs PACKAGE.zip OUT.snapshot APP_ZIP REQUESTS.json");
  process.exit(2);
}
const packageZip = new Uint8Array(readFileSync(packagePath));
const requests = JSON.parse(readFileSync(requestsPath, "utf8"));
const quiet = { stdout: () => {}, stderr: (line) => console.error(line) };

// Each request answered by the bridge, as the worker calls it.
function answers(pyodide) {
  const bridge = pyodide.pyimport("nmrcalc_bridge").bridge;
  const texts = requests.map((text) => bridge(text));
  bridge.destroy();
  return texts;
}

const maker = await loadPyodide({ indexURL: pyodideDir, _makeSnapshot: true, ...quiet });
const heapAtStart = maker._module.HEAP8.length;
maker.FS.writeFile(appZip, packageZip);
maker.globals.set("app_zip", appZip);
maker.runPython(`
import sys
sys.path.insert(0, app_zip)
import nmrcalc_bridge
`);
maker.globals.delete("app_zip");
const expected = answers(maker);
for (const [index, text] of expected.entries()) {
  if (JSON.parse(text).ok !== true) {
    console.error(`warm-up request ${index} failed: ${text.slice(0, 400)}`);
    process.exit(1);
  }
}
maker.runPython("import gc; gc.collect()");
const snapshot = maker.makeMemorySnapshot();
// Pyodide 314 restores into the heap size the wasm declares (INITIAL_MEMORY is not read), so a
// snapshot of a heap that grew would not fit in the browser.
if (maker._module.HEAP8.length !== heapAtStart) {
  console.error(`the wasm heap grew from ${heapAtStart} to ${maker._module.HEAP8.length} bytes before the snapshot: it could not be restored`);
  process.exit(1);
}

const restored = await loadPyodide({ indexURL: pyodideDir, _loadSnapshot: snapshot, ...quiet });
restored.FS.writeFile(appZip, packageZip);
const again = answers(restored);
const differing = again.findIndex((text, index) => text !== expected[index]);
if (differing >= 0) {
  console.error(`the restored snapshot answers request ${differing} differently:\n${again[differing].slice(0, 400)}\n${expected[differing].slice(0, 400)}`);
  process.exit(1);
}
writeFileSync(output, snapshot);
