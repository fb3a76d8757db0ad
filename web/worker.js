// nmrcalc Web Worker: boots Pyodide, imports the nmrcalc package from its zip and answers
// JSON requests through one fixed Python function, nmrcalc_bridge.bridge(text).
//
// Two boot modes, chosen by the page (web/boot.js):
//   "site":   the worker was loaded from a web server; Pyodide and the package
//             zip are fetched from the same folder.
//   "inline": the worker was created from a data: URL by the single-file page
//             (file://, opaque origin). The boot message names the embedded
//             files; each then arrives in its own "asset" message as base64 text
//             (gzip-compressed where marked), as soon as the page has parsed it.
//             The two JS modules are imported as data: URLs; the other files are
//             served to Pyodide from memory by a fetch shim that waits for them.
// In both, Python starts from a memory snapshot made at build time (python-snapshot.bin:
// Python with nmrcalc imported and the first panel's requests answered once, by
// build_scripts/snapshot.mjs) instead of starting up and importing the package. A snapshot
// that is missing, unreadable or refused by Pyodide is reported and Python starts the
// normal way; the ready message says which start it was ("snapshot" or "fresh").
// No Python source is ever built here: requests are passed as a string argument.

const APP_ZIP = "/home/pyodide/nmrcalc.zip";  // imported from in place (zipimport), not unpacked
let bridge = null;
let wasmBytes = () => 0;  // the size of Python's wasm memory (it only grows), sent with each reply
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

// Bytes with gzip undone, as a stream. The stream is made from the bytes themselves,
// not from a Blob: WebKit cannot read a Blob's stream in a worker of a file:// page
// (NotReadableError), while a plain ReadableStream works everywhere.
function gunzipStream(raw) {
  const packed = new ReadableStream({ start(controller) { controller.enqueue(raw); controller.close(); } });
  return packed.pipeThrough(new DecompressionStream("gzip"));
}

// The file's bytes as a stream (gzip undone on the way), so Pyodide can compile
// the wasm while it is still being unpacked.
function assetBody(asset) {
  const raw = base64ToBytes(asset.data);
  return asset.gzip ? gunzipStream(raw) : raw;
}

async function assetBytes(asset) {
  return new Uint8Array(await new Response(assetBody(asset)).arrayBuffer());
}

function bytesToBase64(bytes) {
  if (typeof bytes.toBase64 === "function") return bytes.toBase64();
  let binary = "";
  for (let i = 0; i < bytes.length; i += 0x8000) binary += String.fromCharCode(...bytes.subarray(i, i + 0x8000));
  return btoa(binary);
}

// A JS module file as a data: URL (re-encoded when it came gzip-compressed).
async function moduleUrl(asset) {
  const base64 = asset.gzip ? bytesToBase64(await assetBytes(asset)) : asset.data;
  return `data:text/javascript;base64,${base64}`;
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

// Embedded files by name: a promise of each "asset" message, whenever it comes.
const arrivals = new Map();
function arrival(name) {
  if (!arrivals.has(name)) {
    let resolve;
    const promise = new Promise((done) => { resolve = done; });
    arrivals.set(name, { promise, resolve });
  }
  return arrivals.get(name);
}

// Serve the named files from memory (waiting for any still on its way); refuse
// everything else, so the single-file page can never reach the network from here.
function installMemoryFetch(names) {
  self.fetch = async (input) => {
    const url = input instanceof Request ? input.url : String(input);
    const name = url.slice(url.lastIndexOf("/") + 1).split("?")[0];
    if (!names.has(name)) throw new TypeError(`offline page: no embedded asset named ${name}`);
    const body = assetBody(await arrival(name).promise);
    return new Response(body, { status: 200, headers: { "Content-Type": mimeFor(name) } });
  };
}

const SNAPSHOT = "python-snapshot.bin";

// The snapshot's bytes: stored gzip-compressed, unpacked here (a server that already
// undid the gzip is fine too: Pyodide checks the snapshot's own header).
async function snapshotBytes(bytes) {
  if (bytes[0] !== 0x1f || bytes[1] !== 0x8b) return bytes;
  return new Uint8Array(await new Response(gunzipStream(bytes)).arrayBuffer());
}

// Where the snapshot's bytes come from (load(), a promise of them), or why there is none.
function snapshotSource(listed, load) {
  if (!listed) return { missing: "no start-up snapshot in this build" };
  if (typeof DecompressionStream !== "function") return { missing: "this browser cannot unpack the start-up snapshot" };
  const bytes = load().then(snapshotBytes);
  bytes.catch(() => {});  // reported by startPython
  return { bytes };
}

// A promise's value handed over once, as a thenable that then lets go of it: Pyodide keeps
// its options for the worker's whole life, and the snapshot's 30 MiB need not stay with them.
function handOver(promise) {
  let held = promise;
  return {
    then(resolve, reject) {
      const value = held;
      held = null;
      return value.then(resolve, reject);
    },
  };
}

// Start Python from the snapshot ({bytes} or {missing}, from snapshotSource); if that
// fails, say so and start it the normal way. The package zip is written and
// put on sys.path by boot() only after a normal start: the snapshot already has both on
// sys.path and its imports done, and reads the zip's files from APP_ZIP when an op's
// module is first imported.
async function startPython(loadPyodide, options, snapshot) {
  if (snapshot.bytes) {
    try {
      return { pyodide: await loadPyodide({ ...options, _loadSnapshot: handOver(snapshot.bytes) }), start: "snapshot", note: "" };
    } catch (err) {
      const note = `the start-up snapshot could not be used (${String((err && err.message) || err).split("\n")[0]}); Python starts the normal way`;
      console.warn(`nmrcalc: ${note}`);
      progress("runtime", `Starting the Python runtime (${note})`);
      return { pyodide: await loadPyodide(options), start: "fresh", note };
    }
  }
  return { pyodide: await loadPyodide(options), start: "fresh", note: snapshot.missing };
}

async function bootInline(message) {
  progress("decode", "Unpacking embedded files");
  installMemoryFetch(new Set(message.names));
  const bytesOf = async (name) => assetBytes(await arrival(name).promise);
  const moduleOf = async (name) => import(await moduleUrl(await arrival(name).promise));
  const lock = bytesOf("pyodide-lock.json");
  const snapshot = snapshotSource(message.names.includes(SNAPSHOT), () => bytesOf(SNAPSHOT));
  const [{ loadPyodide }, asm] = await Promise.all([moduleOf("pyodide.mjs"), moduleOf("pyodide.asm.mjs")]);
  const lockFileContents = new TextDecoder().decode(await lock);
  progress("runtime", "Starting the Python runtime");
  const started = await startPython(loadPyodide, {
    indexURL: message.indexURL,
    packageBaseUrl: message.indexURL,
    lockFileContents,
    createPyodideModule: asm.default || asm.createPyodideModule,
  }, snapshot);
  return { ...started, packageZip: await bytesOf("nmrcalc.zip") };
}

async function fetchBytes(url) {
  const response = await fetch(url);
  if (!response.ok) throw new Error(`${url.slice(url.lastIndexOf("/") + 1)}: HTTP ${response.status}`);
  return new Uint8Array(await response.arrayBuffer());
}

async function bootSite() {
  const base = new URL("./", self.location.href).href;
  progress("runtime", "Starting the Python runtime");
  // the package and the snapshot are fetched while the runtime starts
  const packageZip = fetchBytes(new URL("nmrcalc.zip", base).href);
  packageZip.catch(() => {});  // reported when awaited below
  const snapshot = snapshotSource(true, () => fetchBytes(new URL(SNAPSHOT, base).href));
  const { loadPyodide } = await import(new URL("pyodide.mjs", base).href);
  const started = await startPython(loadPyodide, { indexURL: base }, snapshot);
  return { ...started, packageZip: await packageZip };
}

// What this worker needs from the engine, checked before anything loads, so a browser
// that lacks one gets one plain sentence instead of a failure deep inside Pyodide.
function missingFeature(mode) {
  if (typeof WebAssembly !== "object") return "WebAssembly";
  if (mode === "inline" && typeof DecompressionStream !== "function") return "compression streams";
  return null;
}

class Unsupported extends Error {}

async function boot(message) {
  const started = performance.now();
  const missing = missingFeature(message.mode);
  if (missing) {
    throw new Unsupported(`This browser lacks ${missing}, which the calculator needs: open the page in a current Chrome, Edge, Firefox or Safari.`);
  }
  const { pyodide, packageZip, start, note } = message.mode === "inline" ? await bootInline(message) : await bootSite();
  progress("package", "Installing the nmrcalc package");
  pyodide.FS.writeFile(APP_ZIP, packageZip);
  if (start !== "snapshot") pyodide.pyimport("sys").path.insert(0, APP_ZIP);
  progress("import", "Importing nmrcalc");
  bridge = pyodide.pyimport("nmrcalc_bridge").bridge;
  wasmBytes = () => pyodide._module.HEAPU8.buffer.byteLength;
  post({ type: "ready", ms: performance.now() - started, python: pyodide.version, start, note });
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
  post({ type: "reply", id: message.id, text, wasmBytes: wasmBytes() });
}

self.onmessage = (event) => {
  const message = event.data;
  if (message.type === "boot") {
    if (!bootPromise) {
      bootPromise = boot(message).catch((err) => {
        // WebKit's stack omits the message, so both are sent
        post({
          type: "boot-error",
          message: `${String(err)}\n${(err && err.stack) || ""}`,
          advice: err instanceof Unsupported ? err.message : null,
        });
      });
    }
  } else if (message.type === "ping") {
    post({ type: "pong" });  // the page's heartbeat (js/core.js): answered at once, even while booting
  } else if (message.type === "asset") {
    arrival(message.name).resolve(message);
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
