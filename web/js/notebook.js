// Bench notebook: pinned results (request, key results, a note, a time) kept in
// localStorage, JSON/CSV export and import, and share links (#calc=<base64url
// JSON {panel, form, request, inputs}>) that recreate a calculation offline.
// Everything a user typed is shown as text only (textContent, never HTML).
"use strict";

const NMRNotebook = (() => {
  const KEY = "nmrcalc.notebook.v1";
  const FORMAT = "nmrcalc-notebook";
  const MAX_PINS = 500;
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

  function load() {
    try {
      const data = JSON.parse(localStorage.getItem(KEY) || "[]");
      return Array.isArray(data) ? data.filter((p) => { try { checkPin(p); return true; } catch (e) { return false; } }) : [];
    } catch (err) {
      return [];
    }
  }
  let pins = load();

  function save() {
    try {
      localStorage.setItem(KEY, JSON.stringify(pins));
    } catch (err) {
      NMR.notice("The notebook could not be saved in this browser (storage full or disabled); export it as JSON to keep it.", "error");
    }
    listeners.forEach((fn) => fn());
  }

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

  // value has the JSON shape of template: same types, the same object keys, array
  // entries shaped like the template's first entry (or flat objects of plain values).
  function sameShape(value, template, depth) {
    if (depth > 6) return false;
    if (Array.isArray(template)) {
      if (!Array.isArray(value) || value.length > 200) return false;
      return value.every((v) => (template.length ? sameShape(v, template[0], depth + 1) : isPlain(v) && Object.values(v).every(isScalar)));
    }
    if (isPlain(template)) {
      if (!isPlain(value)) return false;
      const keys = Object.keys(template);
      return Object.keys(value).every((k) => keys.includes(k)) && keys.every((k) => k in value && sameShape(value[k], template[k], depth + 1));
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
    pins.push(pin);
    if (pins.length > MAX_PINS) pins = list().slice(0, MAX_PINS);
    save();
    return pin;
  }

  function remove(id) {
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
    data.pins.forEach(checkPin);
    const known = new Set(pins.map((p) => p.id));
    const fresh = data.pins.filter((p) => !known.has(p.id));
    pins.push(...fresh);
    save();
    return fresh.length;
  }

  // CSV (RFC 4180 quoting). A note starting with = + - @ gets a leading ' so a
  // spreadsheet shows it as text rather than running it as a formula.
  function csvCell(value, isText) {
    let text = value === null || value === undefined ? "" : String(value);
    if (isText && /^[=+\-@\t\r]/.test(text)) text = `'${text}`;
    return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
  }

  function requestText(request) {
    return Object.entries(request).filter(([k]) => k !== "op").map(([k, v]) => `${k}=${typeof v === "string" ? v : JSON.stringify(v)}`).join("; ");
  }

  function toCSV() {
    const head = ["time", "note", "panel", "op", "inputs", "results", "request_json", "version"];
    const lines = [head.join(",")];
    for (const p of list()) {
      const results = Object.entries(p.summary).map(([k, v]) => `${k}=${v}`).join("; ");
      lines.push([csvCell(p.time), csvCell(p.note, true), csvCell(p.panel), csvCell(p.op), csvCell(requestText(p.request), true),
        csvCell(results, true), csvCell(JSON.stringify(p.request)), csvCell(p.version)].join(","));
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
    show(entry.panel, handle, entry.inputs, entry.request);
    return true;
  }

  function show(panel, handle, inputs, request) {
    NMR.selectTab(panel);
    handle.setInputs(inputs);
    // after the panel's own first calculation (queued on ready earlier), so this request is the one shown
    NMR.ready.then(() => handle.run(request));
    handle.node.scrollIntoView({ block: "start" });
  }

  /** Hand inputs (store key → saved value, the panel's own format) to another panel's form and compute there.
   * False if that panel or form is not on this page. */
  NMR.openInputs = (panel, form, inputs) => {
    const handle = source(form);
    if (!handle || !NMR.panelIds().includes(panel)) return false;
    show(panel, handle, inputs);
    return true;
  };

  NMR.openShareLink = (hash) => {
    if (!hash || !hash.startsWith("#calc=")) return;
    try {
      const entry = parseShare(hash);
      reopen(entry);
      NMR.notice(`Opened a shared calculation (${entry.request.op}) in “${entry.panel}”. It is computed here, offline.`, "info");
    } catch (err) {
      const reason = err instanceof NotebookError ? err.message : "it could not be read";
      NMR.notice(`This link's calculation could not be opened: ${reason}. The page works as usual.`, "error");
    }
  };

  /** Pins for a panel with its own form: {id, node, fields: [sharedField states],
   * rows: {storeKey: {get: () => value, set(value)}}, run: () => compute again}.
   * Returns the pin bar; append its node under the result and call update({request, result}) or update(null). */
  NMR.pinSource = ({ id, node, fields, rows, run }) => {
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

  // ---------- the Pin bar under each result ----------
  NMR.pinBar = ({ form }) => {
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
      const pin = add(form, state, noteInput.value);
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

  return { list, add, remove, exportJSON, importJSON, toCSV, shareLink, parseShare, reopen, requestText, NotebookError, onChange: (fn) => listeners.push(fn) };
})();
