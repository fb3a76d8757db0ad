// nmrcalc rows module: the pieces that the panels with their own rows (multiplet
// builder, spin systems, pattern finder) share — the card head with its bar of
// examples, row inputs and selects whose label, unit and default come from the
// op declarations, the map from an API error's field path to the row input it
// belongs to, the submit / busy / cancel bar, and a line table (high to low ppm,
// Hz beside) with Copy and a CSV export that opens with the header block of the
// inputs. No physics here: every number shown comes from an API result.
// An ES module (default export NMRRows); NMR is read only when a function runs.
import * as NMR from "./nmr.js";
import NMRPlot from "./plot.js";
import NMRNotebook from "./notebook.js";

const NMRRows = (() => {
  const el = (...args) => NMR.el(...args);

  /** A wide card: its title, intro and a bar of example buttons; pick(example) loads one
   * (undoably, under NMR.withUndo(undo, …), when `undo` names the panel's form). */
  function card({ id, prefix, title, intro, examplesLabel, examplesHint, examples, pick, undo }) {
    const node = el("section", { class: "card card-wide", id, "aria-labelledby": `${prefix}-title` });
    node.append(el("h2", { id: `${prefix}-title` }, title), el("p", { class: "intro" }, intro));
    const bar = el("div", { class: "presets", role: "group", "aria-label": examplesLabel });
    for (const example of examples) {
      const button = el("button", { type: "button", class: "preset" }, example.name);
      button.addEventListener("click", () => (undo ? NMR.withUndo(undo, `The example “${example.name}”`, () => pick(example)) : pick(example)));
      bar.append(button);
    }
    node.append(el("p", { class: "hint" }, examplesHint), bar);
    return node;
  }

  /** The form's last line: submit button, a busy notice with Cancel (ids `${prefix}-busy`,
   * `${prefix}-cancel`) and the form-level error (`${prefix}-form-error`). */
  function actionBar(prefix, submitLabel, busyText, submitId) {
    const submit = el("button", { type: "submit", class: "primary", id: submitId || null }, submitLabel);
    const formError = el("p", { class: "form-error", id: `${prefix}-form-error`, "aria-live": "polite" });
    const cancel = el("button", { type: "button", class: "small-button", id: `${prefix}-cancel` }, "Cancel");
    const busy = el("div", { class: "busy", id: `${prefix}-busy`, hidden: true, role: "status" }, el("span", {}, busyText || "Calculating…"), cancel);
    return { node: el("div", { class: "actions" }, submit, busy, formError), submit, busy, cancel, formError };
  }

  // label (with the unit) from the declaration named by spec.param; the spec's own label wins
  const declared = (spec) => NMR.declaredField(spec.label ? { param: spec.param, label: spec.label } : { param: spec.param });

  /** The declared default of an item key ("op.list.key") as row text, or `fallback`. */
  function declaredDefault(path, fallback) {
    const decl = NMR.param(path);
    return decl && decl.default !== null && decl.default !== undefined ? String(decl.default) : fallback;
  }

  /**
   * The rows of one panel: kit({onEdit, onRemove}) -> {input, select, remove, errors}.
   * Every row input is registered under its request path (e.g. "spins.1.shift") with a
   * name (text or function: "B, shift") that replaces the path at the start of an API
   * message shown beside it. onEdit runs after each edit, onRemove after a Remove.
   */
  function kit({ onEdit, onRemove }) {
    const targets = new Map();
    function register(key, input, error, name) {
      targets.set(key, { input, error, name });
    }
    function wrapField(id, label, control, error) {
      return el("div", { class: "field" }, label === null ? null : el("label", { for: id }, label), control, error);
    }
    function errorNode(id) {
      return el("p", { class: "field-error", id: `${id}-error`, "aria-live": "polite" });
    }
    /** spec: {id, key, value, onInput(text), label, param ("op.list.key": label and unit from its
     * declaration, the spec's own label wins), name, attrs (more input attributes); label null: none (give attrs["aria-label"])} */
    function input(spec) {
      const field = declared(spec);
      const node = el("input", { type: "text", id: spec.id, autocomplete: "off", spellcheck: "false", "data-key": spec.key, "aria-describedby": `${spec.id}-error`, ...spec.attrs });
      node.value = spec.value ?? "";
      node.addEventListener("input", () => {
        spec.onInput(node.value);
        onEdit();
      });
      const error = errorNode(spec.id);
      register(spec.key, node, error, spec.name || field.label);
      return wrapField(spec.id, spec.label === null ? null : field.label, node, error);
    }
    /** spec: {id, key, value, options: [[value, text]], onChange(value), label, param, name} */
    function select(spec) {
      const field = declared(spec);
      const node = el("select", { id: spec.id, "data-key": spec.key, "aria-describedby": `${spec.id}-error` });
      for (const [value, text] of spec.options) node.append(el("option", { value }, text));
      node.value = String(spec.value);
      node.addEventListener("change", () => {
        spec.onChange(node.value);
        onEdit();
      });
      const error = errorNode(spec.id);
      register(spec.key, node, error, spec.name || field.label);
      return wrapField(spec.id, field.label, node, error);
    }
    /** A Remove button (its aria-label says which row) in a field cell. */
    function remove(label, onClick) {
      const button = el("button", { type: "button", class: "small-button", "aria-label": label }, "Remove");
      button.addEventListener("click", () => {
        onClick();
        onRemove();
      });
      return el("div", { class: "field" }, button);
    }
    const errors = {
      /** Forget every target (before the rows are drawn again). */
      reset: () => targets.clear(),
      /** A target drawn by the panel itself (e.g. a matrix cell, input may be null) with its message slot. */
      add: register,
      /** Empty every message and unmark every input. */
      clear() {
        for (const { input: node, error } of targets.values()) {
          if (error) error.textContent = "";
          if (node) {
            node.removeAttribute("aria-invalid");
            const wrap = node.closest(".field");
            if (wrap) wrap.classList.remove("has-error");
          }
        }
      },
      /** The target of an API error field: that path, else the nearest registered parent path,
       * trying each parent with the given suffixes (e.g. ".J"); null if none. */
      find(field, suffixes) {
        let key = field || "";
        while (key) {
          for (const suffix of ["", ...(suffixes || [])]) {
            if (targets.has(key + suffix)) return targets.get(key + suffix);
          }
          key = key.includes(".") ? key.slice(0, key.lastIndexOf(".")) : "";
        }
        return null;
      },
      /** Show `message` at `target` (from find): a leading "path:" of the message becomes the target's name. */
      show(target, field, message) {
        const name = typeof target.name === "function" ? target.name() : target.name;
        const path = /^([\w]+(?:\.[\w]+)+):\s*/.exec(message);
        const text = path && field && path[1] === field && name ? `${name}: ${message.slice(path[0].length)}` : message;
        target.error.textContent = text;
        if (target.input) {
          target.input.setAttribute("aria-invalid", "true");
          const wrap = target.input.closest(".field");
          if (wrap) wrap.classList.add("has-error");
        }
      },
    };
    return { input, select, remove, errors };
  }

  /**
   * A panel's error display: a fixed field owns its request keys (field.ownsKey), a row target is
   * found by locate(field) (errors.find…), anything else is the form-level error.
   * errorReport(errors, fields, formError, locate) -> {clear(), show(field, message)}
   */
  function errorReport(errors, fields, formError, locate) {
    return {
      clear() {
        for (const f of fields) f.setError("");
        errors.clear();
        formError.textContent = "";
      },
      show(field, message) {
        const owner = field ? fields.find((f) => f.ownsKey(field)) : null;
        if (owner) return owner.setError(message);
        const target = locate(field || "");
        if (target) errors.show(target, field, message);
        else formError.textContent = message;
      },
    };
  }

  const placesOf = (value, places) => (typeof value === "number" ? NMR.fixed(value, places) : "—");
  /**
   * A line table with Copy (tab-separated) and Export CSV (NMRNotebook.linesCSV: the commented
   * header block of every input of `request`), high to low ppm (Hz when a line has no ppm).
   * spec: {id, title, request, lines: [{ppm, Hz, intensity, …}], fileName, caption, places: {ppm, Hz},
   *        hzLabel, note (the CSV's line about Hz), columns: [{key, label, value(line), show(line)}] beyond ppm/Hz/intensity}
   */
  function lineTable(spec) {
    const extra = spec.columns || [];
    const places = { ppm: 5, Hz: 3, ...spec.places };
    const key = (l) => (typeof l.ppm === "number" ? l.ppm : l.Hz);
    const lines = spec.lines.slice().sort((a, b) => key(b) - key(a));
    const columns = [
      { key: "ppm", label: "δ (ppm)", numeric: true, value: (l) => l.ppm, show: (l) => placesOf(l.ppm, places.ppm) },
      { key: "Hz", label: spec.hzLabel || "Offset (Hz)", numeric: true, value: (l) => l.Hz, show: (l) => placesOf(l.Hz, places.Hz) },
      { key: "intensity", label: "Relative intensity", numeric: true, value: (l) => l.intensity, show: (l) => NMR.fmt(l.intensity, 5) },
      ...extra,
    ];
    const cell = (v) => (v === undefined || v === null ? "" : String(v));
    const tsv = [["ppm", "Hz", "intensity", ...extra.map((c) => c.key)].join("\t"),
      ...lines.map((l) => [l.ppm, l.Hz, l.intensity, ...extra.map((c) => c.value(l))].map(cell).join("\t"))].join("\n");
    const copy = el("button", { type: "button", class: "small-button", id: `${spec.id}-copy` }, "Copy table");
    const note = el("span", { class: "hint", "aria-live": "polite" });
    copy.addEventListener("click", () => {
      navigator.clipboard.writeText(tsv).then(() => { note.textContent = "Copied."; }, () => { note.textContent = "Copy is blocked here; use Export CSV."; });
    });
    const csv = el("button", { type: "button", class: "small-button", id: `${spec.id}-csv` }, "Export CSV");
    csv.addEventListener("click", () => NMRPlot.downloadText(`${spec.fileName}.csv`, "text/csv",
      NMRNotebook.linesCSV(spec.request, lines, { columns: extra.map((c) => [c.key, c.value]), note: spec.note })));
    return [
      el("h3", { class: "sub-title" }, `${spec.title} (${lines.length})`),
      el("div", { class: "actions" }, copy, csv, note),
      NMR.sortableTable(columns, lines, spec.caption),
    ];
  }

  return { card, actionBar, kit, errorReport, lineTable, declaredDefault };
})();

export default NMRRows;
