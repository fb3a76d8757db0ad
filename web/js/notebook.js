// Bench notebook: pinned results (request, key results, a note, a time) kept in
// localStorage, JSON/CSV export and import, and share links (#calc=<base64url
// JSON {panel, form, request, inputs}>) that recreate a calculation offline.
// Everything a user typed is shown as text only (textContent, never HTML).
// An ES module: NMR is the shared namespace (core.js and this file's exports, see nmr.js),
// used only when a function runs, so the core.js <-> notebook.js cycle is safe.
import * as NMR from "./nmr.js";

const NMRNotebook = (() => {
  const KEY = "nmrcalc.notebook.v1";
  const FORMAT = "nmrcalc-notebook";
  const MAX_PINS = 2000;
  const MAX_PIN_CHARS = 400_000;
  const MAX_NOTE = 2000;
  const MAX_LINK = 100_000;
  const listeners = [];
  const customSources = new Map();
  // A pin source: a form from NMR.form or a panel with its own rows registered by
  // NMR.pinSource; both are restored in place (setInputs, then run).
  const source = (id) => NMR.forms.get(id) || customSources.get(id) || null;

  class NotebookError extends Error {}
  const fail = (message) => { throw new NotebookError(message); };
  const isPlain = (x) => x !== null && typeof x === "object" && !Array.isArray(x);
  const isScalar = (x) => x === null || ["string", "number", "boolean"].includes(typeof x);

  // What is stored under KEY: the pins this page can read, and (kept aside, written back untouched)
  // anything else found there, so another local page cannot make us wipe the notebook.
  function load() {
    let data;
    try {
      data = JSON.parse(localStorage.getItem(KEY) || "[]");
    } catch (err) {
      return { good: [], foreign: [], raw: localStorage.getItem(KEY) };
    }
    if (!Array.isArray(data)) return { good: [], foreign: [data] };
    const good = [];
    const foreign = [];
    for (const p of data) {
      try {
        checkPin(p);
        good.push(p);
      } catch (err) {
        foreign.push(p);
      }
    }
    return { good, foreign };
  }
  let loaded = { good: [], foreign: [] };
  try { loaded = load(); } catch (err) { /* storage disabled: NMR.start says so */ }
  let pins = loaded.good;
  const removed = new Set();
  if (loaded.foreign.length || loaded.raw) {
    const n = loaded.foreign.length || 1;
    document.addEventListener("DOMContentLoaded", () => NMR.notice(`${n} notebook entr${n === 1 ? "y" : "ies"} in this browser could not be read (written by another page or version); kept as they are, not shown.`, "error"));
  }

  // Merge on write: the pins another tab saved since we last read are kept (by id), ours added,
  // ours deleted left out. Near the browser's limit the notebook says so and offers export.
  const WARN_CHARS = 3_500_000;
  function save() {
    let ok = true;
    try {
      const current = load();
      if (current.raw) localStorage.setItem(`${KEY}.unreadable`, current.raw);  // not JSON: set aside, not wiped
      const mine = new Set(pins.map((p) => p.id));
      const theirs = current.good.filter((p) => !mine.has(p.id) && !removed.has(p.id));
      pins = [...pins, ...theirs];
      const text = JSON.stringify([...pins, ...current.foreign]);
      localStorage.setItem(KEY, text);
      if (text.length > WARN_CHARS) {
        NMR.notice(`The notebook holds ${(text.length / 1e6).toFixed(1)} million characters, close to what this browser keeps (about 5): export it as JSON (Bench notebook → Export JSON) and delete old pins.`, "error");
      }
    } catch (err) {
      ok = false;
      NMR.notice("The notebook could not be saved in this browser (storage full or disabled): the pins are shown until you close the page. Export it as JSON (Bench notebook → Export JSON) to keep them.", "error");
    }
    listeners.forEach((fn) => fn());
    return ok;
  }
  window.addEventListener("storage", (event) => {
    if (event.key !== KEY) return;
    pins = load().good.filter((p) => !removed.has(p.id));
    listeners.forEach((fn) => fn());
  });

  const newestFirst = (a, b) => (a.time === b.time ? (a.id < b.id ? 1 : -1) : (a.time < b.time ? 1 : -1));

  /** Pins, newest first (copies are not made: treat as read-only). */
  function list() {
    return pins.slice().sort(newestFirst);
  }

  // Key results: the result's top-level numbers, words and flags (not those that
  // only repeat a request value), and list lengths.
  function summarise(result, request) {
    const summary = {};
    for (const [key, value] of Object.entries(result || {})) {
      if (Object.keys(summary).length >= 16) break;
      if (request[key] === value) continue;
      if (isScalar(value)) summary[key] = value;
      else if (Array.isArray(value)) summary[`${key} (count)`] = value.length;
    }
    return summary;
  }

  // Row keys added after pins were first written: an older pin or link without them still
  // loads (the panel fills them in, e.g. a spin without a label gets the next free letter).
  const ADDED_ROW_KEYS = new Set(["label"]);
  // value has the JSON shape of template: same types, the same object keys (but for
  // ADDED_ROW_KEYS, which may be missing), array entries shaped like the template's first
  // entry (or flat objects of plain values).
  function sameShape(value, template, depth) {
    if (depth > 6) return false;
    if (Array.isArray(template)) {
      if (!Array.isArray(value) || value.length > 200) return false;
      return value.every((v) => (template.length ? sameShape(v, template[0], depth + 1) : isPlain(v) && Object.values(v).every(isScalar)));
    }
    if (isPlain(template)) {
      if (!isPlain(value)) return false;
      const keys = Object.keys(template);
      return Object.keys(value).every((k) => keys.includes(k))
        && keys.every((k) => (k in value ? sameShape(value[k], template[k], depth + 1) : ADDED_ROW_KEYS.has(k)));
    }
    return value === null || template === null ? isScalar(value) : typeof value === typeof template;
  }

  function checkInputs(inputs, allowedKeys, templates) {
    if (!isPlain(inputs)) fail("its inputs are not a list of fields");
    for (const [key, value] of Object.entries(inputs)) {
      if (allowedKeys && !allowedKeys.includes(key)) fail(`it names an input this page does not have (${key.slice(0, 60)})`);
      if (templates && key in templates) {
        if (!sameShape(value, templates[key], 0)) fail(`input ${key.slice(0, 60)} does not have the form this page expects`);
        continue;
      }
      if (!isPlain(value) && !allowedKeys) continue;  // a stored pin may hold a panel's row list
      if (!isPlain(value)) fail(`input ${key.slice(0, 60)} is not a field value`);
      if (value.value === undefined && !allowedKeys) continue;
      if (!["string", "boolean"].includes(typeof value.value)) fail(`input ${key.slice(0, 60)} has no value`);
      if (value.unit !== undefined && value.unit !== null && typeof value.unit !== "string") fail(`input ${key.slice(0, 60)} has a bad unit`);
    }
  }

  function checkRequest(request) {
    if (!isPlain(request)) fail("its request is not an object");
    if (typeof request.op !== "string" || request.op.length > 60) fail("its request names no calculation (op)");
  }

  // A pin as stored and exported; throws NotebookError naming what is wrong.
  function checkPin(pin) {
    if (!isPlain(pin)) fail("an entry is not an object");
    for (const key of ["id", "time", "panel", "form", "op"]) {
      if (typeof pin[key] !== "string" || pin[key].length === 0 || pin[key].length > 200) fail(`an entry has no ${key}`);
    }
    if (Number.isNaN(Date.parse(pin.time))) fail(`entry ${pin.id.slice(0, 40)} has a time that is not a date`);
    if (typeof pin.note !== "string" || pin.note.length > MAX_NOTE) fail(`entry ${pin.id.slice(0, 40)} has a bad note`);
    if (pin.title !== undefined && typeof pin.title !== "string") fail(`entry ${pin.id.slice(0, 40)} has a bad title`);
    if (pin.version !== undefined && typeof pin.version !== "string") fail(`entry ${pin.id.slice(0, 40)} has a bad version`);
    checkRequest(pin.request);
    checkInputs(pin.inputs, null);
    if (!isPlain(pin.summary) || !Object.values(pin.summary).every(isScalar)) fail(`entry ${pin.id.slice(0, 40)} has bad results`);
  }

  function version() {
    const node = document.getElementById("print-head");
    return (node && node.dataset.version) || "";
  }

  /** Pin a computed state {request, result, inputs} of form `form` with a note; returns the pin. */
  function add(formId, state, note) {
    const handle = source(formId);
    const time = new Date().toISOString();
    const pin = {
      id: `${time}-${Math.random().toString(36).slice(2, 8)}`,
      time,
      note: String(note || "").slice(0, MAX_NOTE),
      panel: NMR.panelOf(handle ? handle.node : null) || "",
      form: formId,
      title: handle && handle.node.querySelector("h2") ? handle.node.querySelector("h2").textContent : formId,
      op: String(state.request.op),
      request: state.request,
      inputs: state.inputs,
      summary: summarise(state.result, state.request),
      version: version(),
    };
    checkPin(pin);
    if (pins.length >= MAX_PINS) fail(`the notebook already holds ${MAX_PINS} pins; export it and delete some first`);
    if (JSON.stringify(pin).length > MAX_PIN_CHARS) fail("its inputs are too long to keep (a very long paste?); shorten them and pin again");
    pins.push(pin);
    save();
    return pin;
  }

  function remove(id) {
    removed.add(id);
    pins = pins.filter((p) => p.id !== id);
    save();
  }

  function exportJSON() {
    return JSON.stringify({ format: FORMAT, version: 1, pins: list() }, null, 2);
  }

  /** Add the pins of an exported notebook (same id: kept once). Returns the number added. */
  function importJSON(text) {
    let data;
    try {
      data = JSON.parse(text);
    } catch (err) {
      fail("the file is not JSON");
    }
    if (!isPlain(data) || data.format !== FORMAT || !Array.isArray(data.pins)) fail("the file is not an nmrcalc notebook export");
    if (data.pins.length > MAX_PINS) fail(`the file has more than ${MAX_PINS} entries`);
    if (pins.length + data.pins.length > MAX_PINS) fail(`the notebook would hold more than ${MAX_PINS} pins; export it and delete some first`);
    data.pins.forEach(checkPin);
    const known = new Set(pins.map((p) => p.id));
    const fresh = data.pins.filter((p) => !known.has(p.id));
    fresh.forEach((p) => removed.delete(p.id));
    pins.push(...fresh);
    save();
    return fresh.length;
  }

  // ---------- values as a chemist files them ----------
  const UNIT_SUFFIX = { T: "T", G: "G", mT: "mT", Hz: "Hz", kHz: "kHz", MHz: "MHz", ppm: "ppm", K: "K",
    s: "s", ms: "ms", us: "µs", percent: "%", eV: "eV" };
  // Result keys as a chemist reads them: [label, unit]; other keys fall back to "name_unit" -> "Name (unit)".
  const RESULT_LABELS = {
    field_T: ["Magnetic field", "T"], field_G: ["Magnetic field", "G"], proton_MHz: ["¹H frequency", "MHz"],
    scale: ["Reference scale", ""], symbol: ["Nucleus", ""], spin: ["Spin I", ""], abundance_percent: ["Natural abundance", "%"],
    larmor_MHz: ["Bare-nucleus Larmor frequency", "MHz"], reference_MHz: ["0 ppm (Ξ) frequency", "MHz"],
    difference_ppm: ["Bare nucleus vs 0 ppm", "ppm"], receptivity_C: ["Signal relative to ¹³C at natural abundance", ""],
    J: ["Transition energy", "J"], J_per_mol: ["Energy per mole", "J/mol"], cal_per_mol: ["Energy per mole", "cal/mol"],
    kcal_per_mol: ["Energy per mole", "kcal/mol"], eV: ["Transition energy", "eV"], "wavenumber_cm-1": ["Wavenumber", "cm⁻¹"],
    frequency_Hz: ["Transition frequency", "Hz"], temperature_K: ["Temperature", "K"], nucleus: ["Nucleus", ""],
    population_excess: ["Population excess (fraction)", ""], photon_over_nmr: ["Photon energy / NMR energy", ""],
    J_Hz: ["Scaled coupling J", "Hz"], J_from_Hz: ["Measured coupling J", "Hz"], ratio: ["Ratio", ""],
    from: ["From isotope", ""], to: ["To isotope", ""], sign_flipped: ["Sign flipped", ""], estimate: ["Estimate", ""],
    reduced_coupling: ["Reduced coupling K", "N A⁻² m⁻³"], reduced_coupling_unit: ["Unit of K", ""], partner: ["Coupling partner", ""],
    center_ppm: ["Centre", "ppm"], observe_MHz: ["Observe frequency", "MHz"], label: ["Pattern", ""], observe: ["Observed nucleus", ""],
  };
  /** "field_T" -> ["Magnetic field", "T"], "lines (count)" -> ["Lines (number)", ""], "x_ppm" -> ["X", "ppm"]. */
  function splitKey(key) {
    const counted = /^(.*) \(count\)$/.exec(key);
    if (counted) return [`${splitKey(counted[1])[0]} (number)`, ""];
    if (RESULT_LABELS[key]) return RESULT_LABELS[key];
    const match = /^(.*?)_([A-Za-z]+)$/.exec(key);
    const [name, unit] = match && UNIT_SUFFIX[match[2]] ? [match[1], UNIT_SUFFIX[match[2]]] : [key, ""];
    const words = name.replace(/_/g, " ");
    return [words.charAt(0).toUpperCase() + words.slice(1), unit];
  }
  /** A number without float noise: 12 significant digits at most, big ones as × 10ⁿ. */
  function cleanNumber(value) {
    if (!Number.isFinite(value)) return String(value);
    if (Number.isInteger(value) && Math.abs(value) < 1e7) return String(value);
    if (Math.abs(value) >= 1e7 || (value !== 0 && Math.abs(value) < 1e-3)) return NMR.fmt(value, 7).replace(/\.?0+ ×/, " ×");
    return String(Number(value.toPrecision(7)));
  }
  /** Any stored value as text: numbers rounded, lists of rows as "a 1, b 2; a 3, b 4", never JSON.
   * path ("op.key") names the declaration whose item labels name a row's keys. */
  function valueText(value, path) {
    if (typeof value === "number") return cleanNumber(value);
    if (typeof value === "boolean") return value ? "yes" : "no";
    if (value === null || value === undefined) return "—";
    if (Array.isArray(value)) return value.map((v) => valueText(v, path)).join("; ");
    if (typeof value === "object") {
      return Object.entries(value).map(([k, v]) => {
        const decl = path ? NMR.param(`${path}.${k}`) : null;
        return `${decl && decl.label ? decl.label.toLowerCase() : k.replace(/_/g, " ")} ${valueText(v, path ? `${path}.${k}` : null)}`;
      }).join(", ");
    }
    return String(value);
  }
  /** [label, text] for request key `key` of op `op` (its declared label and unit) or a result key. */
  function labelled(op, key, value) {
    const decl = NMR.param(`${op}.${key}`);
    const [name, unit] = splitKey(key);
    const label = decl && decl.label ? decl.label : name;
    // a bare number typed into a field is in the field's declared unit: show that unit beside it
    const bare = decl && decl.unit && /^[-+−]?\d+(\.\d+)?$/.test(String(value).trim());
    const shownUnit = decl ? "" : unit;
    if (bare) return [label, `${String(value).trim()} ${decl.unit}`];
    return [label, `${valueText(value, decl ? `${op}.${key}` : null)}${shownUnit && typeof value === "number" ? ` ${shownUnit}` : ""}`];
  }
  const inputRows = (pin) => Object.entries(pin.request).filter(([k]) => k !== "op").map(([k, v]) => labelled(pin.op, k, v));
  const resultRows = (pin) => Object.entries(pin.summary).map(([k, v]) => labelled(pin.op, k, v));

  // CSV (RFC 4180 quoting). Every cell (but a plain number) starting with = + - @ tab or CR gets a leading ' so a
  // spreadsheet shows it as text rather than running it as a formula.
  function csvCell(value) {
    let text = value === null || value === undefined ? "" : String(value);
    const plainNumber = /^[-+]?\d+(\.\d+)?(e[-+]?\d+)?$/i.test(text);  // -57.9 stays a number
    if (!plainNumber && /^[=+\-@\t\r]/.test(text)) text = `'${text}`;
    return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
  }

  function requestText(request) {
    return Object.entries(request).filter(([k]) => k !== "op").map(([k, v]) => `${k}=${typeof v === "string" ? v : JSON.stringify(v)}`).join("; ");
  }

  /** Comment lines ("# …") that open every CSV export: tool version, date, then the given lines. */
  function csvHeader(lines) {
    return [`nmrcalc ${version() || "(version unknown)"}`, `exported ${new Date().toISOString()}`, ...lines]
      // unquoted, so "#" opens the line for every CSV reader; a spreadsheet splits it at commas, so
      // each piece is guarded like a cell
      .map((line) => `# ${String(line).replace(/[\r\n\t]+/g, " ").replace(/"/g, "'")}`.split(",")
        .map((piece) => piece.replace(/^(\s*)([=+\-@])/, "$1'$2")).join(","));
  }

  /** A line table as CSV: the header block (every input of `request`, labelled), then one line per row,
   * high to low ppm as spectra are read (Hz when there is no ppm), the Hz offset beside.
   * more: {columns: [[header, line -> value]] after intensity, note: what Hz is (default: offset from the centre)}. */
  function linesCSV(request, lines, more = {}) {
    const inputs = Object.entries(request).filter(([k]) => k !== "op" && k !== "spectrum").map(([k, v]) => labelled(request.op, k, v));
    const extra = more.columns || [];
    const key = (l) => (typeof l.ppm === "number" ? l.ppm : l.Hz);
    const ordered = lines.slice().sort((a, b) => key(b) - key(a));
    const body = ordered.map((l) => [l.ppm, l.Hz, l.intensity, ...extra.map(([, get]) => get(l))]
      .map((v) => csvCell(typeof v === "number" ? cleanNumber(v) : (v ?? ""))).join(","));
    const head = ["ppm", "Hz", "intensity", ...extra.map(([name]) => name)].join(",");
    return `${[...csvHeader([`calculation: ${request.op}`, ...inputs.map(([label, value]) => `${label}: ${value}`), `lines from high to low ppm; Hz = ${more.note || "offset from the centre"}`]), head, ...body].join("\r\n")}\r\n`;
  }

  function toCSV() {
    const head = ["time", "note", "panel", "calculation", "inputs", "results", "request_json", "version"];
    const lines = [...csvHeader(["one row per pin; inputs and results as label = value", "request_json recomputes the pin with python -m nmrcalc api"]), head.join(",")];
    for (const p of list()) {
      const text = (rows) => rows.map(([label, value]) => `${label} = ${value}`).join("; ");
      lines.push([p.time, p.note, p.panel, p.title || p.op, text(inputRows(p)), text(resultRows(p)), JSON.stringify(p.request), p.version].map(csvCell).join(","));
    }
    return `${lines.join("\r\n")}\r\n`;
  }

  // ---------- share links ----------
  function toBase64url(text) {
    const bytes = new TextEncoder().encode(text);
    let binary = "";
    for (const b of bytes) binary += String.fromCharCode(b);
    return btoa(binary).replace(/\+/g, "-").replace(/\//g, "_").replace(/=+$/, "");
  }
  function fromBase64url(text) {
    if (!/^[A-Za-z0-9_-]*$/.test(text)) fail("it is not base64url text");
    const padded = text.replace(/-/g, "+").replace(/_/g, "/") + "===".slice((text.length + 3) % 4);
    let binary;
    try {
      binary = atob(padded);
    } catch (err) {
      fail("it is not base64url text");
    }
    try {
      return new TextDecoder("utf-8", { fatal: true }).decode(Uint8Array.from(binary, (c) => c.charCodeAt(0)));
    } catch (err) {
      return fail("it is not UTF-8 text");
    }
  }

  /** The page's own address with #calc=… for {panel, form, request, inputs}. */
  function shareLink(pinLike) {
    const payload = { panel: pinLike.panel, form: pinLike.form, request: pinLike.request, inputs: pinLike.inputs };
    return `${location.href.split("#")[0]}#calc=${toBase64url(JSON.stringify(payload))}`;
  }

  /** Decode and check a #calc= fragment against this page; returns {panel, form, request, inputs}. */
  function parseShare(hash) {
    const encoded = hash.slice("#calc=".length);
    if (encoded.length > MAX_LINK) fail("it is too long");
    let data;
    try {
      data = JSON.parse(fromBase64url(encoded));
    } catch (err) {
      if (err instanceof NotebookError) throw err;
      fail("it does not hold JSON");
    }
    if (!isPlain(data)) fail("it does not describe a calculation");
    if (typeof data.panel !== "string" || !NMR.panelIds().includes(data.panel)) fail("it names a panel this page does not have");
    const handle = typeof data.form === "string" ? source(data.form) : null;
    if (!handle || NMR.panelOf(handle.node) !== data.panel) fail("it names a calculation this panel does not have");
    checkRequest(data.request);
    checkInputs(data.inputs === undefined ? {} : data.inputs, handle.storeKeys(), handle.templates && handle.templates());
    return { panel: data.panel, form: data.form, request: data.request, inputs: data.inputs || {} };
  }

  /** Show a pin (or a share-link payload) in its panel and compute exactly its request. */
  function reopen(entry) {
    const handle = source(entry.form);
    if (!handle || !NMR.panelIds().includes(entry.panel)) {
      NMR.notice(`This pin's calculation (${entry.form}) is not on this page version; its request and results are shown in the notebook.`, "error");
      return false;
    }
    try {
      checkInputs(entry.inputs, handle.storeKeys(), handle.templates && handle.templates());
    } catch (err) {
      NMR.notice(`This pin could not be re-opened: ${err.message}.`, "error");
      return false;
    }
    show(entry.panel, handle, entry.inputs, entry.what);
    return true;
  }

  /** Replace the inputs of pin source `handle` by replace(), offering one-step undo of what was typed
   * (a notice with an Undo button that puts the previous inputs back and computes them). */
  function withUndo(handle, what, replace) {
    const before = handle.snapshot();
    replace();
    NMR.notice(`${what} replaced the inputs of “${handle.node.querySelector("h2") ? handle.node.querySelector("h2").textContent : handle.id}”.`, "info");
    const undo = NMR.el("button", { type: "button", class: "small-button", id: "undo-replace" }, "Undo");
    undo.addEventListener("click", () => {
      handle.setInputs(before);
      NMR.ready.then(() => handle.run());
      NMR.notice("The previous inputs are back.", "info");
    });
    document.getElementById("page-notice").append(" ", undo);
  }
  const withUndoIn = (formId, what, replace) => {
    const handle = source(formId);
    if (handle) withUndo(handle, what, replace);
    else replace();
  };

  function show(panel, handle, inputs, what) {
    NMR.selectTab(panel);
    withUndo(handle, what || "Re-opening a pin", () => handle.setInputs(inputs));
    // The request is rebuilt from the restored fields (never the stored one), so what is shown beside
    // the inputs is what they compute; after the panel's own first calculation (queued on ready earlier).
    NMR.ready.then(() => handle.run());
    handle.node.scrollIntoView({ block: "start" });
  }

  /** Hand inputs (store key → saved value, the panel's own format) to another panel's form and compute there.
   * False if that panel or form is not on this page. */
  const openInputs = (panel, form, inputs) => {
    const handle = source(form);
    if (!handle || !NMR.panelIds().includes(panel)) return false;
    show(panel, handle, inputs, "Opening it here");
    return true;
  };

  const openShareLink = (hash) => {
    if (!hash || !hash.startsWith("#calc=")) return;
    try {
      const entry = parseShare(hash);
      reopen({ ...entry, what: "A shared calculation (computed here, offline)" });
    } catch (err) {
      const reason = err instanceof NotebookError ? err.message : "it could not be read";
      NMR.notice(`This link's calculation could not be opened: ${reason}. The page works as usual.`, "error");
    }
  };

  /** Pins for a panel with its own form: {id, node, fields: [sharedField states],
   * rows: {storeKey: {get: () => value, set(value)}}, run: () => compute again}.
   * Returns the pin bar; append its node under the result and call update({request, result}) or update(null). */
  const pinSource = ({ id, node, fields, rows, run }) => {
    const snapshot = () => {
      const inputs = {};
      for (const f of fields) {
        f.save();
        inputs[f.storeKey] = NMR.recall(f.storeKey);
      }
      for (const [key, row] of Object.entries(rows)) inputs[key] = JSON.parse(JSON.stringify(row.get()));
      return inputs;
    };
    const templates = () => Object.fromEntries(Object.entries(rows).map(([key, row]) => [key, row.get()]));
    const setInputs = (inputs) => {
      for (const f of fields) if (f.storeKey in inputs) f.load(inputs[f.storeKey]);
      for (const [key, row] of Object.entries(rows)) if (key in inputs) row.set(JSON.parse(JSON.stringify(inputs[key])));
    };
    customSources.set(id, { id, node, snapshot, templates, setInputs, run: () => run(), storeKeys: () => [...fields.map((f) => f.storeKey), ...Object.keys(rows)] });
    const bar = NMR.pinBar({ form: id });
    return { node: bar.node, update: (state) => bar.update(state ? { ...state, inputs: snapshot() } : null) };
  };

  // The latest good result of each pin source, for captions of exported plots.
  const latest = new Map();
  /** Caption lines (at most `width` characters each) for a plot inside a card: tool version, the
   * calculation's title and every input of the result it shows. Empty when the card has no result. */
  function captionLines(node, width) {
    for (const [form, state] of latest) {
      const handle = source(form);
      if (!handle || !handle.node.contains(node)) continue;
      const title = handle.node.querySelector("h2");
      const words = [`nmrcalc ${version()}`, title ? title.textContent : form,
        ...Object.entries(state.request).filter(([k]) => k !== "op" && k !== "spectrum").map(([k, v]) => labelled(state.request.op, k, v).join(": "))]
        .join(" · ").split(" ");
      const lines = [""];
      for (const word of words) {
        if (lines[lines.length - 1].length + word.length + 1 > width) lines.push("");
        lines[lines.length - 1] += (lines[lines.length - 1] ? " " : "") + word;
      }
      return lines;
    }
    return [`nmrcalc ${version()}`];
  }

  // ---------- the Pin bar under each result ----------
  const pinBar = ({ form }) => {
    const { el } = NMR;
    let state = null;
    const pinButton = el("button", { type: "button", class: "small-button pin-open", disabled: true }, "Pin result");
    const shareButton = el("button", { type: "button", class: "small-button pin-share", disabled: true }, "Share link");
    const noteId = `pin-note-${form}`;
    const noteInput = el("input", { type: "text", id: noteId, class: "pin-note", maxlength: MAX_NOTE, autocomplete: "off" });
    const saveButton = el("button", { type: "button", class: "primary pin-save" }, "Save pin");
    const cancelButton = el("button", { type: "button", class: "small-button" }, "Cancel");
    const editor = el("div", { class: "pin-editor", hidden: true },
      el("label", { for: noteId }, "Note for the notebook"), noteInput, el("div", { class: "actions" }, saveButton, cancelButton));
    const linkId = `pin-link-${form}`;
    const linkInput = el("input", { type: "text", id: linkId, readonly: true, class: "pin-link" });
    const linkBox = el("div", { class: "pin-linkbox", hidden: true }, el("label", { for: linkId }, "Share link (opens this calculation offline)"), linkInput);
    const status = el("span", { class: "hint pin-status", "aria-live": "polite" });
    const node = el("div", { class: "pin-bar no-print" }, el("div", { class: "actions" }, pinButton, shareButton, status), editor, linkBox);

    pinButton.addEventListener("click", () => {
      editor.hidden = false;
      noteInput.focus();
    });
    const close = () => {
      editor.hidden = true;
      noteInput.value = "";
      pinButton.focus();
    };
    const doSave = () => {
      if (!state) return;
      let pin;
      try {
        pin = add(form, state, noteInput.value);
      } catch (err) {
        if (!(err instanceof NotebookError)) throw err;
        status.textContent = `Not pinned: ${err.message}.`;
        return;
      }
      status.textContent = `Pinned at ${new Date(pin.time).toLocaleTimeString()}.`;
      close();
    };
    saveButton.addEventListener("click", doSave);
    cancelButton.addEventListener("click", close);
    noteInput.addEventListener("keydown", (event) => {
      if (event.key === "Enter") { event.preventDefault(); doSave(); }
      if (event.key === "Escape") { event.preventDefault(); close(); }
    });
    shareButton.addEventListener("click", () => {
      if (!state) return;
      linkInput.value = shareLink({ panel: NMR.panelOf(node), form, request: state.request, inputs: state.inputs });
      linkBox.hidden = false;
      linkInput.focus();
      linkInput.select();
      if (navigator.clipboard) navigator.clipboard.writeText(linkInput.value).then(() => { status.textContent = "Link copied."; }, () => { status.textContent = "Select the link and copy it."; });
    });
    return {
      node,
      /** The latest good result {request, result, inputs}, or null after an error. */
      update(next) {
        state = next;
        if (next) latest.set(form, next);
        else latest.delete(form);
        pinButton.disabled = !next;
        shareButton.disabled = !next;
        if (!next) linkBox.hidden = true;
      },
    };
  };

  function stampPrintDate() {
    const node = document.getElementById("print-date");
    if (node) node.textContent = new Date().toLocaleString();
  }
  window.addEventListener("beforeprint", stampPrintDate);
  document.addEventListener("DOMContentLoaded", stampPrintDate);

  return { list, add, remove, exportJSON, importJSON, toCSV, shareLink, parseShare, reopen, requestText, NotebookError, inputRows, resultRows, csvCell, csvHeader, cleanNumber, linesCSV, captionLines, onChange: (fn) => listeners.push(fn),
    withUndo: withUndoIn, openInputs, openShareLink, pinSource, pinBar };
})();

export default NMRNotebook;
export const { withUndo, openInputs, openShareLink, pinSource, pinBar } = NMRNotebook;
