// Add CPython bytecode to the nmrcalc package zip, compiled by the Python that runs
// inside Pyodide (same version, same bytecode), so the page does not compile the
// package on every boot. Each x.pyc sits beside its x.py, where Python's zip
// importer looks; they are "unchecked-hash" .pyc files (no date comparison).
//
// Usage: node build_scripts/bytecode.mjs IN.zip OUT.zip APP_ZIP
// APP_ZIP is where the worker puts the zip (the code objects record that path).
// Build tooling only: the Python below is fixed text; the paths arrive as globals.
const WORK_DIR = "/tmp/nmrcalc-package";
import { readFileSync, writeFileSync } from "node:fs";
import { fileURLToPath } from "node:url";

const pyodideDir = fileURLToPath(new URL("../node_modules/pyodide/", import.meta.url));
const { loadPyodide } = await import(new URL("../node_modules/pyodide/pyodide.mjs", import.meta.url).href);
const [input, output, appZip] = process.argv.slice(2);
if (!input || !output || !appZip) {
  console.error("usage: node build_scripts/bytecode.mjs IN.zip OUT.zip APP_ZIP");
  process.exit(2);
}
const pyodide = await loadPyodide({ indexURL: pyodideDir, stdout: () => {}, stderr: (line) => console.error(line) });
pyodide.unpackArchive(new Uint8Array(readFileSync(input)), "zip", { extractDir: WORK_DIR });
pyodide.globals.set("work_dir", WORK_DIR);
pyodide.globals.set("app_zip", appZip);
pyodide.runPython(`
import compileall, os, py_compile, zipfile

if not compileall.compile_dir(work_dir, quiet=2, ddir=app_zip, legacy=True,
                              invalidation_mode=py_compile.PycInvalidationMode.UNCHECKED_HASH):
    raise SystemExit("bytecode compilation failed")
names = sorted(os.path.relpath(os.path.join(root, f), work_dir) for root, _, files in os.walk(work_dir) for f in files)
with zipfile.ZipFile("/bytecode-out.zip", "w") as archive:
    for name in names:
        with open(os.path.join(work_dir, name), "rb") as handle:
            archive.writestr(zipfile.ZipInfo(name, (2020, 1, 1, 0, 0, 0)), handle.read(), zipfile.ZIP_DEFLATED, 9)
`);
writeFileSync(output, pyodide.FS.readFile("/bytecode-out.zip"));
