// nmrcalc Web Worker: boots Pyodide, unpacks the nmrcalc package and answers
// JSON requests through one fixed Python function, nmrcalc_bridge.bridge(text).
//
// Two boot modes, chosen by the page:
//   "site":   the worker was loaded from a web server; Pyodide and the package
//             zip are fetched from the same folder.
//   "inline": the worker was created from a data: URL by the single-file page
//             (file://, opaque origin). The two JS modules arrive as data: URLs,
//             every other asset arrives as base64 text (gzip-compressed where
//             marked) and is served to Pyodide from memory by a fetch shim.
// No Python source is ever built here: requests are passed as a string argument.

const APP_DIR = "/home/pyodide/nmrcalc_app";
let bridge = null;
let bootPromise = null;

function post(message) {
  self.postMessage(message);
}

function progress(stage, detail) {
  post({ type: "progress", stage, detail: detail || "" });
}

function base64ToBytes(text) {
  if (typeof Uint8Array.fromBase64 === "function") {
    return Uint8Array.fromBase64(text);
  }
  const binary = atob(text);
  const bytes = new Uint8Array(binary.length);
  for (let i = 0; i < binary.length; i += 1) bytes[i] = binary.charCodeAt(i);
  return bytes;
}

async function gunzip(bytes) {
  const stream = new Blob([bytes]).stream().pipeThrough(new DecompressionStream("gzip"));
  return new Uint8Array(await new Response(stream).arrayBuffer());
}

async function decodeAsset(asset) {
  const raw = base64ToBytes(asset.data);
  return asset.gzip ? gunzip(raw) : raw;
}

const MIME = {
  ".wasm": "application/wasm",
  ".zip": "application/zip",
  ".json": "application/json",
};

function mimeFor(name) {
  const dot = name.lastIndexOf(".");
  return MIME[name.slice(dot)] || "application/octet-stream";
}

// Serve the named assets from memory; refuse everything else, so the
// single-file page can never reach the network from here.
function installMemoryFetch(files) {
  self.fetch = async (input) => {
    const url = input instanceof Request ? input.url : String(input);
    const name = url.slice(url.lastIndexOf("/") + 1).split("?")[0];
    const bytes = files.get(name);
    if (!bytes) throw new TypeError(`offline page: no embedded asset named ${name}`);
    return new Response(bytes, { status: 200, headers: { "Content-Type": mimeFor(name) } });
  };
}

async function bootInline(message) {
  progress("decode", "Unpacking embedded files");
  const files = new Map();
  for (const [name, asset] of Object.entries(message.assets)) {
    files.set(name, await decodeAsset(asset));
  }
  installMemoryFetch(files);
  progress("runtime", "Starting the Python runtime");
  const { loadPyodide } = await import(message.modules["pyodide.mjs"]);
  const asm = await import(message.modules["pyodide.asm.mjs"]);
  const createPyodideModule = asm.default || asm.createPyodideModule;
  const pyodide = await loadPyodide({
    indexURL: message.indexURL,
    packageBaseUrl: message.indexURL,
    lockFileContents: new TextDecoder().decode(files.get("pyodide-lock.json")),
    createPyodideModule,
  });
  return { pyodide, packageZip: files.get("nmrcalc.zip") };
}

async function bootSite() {
  const base = new URL("./", self.location.href).href;
  progress("runtime", "Starting the Python runtime");
  const { loadPyodide } = await import(new URL("pyodide.mjs", base).href);
  const pyodide = await loadPyodide({ indexURL: base });
  progress("package", "Loading the nmrcalc package");
  const response = await fetch(new URL("nmrcalc.zip", base).href);
  if (!response.ok) throw new Error(`nmrcalc.zip: HTTP ${response.status}`);
  return { pyodide, packageZip: new Uint8Array(await response.arrayBuffer()) };
}

async function boot(message) {
  const started = performance.now();
  const { pyodide, packageZip } = message.mode === "inline" ? await bootInline(message) : await bootSite();
  progress("package", "Installing the nmrcalc package");
  pyodide.unpackArchive(packageZip, "zip", { extractDir: APP_DIR });
  pyodide.pyimport("sys").path.insert(0, APP_DIR);
  progress("import", "Importing nmrcalc");
  bridge = pyodide.pyimport("nmrcalc_bridge").bridge;
  post({ type: "ready", ms: performance.now() - started, python: pyodide.version });
}

function call(message) {
  let text;
  let last = -1;
  // Long calculations (spin systems) report a fraction done; pass it on at most every 2 %.
  const report = (fraction) => {
    if (fraction - last >= 0.02 || fraction >= 1) {
      last = fraction;
      post({ type: "call-progress", id: message.id, fraction });
    }
  };
  try {
    text = bridge(message.text, report);
  } catch (err) {
    if (err && err.pyodide_fatal_error) {
      // Python itself is gone (e.g. out of memory): let the error escape so the
      // page sees this worker fail and starts a fresh one.
      throw err;
    }
    text = JSON.stringify({
      ok: false,
      error: { code: "worker_error", message: String((err && err.message) || err), field: null },
    });
  }
  post({ type: "reply", id: message.id, text });
}

self.onmessage = (event) => {
  const message = event.data;
  if (message.type === "boot") {
    if (!bootPromise) {
      bootPromise = boot(message).catch((err) => {
        post({ type: "boot-error", message: String((err && err.stack) || err) });
      });
    }
  } else if (message.type === "call") {
    if (bridge) {
      call(message);
    } else {
      bootPromise.then(() => call(message));
    }
  } else {
    // A message this worker does not understand is a page bug: fail loudly
    // (the page restarts the worker) rather than leave a caller waiting.
    throw new Error(`nmrcalc worker: unknown message type ${String(message && message.type).slice(0, 40)}`);
  }
};
