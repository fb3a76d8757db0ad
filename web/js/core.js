// nmrcalc page shell (an ES module): worker boot, the one generic API call, tabs,
// form and result helpers. Panels live in js/panels/*.js, each exporting
// {id, title, build(container)}; main.js registers them in order with
// registerPanel. Panels reach these exports (and the notebook's) through
// js/nmr.js. No physics here: every number shown comes from
// nmrcalc.api.handle in the worker.
// notebook.js imports this module too: the two use each other's exports only
// when called (never while the modules are evaluated), so the cycle is safe.
import { pinBar, openShareLink } from "./notebook.js";

const STORE_KEY = "nmrcalc.inputs.v1";
const TAB_KEY = "nmrcalc.tab.v1";
const panels = [];
const forms = new Map();
const waiting = new Map();
let worker = null;
let workerReady = false;
let restarts = 0;
let nextId = 1;
let markReady;
const ready = new Promise((resolve) => { markReady = resolve; });
const timings = { navigationStart: 0, workerStart: null, ready: null, firstResult: null };
window.nmrcalcStatus = { state: "starting", error: null, timings, restarts: 0 };

// ---------- storage ----------
// Keys are namespaced and versioned ("nmrcalc.inputs.v1"): on file:// every local page shares
// one storage origin. What is read back is checked (a plain object of saved field values), an
// entry another page wrote in a form we do not know is ignored, never rewritten away. Writes merge
// with what another tab saved meanwhile (one key at a time), so two tabs keep each other's inputs.
const MAX_ENTRY_CHARS = 200_000;
const isPlainObject = (x) => x !== null && typeof x === "object" && !Array.isArray(x);
function readStore() {
  let data;
  try {
    data = JSON.parse(localStorage.getItem(STORE_KEY) || "{}");
  } catch (err) {
    return {};
  }
  if (!isPlainObject(data)) return {};
  const out = {};
  for (const [key, value] of Object.entries(data)) {
    if (key.length <= 200 && value !== undefined && JSON.stringify(value).length <= MAX_ENTRY_CHARS) out[key] = value;
  }
  return out;
}
let store = readStore();
let storageWarned = false;
/** Say once (per page) that storage failed; later failures stay quiet but nothing else is lost. */
function storageTrouble(text) {
  if (storageWarned) return;
  storageWarned = true;
  notice(text, "error");
}
/** Save value under key (merged with other tabs' keys). False, with a message, if it was not saved. */
function remember(key, value) {
  const chars = JSON.stringify(value === undefined ? null : value).length;
  const fresh = readStore();
  if (chars > MAX_ENTRY_CHARS) {
    store[key] = value;  // kept on screen for this visit only
    delete fresh[key];
    notice(`One entry is too long to keep in this browser (${chars.toLocaleString("en")} characters; at most ${MAX_ENTRY_CHARS.toLocaleString("en")}): it stays on screen but will not survive a reload. Every other input is still saved.`, "error");
    try { localStorage.setItem(STORE_KEY, JSON.stringify(fresh)); } catch (err) { /* reported below on the next write */ }
    return false;
  }
  fresh[key] = value;
  store = { ...store, ...fresh };
  try {
    localStorage.setItem(STORE_KEY, JSON.stringify(fresh));
    return true;
  } catch (err) {
    storageTrouble("This browser did not let the page save your inputs (storage full or disabled): they will not survive a reload. Export the bench notebook to keep your pins.");
    return false;
  }
}
/** The value saved under key by remember(), or undefined. */
function recall(key) {
  return store[key];
}
/** True when this browser lets the page keep data across reloads; otherwise say so once. */
function checkStorage() {
  try {
    localStorage.setItem("nmrcalc.probe.v1", "1");
    localStorage.removeItem("nmrcalc.probe.v1");
    return true;
  } catch (err) {
    storageTrouble("This browser does not let the page keep data (storage disabled, or a private window that forbids it): your inputs and pins will not survive a reload. Export the bench notebook before you close the page.");
    return false;
  }
}
window.addEventListener("storage", (event) => {
  if (event.key === STORE_KEY) store = { ...store, ...readStore() };
});

// ---------- DOM helpers (text only, never innerHTML) ----------
function el(tag, attrs, ...children) {
  const node = document.createElement(tag);
  for (const [name, value] of Object.entries(attrs || {})) {
    if (value === null || value === undefined || value === false) continue;
    if (name === "class") node.className = value;
    else if (name === "text") node.textContent = value;
    else if (name.startsWith("on")) node.addEventListener(name.slice(2), value);
    else node.setAttribute(name, value === true ? "" : String(value));
  }
  for (const child of children) {
    if (child === null || child === undefined) continue;
    node.append(child instanceof Node ? child : document.createTextNode(String(child)));
  }
  return node;
}

// "13C" -> <span><sup>13</sup>C</span>; anything else as plain text.
function nuclideLabel(symbol) {
  const match = /^(\d+)([A-Za-z]+)$/.exec(String(symbol));
  if (!match) return el("span", { class: "nuc" }, String(symbol));
  return el("span", { class: "nuc" }, el("sup", {}, match[1]), match[2]);
}

// Display formatting only (significant digits); no arithmetic on the values.
function fmt(value, digits) {
  if (value === null || value === undefined) return "—";
  if (typeof value !== "number") return String(value);
  if (value === 0) return "0";
  const abs = Math.abs(value);
  if (abs >= 1e-3 && abs < 1e7) {
    const text = value.toPrecision(digits || 6);
    return text.includes("e") ? String(Number(text)) : text;
  }
  const [mantissa, exponent] = value.toExponential((digits || 6) - 1).split("e");
  const SUPERSCRIPT = { "-": "⁻", 0: "⁰", 1: "¹", 2: "²", 3: "³", 4: "⁴", 5: "⁵", 6: "⁶", 7: "⁷", 8: "⁸", 9: "⁹" };
  const power = [...String(Number(exponent))].map((c) => SUPERSCRIPT[c]).join("");
  return `${mantissa} × 10${power}`;
}
function fixed(value, places) {
  if (value === null || value === undefined) return "—";
  return typeof value === "number" ? value.toFixed(places) : String(value);
}

/** A text node for a formatted number (fmt already writes exponents as superscripts). */
function numberNode(text) {
  return document.createTextNode(text);
}

// ---------- worker and the one API call ----------
function setBoot(fraction, text, state) {
  const fill = document.getElementById("boot-fill");
  const label = document.getElementById("boot-text");
  const box = document.getElementById("boot");
  if (fill) fill.style.width = `${Math.round(fraction * 100)}%`;
  if (label) label.textContent = text;
  if (box && state) box.dataset.state = state;
}

const STAGES = { decode: [0.15, "Unpacking embedded files…"], runtime: [0.35, "Starting Python…"], package: [0.8, "Loading nmrcalc…"], import: [0.92, "Importing nmrcalc…"] };

let progressShown = false;
let readyText = "Ready";

function onWorkerMessage(event) {
  const message = event.data;
  heard();
  if (message.type === "progress") {
    const [fraction, text] = STAGES[message.stage] || [0.5, message.detail];
    setBoot(fraction, text, "loading");
  } else if (message.type === "ready") {
    workerReady = true;
    if (timings.ready === null) timings.ready = performance.now();
    window.nmrcalcStatus.state = "ready";
    window.nmrcalcStatus.python = message.python;
    window.nmrcalcStatus.start = { how: message.start, note: message.note };  // "snapshot" or "fresh" (web/worker.js)
    readyText = restarts > 0
      ? `Python stopped unexpectedly and was restarted (${restarts}×); your inputs and results are kept. Ready again.`
      : `Ready — Python in this browser (${(message.ms / 1000).toFixed(1)} s)`;
    setBoot(1, readyText, "ready");
    document.body.classList.add("is-ready");
    markReady();
  } else if (message.type === "boot-error") {
    window.nmrcalcStatus.state = "failed";
    window.nmrcalcStatus.error = message.message;
    setBoot(1, message.advice || "Could not start Python in this browser. Reload the page; if it persists, try another browser.", "failed");
    console.error(message.message);
    // calls sent to this worker (e.g. after a restart) would never be answered
    failWaiting("python_unavailable", "Python could not start in this browser, so nothing can be calculated. Reload the page to try again.");
  } else if (message.type === "call-progress") {
    progressShown = true;
    setBoot(message.fraction, `Calculating… ${Math.round(message.fraction * 100)} % (Cancel stops it)`, "loading");
  } else if (message.type === "reply") {
    if (progressShown && waiting.size <= 1) {
      progressShown = false;
      setBoot(1, readyText, "ready");
    }
    const resolve = waiting.get(message.id);
    waiting.delete(message.id);
    window.nmrcalcStatus.pending = waiting.size;
    window.nmrcalcStatus.wasmBytes = message.wasmBytes;
    if (resolve) resolve(JSON.parse(message.text));
  }
}

/** Answer every waiting call with an error response (the calls never reached a live worker). */
function failWaiting(code, message) {
  for (const [id, resolve] of waiting) {
    waiting.delete(id);
    resolve({ ok: false, error: { code, message, field: null, retryable: true }, warnings: [] });
  }
  window.nmrcalcStatus.pending = 0;
}

// The worker died after it was ready (an uncaught error, out of memory, a
// fatal Pyodide error): start a new one, keep the page as it is, and give
// every pending call a retryable error instead of leaving it hanging.
function onWorkerCrash(detail) {
  restarts += 1;
  window.nmrcalcStatus.restarts = restarts;
  window.nmrcalcStatus.lastCrash = detail;
  console.error("nmrcalc worker stopped:", detail);
  worker.terminate();
  failWaiting("worker_restarted", "Python stopped unexpectedly during this calculation and has been restarted. Your inputs are kept; press the button to calculate again.");
  setBoot(0.1, "Python stopped unexpectedly; restarting it… your inputs and results are kept.", "restarting");
  startWorker();
}

// ---------- heartbeat ----------
// A worker that stops without an error event (terminated from outside, killed) would leave every
// call waiting forever. It is pinged whenever it should be idle: every HEARTBEAT_MS with no call
// pending, and just before a call sent to an idle worker (a live worker answers that ping before it
// starts the call). No message within PONG_MS means it is gone: pending calls fail with a message
// and a fresh worker starts (onWorkerCrash). A worker busy in Python answers no ping, so none is sent
// while a call runs; the page being busy itself (the answer waiting behind it) only asks again.
// While a call runs, a worker that says nothing at all (no reply, no progress) for SILENT_MS is taken
// for dead the same way: every op's worst case is bounded well below that (DEVELOPERS.md, Limits),
// and the long ones (spin systems) report progress as they go.
const HEARTBEAT_MS = 5000;
const PONG_MS = 4000;
let SILENT_MS = 180_000;
let lastHeard = performance.now();
let pongTimer = null;
function ping() {
  if (!workerReady || pongTimer !== null) return;
  const target = worker;
  const sent = performance.now();
  pongTimer = setTimeout(() => {
    pongTimer = null;
    if (target !== worker || !workerReady) return;
    if (performance.now() - sent > PONG_MS + 1000) ping();  // this page was busy: the answer may be queued
    else onWorkerCrash("no answer to the heartbeat: the worker stopped without an error");
  }, PONG_MS);
  worker.postMessage({ type: "ping" });
}
/** Any message from the worker shows it is alive. */
function heard() {
  clearTimeout(pongTimer);
  pongTimer = null;
  lastHeard = performance.now();
}
setInterval(() => {
  if (waiting.size === 0) ping();
  else if (workerReady && performance.now() - lastHeard > SILENT_MS) {
    onWorkerCrash(`no sign of life for ${Math.round(SILENT_MS / 1000)} s during a calculation`);
  }
}, HEARTBEAT_MS);
/** For the browser tests (via main.js's hook): a shorter silence limit, so a test need not wait minutes. */
function setSilentLimit(ms) {
  SILENT_MS = ms;
}

// The worker was started by boot.js (NMRBoot) before this script ran; it is
// adopted on the first start and replaced by a fresh one on every later start.
function startWorker() {
  workerReady = false;
  heard();
  const listen = (event, from) => {
    if (from !== worker) return;  // a worker already replaced
    if (event.type === "message") {
      onWorkerMessage(event);
      return;
    }
    if (event.preventDefault) event.preventDefault();
    const detail = event.message || (event.type === "messageerror" ? "a reply could not be read" : "worker error");
    if (workerReady) onWorkerCrash(detail);
    else onWorkerMessage({ data: { type: "boot-error", message: detail } });
  };
  const first = timings.workerStart === null;
  if (first) {
    worker = NMRBoot.worker();
    timings.workerStart = NMRBoot.startedAt();
    NMRBoot.adopt(listen);  // also hands over what the worker said so far
  } else {
    worker = NMRBoot.restart(listen);
  }
}

/** Send one request object to nmrcalc.api.handle; resolves with its response object. */
function api(request) {
  return ready.then(() => new Promise((resolve) => {
    const id = nextId;
    nextId += 1;
    if (waiting.size === 0) ping();  // answered before the call starts, if the worker is alive
    waiting.set(id, resolve);
    window.nmrcalcStatus.pending = waiting.size;
    worker.postMessage({ type: "call", id, text: JSON.stringify(request) });
  }));
}

/** Stop a long calculation: end the worker, answer every waiting call with a
 * "cancelled" error and start a fresh worker (calls queue until it is ready). */
function cancel() {
  if (!worker) return;
  worker.terminate();
  failWaiting("cancelled", "Calculation cancelled.");
  setBoot(0.1, "Restarting Python after cancel…", "loading");
  startWorker();
}

// ---------- the ops' declared parameters (embedded at build time from {"op": "describe"}) ----------
const DECLARED = (() => {
  const node = document.getElementById("nmrcalc-params");
  try {
    return new Map(JSON.parse(node ? node.textContent : "{}").ops.map((op) => [op.op, op]));
  } catch (err) {
    return new Map();
  }
})();
/** The declaration of "op.key" or "op.list.key" (an item key of a list), or null. */
function param(path) {
  const [opName, ...keys] = path.split(".");
  let params = DECLARED.has(opName) ? DECLARED.get(opName).params : [];
  let found = null;
  for (const key of keys) {
    found = params.find((p) => p.key === key) || null;
    if (!found) return null;
    params = found.items || [];
  }
  return found;
}
/** The op's one_of group that holds "op.key" ({keys, label, help}: one input filling whichever key
 * its unit names, such as the magnet), or null. */
function alternatives(path) {
  const [opName, key] = path.split(".");
  const op = DECLARED.get(opName);
  return (op && (op.one_of || []).find((group) => group.keys.includes(key))) || null;
}
/** A field named by its declaration (field.param, e.g. 'frequency.min_MHz'; field.either, e.g.
 * 'spin_system.spectrometer', for one input that fills one key of a one_of group): its label with the unit
 * (", optional" added with optional: true), its default, the request key whose errors it shows, and
 * its hint with hint: true; the field's own entries win. */
function declaredField(field) {
  const group = field.either ? alternatives(field.either) : null;
  if (group) return { label: group.label, keys: group.keys, ...field, hint: field.hint === true ? group.help : field.hint };
  const decl = field.param ? param(field.param) : null;
  if (!decl) return field;
  const notes = [decl.unit, field.optional ? "optional" : null].filter(Boolean).join(", ");
  const value = decl.default === null || decl.default === undefined || typeof decl.default === "object" ? undefined : decl.default;
  const keys = [field.param.split(".").slice(1).join(".")];
  return { label: notes ? `${decl.label} (${notes})` : decl.label, value, keys, ...field, hint: field.hint === true ? decl.help : field.hint };
}

// ---------- forms ----------
// A field: {id, label, kind: "text"|"select"|"checkbox", value, keys, hint, required,
//           options: [[value, label]], units: [{unit, label, key}], list, inputmode}
// keys: the request keys whose errors belong beside this field.
function buildField(form, spec) {
  const field = declaredField(spec);
  const inputId = `${form.id}-${field.id}`;
  const storeKey = `${form.id}.${field.id}`;
  const saved = store[storeKey];
  const errorId = `${inputId}-error`;
  const hintId = field.hint ? `${inputId}-hint` : null;
  const wrap = el("div", { class: `field field-${field.kind || "text"}${field.wide ? " field-wide" : ""}` });
  let input;
  let unitSelect = null;
  if (field.kind === "checkbox") {
    input = el("input", { type: "checkbox", id: inputId, "aria-describedby": errorId });
    input.checked = saved !== undefined ? Boolean(saved.value) : Boolean(field.value);
    wrap.append(el("label", { class: "check", for: inputId }, input, el("span", {}, field.label)));
  } else {
    if (field.kind === "select") {
      input = el("select", { id: inputId });
      for (const [value, label] of field.options) input.append(el("option", { value }, label));
    } else {
      input = el("input", {
        type: "text", id: inputId, autocomplete: "off", spellcheck: "false",
        inputmode: field.inputmode || null, list: field.list || null, placeholder: field.placeholder || null,
      });
    }
    const fallback = field.kind === "select" ? field.options[0][0] : "";
    input.value = saved !== undefined ? saved.value : (field.value ?? fallback);
    if (field.kind === "select" && input.selectedIndex < 0) input.value = fallback;
    input.setAttribute("aria-describedby", [hintId, errorId].filter(Boolean).join(" "));
    wrap.append(el("label", { for: inputId }, field.label));
    const row = el("div", { class: "input-row" }, input);
    if (field.units) {
      unitSelect = el("select", { id: `${inputId}-unit`, "aria-label": `${field.label} unit` });
      for (const option of field.units) unitSelect.append(el("option", { value: option.unit }, option.label));
      unitSelect.value = saved && saved.unit ? saved.unit : field.units[0].unit;
      row.append(unitSelect);
    }
    wrap.append(row);
  }
  if (hintId) wrap.append(el("p", { class: "hint", id: hintId }, field.hint));
  const error = el("p", { class: "field-error", id: errorId, "aria-live": "polite" });
  wrap.append(error);
  const state = {
    field, input, unitSelect, error, wrap, storeKey,
    read() {
      if (field.kind === "checkbox") return { value: input.checked };
      return { value: input.value.trim(), unit: unitSelect ? unitSelect.value : null };
    },
    save() {
      remember(storeKey, field.kind === "checkbox" ? { value: input.checked } : { value: input.value, unit: unitSelect ? unitSelect.value : null });
    },
    /** Put a saved value ({value, unit}) back and store it; anything else is ignored. */
    load(saved) {
      if (!saved || typeof saved !== "object") return;
      if (field.kind === "checkbox") input.checked = Boolean(saved.value);
      else {
        input.value = String(saved.value ?? "");
        if (unitSelect && typeof saved.unit === "string" && field.units.some((u) => u.unit === saved.unit)) unitSelect.value = saved.unit;
      }
      state.save();
    },
    setError(message) {
      error.textContent = message || "";
      wrap.classList.toggle("has-error", Boolean(message));
      if (message) input.setAttribute("aria-invalid", "true");
      else input.removeAttribute("aria-invalid");
    },
    watch() {
      for (const node of [input, unitSelect].filter(Boolean)) {
        node.addEventListener("input", () => state.save());
        node.addEventListener("change", () => state.save());
      }
    },
    ownsKey(key) {
      const keys = field.keys || [field.id];
      return keys.some((k) => key === k || key.startsWith(`${k}.`));
    },
  };
  state.watch();
  return state;
}

/** A field shown on its own (e.g. one magnet for several cards); pass it to forms as spec.shared. */
function sharedField(groupId, field) {
  const state = buildField({ id: groupId }, field);
  state.listeners = [];
  const notify = () => state.listeners.forEach((fn) => fn());
  state.input.addEventListener("input", notify);
  state.input.addEventListener("change", notify);
  if (state.unitSelect) state.unitSelect.addEventListener("change", notify);
  return state;
}

// A form: {id, title, intro, fields, shared, request(values) -> object, render(result, out, response), submitLabel}
function form(spec) {
  const section = el("section", { class: "card", id: `card-${spec.id}`, "aria-labelledby": `${spec.id}-title` });
  section.append(el("h2", { id: `${spec.id}-title` }, spec.title));
  if (spec.intro) section.append(el("p", { class: "intro" }, spec.intro));
  const formNode = el("form", { class: "calc-form", id: `form-${spec.id}`, novalidate: true });
  const own = spec.fields.map((f) => buildField(spec, f));
  const fields = [...(spec.shared || []), ...own];
  const grid = el("div", { class: "fields" });
  for (const f of own) grid.append(f.wrap);
  formNode.append(grid);
  const formError = el("p", { class: "form-error", id: `${spec.id}-form-error`, "aria-live": "polite" });
  const button = el("button", { type: "submit", class: "primary" }, spec.submitLabel || "Calculate");
  // long work: after 250 ms a Cancel button (ends the worker; calls queue for the fresh one)
  const cancelButton = el("button", { type: "button", class: "small-button" }, "Cancel");
  const busy = el("div", { class: "busy", id: `${spec.id}-busy`, hidden: true, role: "status" }, el("span", {}, "Calculating…"), cancelButton);
  cancelButton.addEventListener("click", () => {
    sequence += 1;
    busy.hidden = true;
    cancel();
    formError.textContent = "Cancelled. Change an input or press the button to try again.";
  });
  formNode.append(el("div", { class: "actions" }, button, formError), busy);
  const out = el("div", { class: "result", id: `${spec.id}-result`, "aria-live": "polite" });
  const warn = el("ul", { class: "warnings", id: `${spec.id}-warnings` });
  section.append(formNode, out, warn);

  let sequence = 0;
  let timer = null;
  let pin = null;
  /** Compute from the inputs shown, or exactly `override` (a request from a pin or share link). */
  async function run(override) {
    const values = {};
    for (const f of fields) values[f.field.id] = f.read();
    const request = override || spec.request(values);
    const mine = ++sequence;
    const busyTimer = setTimeout(() => { busy.hidden = false; }, 250);
    // a field this card cannot do without (spec field `required: true`), left empty: said beside it, no call
    const empty = override ? null : own.find((f) => f.field.required && values[f.field.id].value === "");
    const response = empty
      ? { ok: false, error: { field: empty.field.id, message: `${empty.field.label}: required${empty.field.placeholder ? ` (${empty.field.placeholder})` : ""}.` } }
      : await api(request);
    clearTimeout(busyTimer);
    if (mine !== sequence) return;
    busy.hidden = true;
    for (const f of fields) f.setError("");
    formError.textContent = "";
    warn.replaceChildren();
    section.classList.toggle("is-error", !response.ok);
    if (!response.ok) {
      const { field, message } = response.error;
      const owner = field ? fields.find((f) => f.ownsKey(field)) : null;
      if (owner) owner.setError(message);
      else formError.textContent = message;
      out.classList.add("stale");
      if (pin) pin.update(null);
      return;
    }
    out.classList.remove("stale");
    spec.render(response.result, out, response);
    for (const text of response.warnings || []) warn.append(el("li", {}, text));
    if (pin) pin.update({ request, result: response.result, inputs: snapshot() });
    if (timings.firstResult === null) timings.firstResult = performance.now();
  }
  formNode.addEventListener("submit", (event) => {
    event.preventDefault();
    clearTimeout(timer);
    run();
  });
  const schedule = () => {
    clearTimeout(timer);
    timer = setTimeout(run, 450);
  };
  for (const f of spec.shared || []) f.listeners.push(schedule);
  formNode.addEventListener("input", schedule);
  formNode.addEventListener("change", schedule);
  // Inputs as the store keeps them ("form.field" -> saved value), for pins and share links.
  function snapshot() {
    const inputs = {};
    for (const f of fields) {
      f.save();
      inputs[f.storeKey] = recall(f.storeKey);
    }
    return inputs;
  }
  /** Put saved inputs back into the fields (unknown keys ignored); shared fields tell their other forms. */
  function setInputs(inputs) {
    for (const f of fields) {
      if (!(f.storeKey in inputs)) continue;
      f.load(inputs[f.storeKey]);
      if ((spec.shared || []).includes(f)) f.input.dispatchEvent(new Event("change"));
    }
    clearTimeout(timer);
  }
  const handle = { id: spec.id, node: section, run, fields, out, setInputs, snapshot, storeKeys: () => fields.map((f) => f.storeKey) };
  forms.set(spec.id, handle);
  pin = pinBar({ form: spec.id, title: spec.title, node: section });
  section.append(pin.node);
  whenShown(section, run);
  return handle;
}

// A definition list of results: rows = [[label, text or Node, unit?]]
function resultList(rows, extraClass) {
  const list = el("dl", { class: `values ${extraClass || ""}` });
  for (const [label, value, unit] of rows) {
    const shown = value instanceof Node ? value : numberNode(String(value));
    list.append(el("div", { class: "value" }, el("dt", {}, label), el("dd", {}, shown, unit ? el("span", { class: "unit" }, ` ${unit}`) : null)));
  }
  return list;
}

// A sortable table: columns = [{key, label, value(row) -> sortable, show(row) -> text|Node, numeric}]
function sortableTable(columns, rows, caption) {
  let sortKey = null;
  let direction = 1;
  const table = el("table", { class: "data" });
  if (caption) table.append(el("caption", {}, caption));
  const headRow = el("tr");
  const body = el("tbody");
  function draw() {
    const ordered = rows.slice();
    if (sortKey !== null) {
      const column = columns.find((c) => c.key === sortKey);
      ordered.sort((a, b) => {
        const x = column.value(a);
        const y = column.value(b);
        if (x === y) return 0;
        if (x === null || x === undefined) return 1;
        if (y === null || y === undefined) return -1;
        return (x < y ? -1 : 1) * direction;
      });
    }
    body.replaceChildren(...ordered.map((row) => el("tr", {}, ...columns.map((c) => {
      const shown = c.show(row);
      return el("td", { class: c.numeric ? "num" : null }, shown instanceof Node ? shown : String(shown));
    }))));
    for (const th of headRow.children) {
      const key = th.dataset.key;
      th.setAttribute("aria-sort", key === sortKey ? (direction > 0 ? "ascending" : "descending") : "none");
    }
  }
  for (const column of columns) {
    const button = el("button", { type: "button", class: "sort" }, column.label);
    button.addEventListener("click", () => {
      direction = sortKey === column.key ? -direction : 1;
      sortKey = column.key;
      draw();
    });
    headRow.append(el("th", { scope: "col", "data-key": column.key, class: column.numeric ? "num" : null }, button));
  }
  table.append(el("thead", {}, headRow), body);
  draw();
  return el("div", { class: "table-wrap", tabindex: "0", role: "region", "aria-label": caption || "table" }, table);
}

// ---------- panels and tabs ----------
function registerPanel(panel) {
  panels.push(panel);
}

// Work for panels not on screen waits until their tab is first shown, so the
// visible panel's first results are not queued behind hidden ones.
const pendingByPanel = new Map();
/** Call fn once Python is ready and node's panel is (or becomes) visible. */
function whenShown(node, fn) {
  ready.then(() => {
    const panelNode = node.closest('[role="tabpanel"]');
    if (!panelNode || !panelNode.hidden) {
      fn();
      return;
    }
    if (!pendingByPanel.has(panelNode.id)) pendingByPanel.set(panelNode.id, []);
    pendingByPanel.get(panelNode.id).push(fn);
  });
}

function showTab(id, focus) {
  for (const panel of panels) {
    const selected = panel.id === id;
    panel.tab.setAttribute("aria-selected", String(selected));
    panel.tab.tabIndex = selected ? 0 : -1;
    panel.section.hidden = !selected;
    if (selected && focus) panel.tab.focus();
    const queued = selected ? pendingByPanel.get(panel.section.id) : null;
    if (queued) {
      pendingByPanel.delete(panel.section.id);
      queued.forEach((fn) => fn());
    }
  }
  try {
    localStorage.setItem(TAB_KEY, id);
  } catch (err) {
    // ignore: the first tab is shown next time
  }
}

function buildShell() {
  const tabs = document.getElementById("tabs");
  const main = document.getElementById("main");
  for (const panel of panels) {
    panel.tab = el("button", {
      type: "button", role: "tab", id: `tab-${panel.id}`, "aria-controls": `panel-${panel.id}`, class: "tab",
    }, panel.title);
    panel.tab.addEventListener("click", () => showTab(panel.id, false));
    tabs.append(panel.tab);
    panel.section = el("section", { role: "tabpanel", id: `panel-${panel.id}`, "aria-labelledby": `tab-${panel.id}`, class: "panel" });
    main.append(panel.section);
    panel.build(panel.section);
  }
  tabs.addEventListener("keydown", (event) => {
    const index = panels.findIndex((p) => p.tab === document.activeElement);
    if (index < 0) return;
    let next = null;
    if (event.key === "ArrowRight") next = (index + 1) % panels.length;
    else if (event.key === "ArrowLeft") next = (index - 1 + panels.length) % panels.length;
    else if (event.key === "Home") next = 0;
    else if (event.key === "End") next = panels.length - 1;
    if (next === null) return;
    event.preventDefault();
    showTab(panels[next].id, true);
  });
  if (panels.length === 0) return;
  let first = panels[0].id;
  try {
    const saved = localStorage.getItem(TAB_KEY);
    if (saved && panels.some((p) => p.id === saved)) first = saved;
  } catch (err) {
    // ignore
  }
  showTab(first, false);
}

function registerServiceWorker() {
  if (!("serviceWorker" in navigator) || !location.protocol.startsWith("http")) return;
  const offline = (text) => {
    window.nmrcalcStatus.offline = text;
    const node = document.getElementById("offline-status");
    if (node) node.textContent = text;
  };
  // a worker becomes "installed" only once every file is in the cache (cache.addAll is all or nothing)
  let offered = null;
  const offerReload = (waitingWorker) => {
    if (offered === waitingWorker) return;  // seen both as installing and as waiting
    offered = waitingWorker;
    offline("Ready for offline use (this version); a new version is stored too and waits for a reload.");
    const button = el("button", { type: "button", class: "small-button", id: "update-reload" }, "Reload now");
    button.addEventListener("click", () => {
      navigator.serviceWorker.addEventListener("controllerchange", () => location.reload());
      waitingWorker.postMessage("skip-waiting");
    });
    notice("A new version of nmrcalc is ready: reload to use it (your inputs and pins are kept).", "info");
    document.getElementById("page-notice").append(" ", button);
  };
  const follow = (sw, hadController) => {
    const check = () => {
      if (sw.state === "installed" && hadController) offerReload(sw);
      else if (sw.state === "activated") offline("Ready for offline use: every file of this page is stored in this browser.");
      else if (sw.state === "redundant" && hadController) offline("Ready for offline use (this version); a newer version could not be stored (reload while online to try again).");
      else if (sw.state === "redundant") offline("Not ready for offline use: the files could not all be stored (reload while online to try again).");
    };
    sw.addEventListener("statechange", check);
    check();
  };
  navigator.serviceWorker.register("sw.js").then((registration) => {
    const hadController = Boolean(navigator.serviceWorker.controller);
    if (registration.active && !registration.installing && !registration.waiting) offline("Ready for offline use: every file of this page is stored in this browser.");
    else offline("Storing the files for offline use…");
    if (registration.waiting && hadController) offerReload(registration.waiting);
    if (registration.installing) follow(registration.installing, hadController);
    registration.addEventListener("updatefound", () => follow(registration.installing, Boolean(navigator.serviceWorker.controller)));
  }).catch((err) => {
    offline("Not available for offline use in this browser.");
    console.warn("offline cache unavailable:", err);
  });
}

// One <datalist id="nuclide-list"> for every nucleus input, filled from the API.
function fillNuclideList() {
  const list = el("datalist", { id: "nuclide-list" });
  document.body.append(list);
  // after the calculations queued for the shown panel: the first result does not wait for the list
  ready.then(() => setTimeout(() => api({ op: "nuclides" }).then((response) => {
    if (!response.ok) return;
    list.replaceChildren(...response.result.nuclides.map((n) => el("option", { value: n.symbol }, `${n.element_name || n.element} · I = ${n.spin}`)));
  }), 0));
}

/** Request keys for a magnet field: the text as typed; the unit chosen beside it only
 * names a bare number (MHz ¹H → spectrometer, T → field, kG/G said with the number). */
function magnetRequest(value) {
  const key = value.unit === "MHz" ? "spectrometer" : "field";
  const bare = /^[\s\d.eE+\-\u2212]*$/.test(value.value);
  return { [key]: bare && value.value !== "" && (value.unit === "kG" || value.unit === "G") ? `${value.value} ${value.unit}` : value.value };
}

const MAGNET_UNITS = [
  { unit: "MHz", label: "MHz ¹H" },
  { unit: "T", label: "T" },
  { unit: "kG", label: "kG" },
  { unit: "G", label: "G" },
];

/** A visible message above the panels (text only); empty text hides it. */
function notice(text, kind) {
  let node = document.getElementById("page-notice");
  if (!node) {
    node = el("p", { id: "page-notice", class: "page-notice", role: "status", "aria-live": "polite" });
    document.getElementById("main").prepend(node);
  }
  node.textContent = text || "";
  node.dataset.kind = kind || "info";
  node.hidden = !text;
}

/** The panel id a node sits in, or null. */
function panelOf(node) {
  const panelNode = node && node.closest('[role="tabpanel"]');
  return panelNode ? panelNode.id.replace(/^panel-/, "") : null;
}

function start() {
  startWorker();  // first: Python boots while the panels are built
  fillNuclideList();
  buildShell();
  checkStorage();
  openShareLink(location.hash);
  // caching the files for offline use waits until the first calculations are done
  ready.then(() => setTimeout(registerServiceWorker, 2000));
}

/** The calculation loop of a panel with its own form. call() sends the request(s) and resolves
 * with the replies; show(replies) draws them. Only the latest call is shown, a busy notice
 * appears after 250 ms, Cancel ends the worker; submit (Enter) runs at once and, with delayMs,
 * every input change runs after that pause. Returns {run, schedule}. */
function calculation({ form, fields = [], call, show, delayMs = null, busy, cancelButton, formError, cancelText }) {
  let sequence = 0;
  let timer = null;
  async function run() {
    clearTimeout(timer);
    const mine = ++sequence;
    const busyTimer = setTimeout(() => { busy.hidden = false; }, 250);
    const replies = await call();
    clearTimeout(busyTimer);
    if (mine !== sequence) return;
    busy.hidden = true;
    await show(replies);
  }
  function schedule() {
    clearTimeout(timer);
    timer = setTimeout(run, delayMs);
  }
  cancelButton.addEventListener("click", () => {
    sequence += 1;
    busy.hidden = true;
    cancel();
    formError.textContent = cancelText;
  });
  form.addEventListener("submit", (event) => {
    event.preventDefault();
    run();
  });
  if (delayMs !== null) {
    form.addEventListener("input", schedule);
    form.addEventListener("change", schedule);
    for (const f of fields) f.listeners.push(schedule);
  }
  return { run, schedule };
}

/** Show the panel with this id (its tab selected, queued work run). */
function selectTab(id) {
  showTab(id, false);
}

/** The ids of the registered panels, in tab order. */
function panelIds() {
  return panels.map((p) => p.id);
}

/** The live worker, for the test hook in main.js (a test sends it a message it fails on). */
function debugWorker() {
  return worker;
}

export {
  api, ready, el, fmt, fixed, calculation, nuclideLabel, numberNode, form, sharedField, resultList, sortableTable,
  registerPanel, whenShown, start, timings, magnetRequest, MAGNET_UNITS, remember, recall, cancel, param, declaredField, storageTrouble,
  forms, selectTab, panelIds, panelOf, notice, debugWorker, setSilentLimit,
};
