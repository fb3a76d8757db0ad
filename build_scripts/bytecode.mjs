// Add CPython bytecode to the nmrcalc package zip, compiled by the Python that runs
// inside Pyodide (same version, same bytecode), so the page does not compile the
// package on every boot. The .pyc files are "unchecked-hash": valid whatever the
// dates of the unpacked files.
//
// Usage: node build_scripts/bytecode.mjs IN.zip OUT.zip APP_DIR
// APP_DIR is where the worker unpacks the zip (the code objects record that path).
// Build tooling only: the Python below is fixed text; the paths arrive as globals.
import { readFileSync, writeFileSync } from "node:fs";
import { fileURLToPath } from "node:url";

const pyodideDir = fileURLToPath(new URL("../node_modules/pyodide/", import.meta.url));
const { loadPyodide } = await import(new URL("../node_modules/pyodide/pyodide.mjs", import.meta.url).href);
const [input, output, appDir] = process.argv.slice(2);
if (!input || !output || !appDir) {
  console.error("usage: node build_scripts/bytecode.mjs IN.zip OUT.zip APP_DIR");
  process.exit(2);
}
const pyodide = await loadPyodide({ indexURL: pyodideDir, stdout: () => {}, stderr: (line) => console.error(line) });
pyodide.unpackArchive(new Uint8Array(readFileSync(input)), "zip", { extractDir: appDir });
pyodide.globals.set("app_dir", appDir);
pyodide.runPython(`
import compileall, os, py_compile, zipfile

if not compileall.compile_dir(app_dir, quiet=2, invalidation_mode=py_compile.PycInvalidationMode.UNCHECKED_HASH):
    raise SystemExit("bytecode compilation failed")
names = sorted(os.path.relpath(os.path.join(root, f), app_dir) for root, _, files in os.walk(app_dir) for f in files)
with zipfile.ZipFile("/bytecode-out.zip", "w") as archive:
    for name in names:
        with open(os.path.join(app_dir, name), "rb") as handle:
            archive.writestr(zipfile.ZipInfo(name, (2020, 1, 1, 0, 0, 0)), handle.read(), zipfile.ZIP_DEFLATED, 9)
`);
writeFileSync(output, pyodide.FS.readFile("/bytecode-out.zip"));
