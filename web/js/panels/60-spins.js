// Panel: spin-system simulator — a small coupled system solved exactly (API op
// "spin_system"), the first-order pattern for comparison, the pair-by-pair
// first-order check, and the same system at several magnets on one ppm axis.
// No physics here: spectra, lines and checks all come from the API result.
import * as NMR from "../nmr.js";
import NMRPlot from "../plot.js";

export default {
  id: "spins",
  title: "Spin systems",
  build(container) {
    const { el, fmt } = NMR;
    const ROWS_KEY = "spins.rows";
    const short = (value) => String(Number(value.toPrecision(6))); // display only: drop trailing zeros
    const spin = (nucleus, shift, count) => ({ nucleus, shift, count });
    const J = (i, j, value) => ({ i, j, J: value });
    const PRESETS = [
      { name: "AB pair (made-up CH₂ next to a stereocentre)", magnet: "400", spins: [spin("1H", "4.10", "1"), spin("1H", "4.22", "1")], couplings: [J(0, 1, "-12.5")] },
      { name: "ABX-type vinyl group", magnet: "300", spins: [spin("1H", "5.30", "1"), spin("1H", "5.42", "1"), spin("1H", "6.05", "1")], couplings: [J(0, 1, "1.5"), J(0, 2, "10.8"), J(1, 2, "17.4")] },
      {
        name: "AA′BB′ ring (made-up para-disubstituted arene)", magnet: "400",
        spins: [spin("1H", "7.10", "1"), spin("1H", "7.10", "1"), spin("1H", "7.32", "1"), spin("1H", "7.32", "1")],
        couplings: [J(0, 2, "8.4"), J(1, 3, "8.4"), J(0, 3, "0.4"), J(1, 2, "0.4"), J(0, 1, "2.3"), J(2, 3, "2.3")],
      },
      { name: "Ethyl group", magnet: "60", spins: [spin("1H", "1.22", "3"), spin("1H", "3.65", "2")], couplings: [J(0, 1, "7.1")] },
      { name: "¹H–¹⁹F pair (made-up fluoromethyl group)", magnet: "400", spins: [spin("1H", "4.48", "2"), spin("19F", "-215", "1")], couplings: [J(0, 1, "47.5")] },
    ];

    const card = el("section", { class: "card card-wide", id: "card-spins", "aria-labelledby": "spins-title" });
    card.append(
      el("h2", { id: "spins-title" }, "Spin-system simulator"),
      el("p", { class: "intro" }, "Exact spectrum of a few coupled spins, compared with the first-order pattern, and checked pair by pair: where Δν/J is small, first-order rules fail."),
    );
    const presetBar = el("div", { class: "presets", role: "group", "aria-label": "Example spin systems (invented)" });
    card.append(el("p", { class: "hint" }, "Examples (invented), one tap to load:"), presetBar);

    const fixed = {
      observe: NMR.sharedField("spins", { id: "observe", label: "Observed nucleus", value: "1H", list: "nuclide-list", keys: ["observe"] }),
      magnet: NMR.sharedField("spins", { id: "magnet", label: "Magnet", value: "400", inputmode: "decimal", units: NMR.MAGNET_UNITS, keys: ["spectrometer", "field"] }),
      linewidth: NMR.sharedField("spins", { id: "linewidth", label: "Line width (Hz)", value: "0.8", inputmode: "decimal", keys: ["linewidth"] }),
      fields: NMR.sharedField("spins", { id: "fields", label: "Several fields (MHz ¹H, comma-separated)", value: "60, 300, 400, 600, 800, 1200", keys: ["fields"], wide: true }),
      overlay: NMR.sharedField("spins", { id: "overlay", label: "Overlay the first-order pattern", kind: "checkbox", value: true, keys: ["first_order"] }),
    };
    const formNode = el("form", { class: "calc-form", id: "form-spins", novalidate: true });
    formNode.append(el("div", { class: "fields" }, ...Object.values(fixed).map((f) => f.wrap)));

    const saved = NMR.recall(ROWS_KEY);
    let rows = saved && Array.isArray(saved.spins) ? saved : JSON.parse(JSON.stringify(PRESETS[3]));
    let matrixView = false;
    const errorTargets = new Map();
    const save = () => NMR.remember(ROWS_KEY, { spins: rows.spins, couplings: rows.couplings });

    function input(id, label, value, key, onInput, extra) {
      const node = el("input", { type: "text", id, autocomplete: "off", spellcheck: "false", "aria-describedby": `${id}-error`, ...extra });
      node.value = value;
      node.addEventListener("input", () => {
        onInput(node.value);
        save();
      });
      const error = el("p", { class: "field-error", id: `${id}-error`, "aria-live": "polite" });
      errorTargets.set(key, { input: node, error });
      return el("div", { class: "field" }, el("label", { for: id }, label), node, error);
    }
    const spinSelects = [];
    const spinName = (k) => `spin ${k} · ${rows.spins[k].shift} ppm`;
    function renameSpin(k) {
      for (const select of spinSelects) select.options[k].textContent = spinName(k);
    }
    function spinSelect(id, label, value, key, onChange) {
      const node = el("select", { id, "aria-describedby": `${id}-error` });
      rows.spins.forEach((s, k) => node.append(el("option", { value: String(k) }, spinName(k))));
      spinSelects.push(node);
      node.value = String(value);
      node.addEventListener("change", () => {
        onChange(Number(node.value));
        save();
      });
      const error = el("p", { class: "field-error", id: `${id}-error`, "aria-live": "polite" });
      errorTargets.set(key, { input: node, error });
      return el("div", { class: "field" }, el("label", { for: id }, label), node, error);
    }
    function removeButton(label, onClick) {
      const button = el("button", { type: "button", class: "small-button", "aria-label": label }, "Remove");
      button.addEventListener("click", () => {
        onClick();
        save();
        drawRows();
        schedule();
      });
      return el("div", { class: "field" }, button);
    }

    const spinBox = el("div", { class: "rows", id: "spins-list" });
    const couplingBox = el("div", { id: "spins-couplings" });
    const listButton = el("button", { type: "button", class: "small-button", id: "spins-view-list", "aria-pressed": "true" }, "List view");
    const matrixButton = el("button", { type: "button", class: "small-button", id: "spins-view-matrix", "aria-pressed": "false" }, "Matrix view");
    listButton.addEventListener("click", () => { matrixView = false; drawRows(); });
    matrixButton.addEventListener("click", () => { matrixView = true; drawRows(); });

    function drawCouplingList() {
      const box = el("div", { class: "rows" });
      rows.couplings.forEach((c, k) => {
        const base = `spins-c${k}`;
        const where = `couplings.${k}`;
        box.append(el("fieldset", { class: "row-card" },
          el("legend", { class: "row-title" }, `Coupling ${k}`),
          spinSelect(`${base}-i`, "Between", c.i, `${where}.between`, (v) => { c.i = v; }),
          spinSelect(`${base}-j`, "and", c.j, `${where}.between.1`, (v) => { c.j = v; }),
          input(`${base}-J`, "J (Hz)", c.J, `${where}.J`, (v) => { c.J = v; }, { inputmode: "decimal" }),
          removeButton(`Remove coupling ${k}`, () => rows.couplings.splice(k, 1)),
        ));
      });
      const add = el("button", { type: "button", class: "small-button", id: "spins-add-coupling" }, "+ Add coupling");
      add.addEventListener("click", () => {
        rows.couplings.push({ i: 0, j: Math.min(1, rows.spins.length - 1), J: "7" });
        save();
        drawRows();
        schedule();
      });
      return [box, el("div", { class: "actions" }, add)];
    }

    function drawCouplingMatrix() {
      const n = rows.spins.length;
      const head = el("tr", {}, el("th", { scope: "col" }, "J (Hz)"), ...rows.spins.map((_, k) => el("th", { scope: "col" }, `spin ${k}`)));
      const body = el("tbody");
      for (let i = 0; i < n; i += 1) {
        const tr = el("tr", {}, el("th", { scope: "row" }, `spin ${i}`));
        for (let j = 0; j < n; j += 1) {
          const k = rows.couplings.findIndex((c) => (c.i === i && c.j === j) || (c.i === j && c.j === i));
          if (i === j) {
            tr.append(el("td", {}, "—"));
          } else if (j < i) {
            tr.append(el("td", { class: "muted" }, k >= 0 ? rows.couplings[k].J : ""));
          } else {
            const id = `spins-m${i}-${j}`;
            const cell = el("input", { type: "text", id, inputmode: "decimal", autocomplete: "off", "aria-label": `J between spin ${i} and spin ${j} (Hz)` });
            cell.value = k >= 0 ? rows.couplings[k].J : "";
            cell.addEventListener("input", () => {
              const at = rows.couplings.findIndex((c) => (c.i === i && c.j === j) || (c.i === j && c.j === i));
              if (cell.value.trim() === "") {
                if (at >= 0) rows.couplings.splice(at, 1);
              } else if (at >= 0) {
                rows.couplings[at].J = cell.value;
              } else {
                rows.couplings.push({ i, j, J: cell.value });
              }
              save();
            });
            cell.addEventListener("change", () => drawRows());
            if (k >= 0) errorTargets.set(`couplings.${k}.J`, { input: cell, error: null });
            tr.append(el("td", {}, cell));
          }
        }
        body.append(tr);
      }
      const table = el("table", { class: "data matrix" }, el("caption", {}, "Couplings: upper triangle, empty = no coupling"), el("thead", {}, head), body);
      const error = el("p", { class: "field-error", id: "spins-matrix-error", "aria-live": "polite" });
      errorTargets.set("matrix", { input: null, error });
      return [el("div", { class: "table-wrap", role: "region", "aria-label": "coupling matrix", tabindex: "0" }, table), error];
    }

    function drawRows() {
      errorTargets.clear();
      spinSelects.length = 0;
      spinBox.replaceChildren(...rows.spins.map((s, k) => {
        const base = `spins-s${k}`;
        const where = `spins.${k}`;
        return el("fieldset", { class: "row-card" },
          el("legend", { class: "row-title" }, `Spin ${k}`),
          input(`${base}-nucleus`, "Nucleus", s.nucleus, `${where}.nucleus`, (v) => { s.nucleus = v; }, { list: "nuclide-list" }),
          input(`${base}-shift`, "Shift (ppm)", s.shift, `${where}.shift`, (v) => {
            s.shift = v;
            renameSpin(k);
          }, { inputmode: "decimal" }),
          input(`${base}-count`, "Equivalent nuclei", s.count, `${where}.count`, (v) => { s.count = v; }, { inputmode: "numeric" }),
          removeButton(`Remove spin ${k}`, () => {
            rows.spins.splice(k, 1);
            rows.couplings = rows.couplings.filter((c) => c.i !== k && c.j !== k)
              .map((c) => ({ i: c.i > k ? c.i - 1 : c.i, j: c.j > k ? c.j - 1 : c.j, J: c.J }));
          }),
        );
      }));
      listButton.setAttribute("aria-pressed", String(!matrixView));
      matrixButton.setAttribute("aria-pressed", String(matrixView));
      couplingBox.replaceChildren(...(matrixView ? drawCouplingMatrix() : drawCouplingList()));
    }

    const addSpin = el("button", { type: "button", class: "small-button", id: "spins-add-spin" }, "+ Add spin");
    addSpin.addEventListener("click", () => {
      rows.spins.push({ nucleus: "1H", shift: "2.0", count: "1" });
      save();
      drawRows();
      schedule();
    });
    formNode.append(
      el("h3", { class: "sub-title" }, "Spins"),
      el("p", { class: "hint" }, "Spins are numbered from 0, as in the messages below the spectrum."), spinBox, el("div", { class: "actions" }, addSpin),
      el("h3", { class: "sub-title" }, "Couplings"),
      el("div", { class: "actions", role: "group", "aria-label": "Coupling editor view" }, listButton, matrixButton),
      couplingBox,
    );
    const submit = el("button", { type: "submit", class: "primary" }, "Simulate");
    const formError = el("p", { class: "form-error", id: "spins-form-error", "aria-live": "polite" });
    const cancel = el("button", { type: "button", class: "small-button", id: "spins-cancel" }, "Cancel");
    const busy = el("div", { class: "busy", id: "spins-busy", hidden: true, role: "status" }, el("span", {}, "Calculating…"), cancel);
    formNode.append(el("div", { class: "actions" }, submit, busy, formError));
    card.append(formNode);

    // ---------- results ----------
    const out = el("div", { class: "result", id: "spins-result", "aria-live": "polite" });
    const warn = el("ul", { class: "warnings", id: "spins-warnings" });
    const spectrumTitle = el("h3", { class: "sub-title" });
    const spectrumBox = el("div");
    const spectrum = NMRPlot.create(spectrumBox, { label: "Exact spectrum", height: 300, fileName: "spin-system" });
    spectrum.node.id = "spins-spectrum";
    const checkBox = el("div", { id: "spins-checks" });
    const transitionBox = el("div", { id: "spins-transitions" });
    const stackBox = el("div");
    const stack = NMRPlot.create(stackBox, { label: "The system at several fields", height: 460, fileName: "spin-system-fields" });
    stack.node.id = "spins-stack";
    const stackError = el("p", { class: "form-error", id: "spins-stack-error", "aria-live": "polite" });
    out.append(warn, spectrumTitle, spectrumBox, checkBox, transitionBox, el("h3", { class: "sub-title" }, "Several fields on one ppm axis"), stackError, stackBox);
    card.append(out);
    // bench notebook: pin / share this result (web/js/notebook.js)
    const pin = NMR.pinSource({
      id: "spins", node: card, fields: Object.values(fixed), run: () => run(),
      rows: { [ROWS_KEY]: { get: () => rows, set: (value) => { rows = value; save(); drawRows(); } } },
    });
    card.append(pin.node);
    container.append(el("div", { class: "cards" }, card));

    function baseRequest() {
      const req = { op: "spin_system", observe: fixed.observe.read().value, spectrum: true };
      const width = fixed.linewidth.read().value;
      req.linewidth = width;
      req.spins = rows.spins.map((s) => {
        const count = Number(s.count);
        return { nucleus: s.nucleus.trim(), shift: s.shift.trim(), count: s.count.trim() === "" || Number.isNaN(count) ? s.count : count };
      });
      req.couplings = rows.couplings.map((c) => ({ between: [c.i, c.j], J: String(c.J).trim() }));
      return req;
    }
    function fieldList() {
      return fixed.fields.read().value;
    }

    function clearErrors() {
      for (const f of Object.values(fixed)) f.setError("");
      for (const t of errorTargets.values()) {
        if (t.error) t.error.textContent = "";
        if (t.input) {
          t.input.removeAttribute("aria-invalid");
          const field = t.input.closest(".field");
          if (field) field.classList.remove("has-error");
        }
      }
      formError.textContent = "";
      stackError.textContent = "";
    }
    function showError(field, message) {
      const owner = field ? Object.values(fixed).find((f) => f.ownsKey(field)) : null;
      if (owner) return owner.setError(message);
      let key = field || "";
      let target = null;
      while (!target && key) {
        target = errorTargets.get(key) || errorTargets.get(`${key}.J`) || errorTargets.get(`${key}.nucleus`);
        key = key.includes(".") ? key.slice(0, key.lastIndexOf(".")) : "";
      }
      if (target && !target.error) target = { ...target, error: errorTargets.get("matrix").error };
      if (!target) {
        formError.textContent = message;
        return;
      }
      target.error.textContent = message;
      if (target.input) {
        target.input.setAttribute("aria-invalid", "true");
        const wrap = target.input.closest(".field");
        if (wrap) wrap.classList.add("has-error");
      }
    }

    function renderSingle(r, warnings, overlay) {
      warn.replaceChildren(...warnings.map((text) => el("li", {}, text)));
      spectrumTitle.textContent = `Exact spectrum at ${short(r.spectrometer_MHz)} MHz (${fmt(r.field_T, 4)} T)`;
      const traces = [{ label: "exact (second order)", x: r.spectrum.x_ppm, y: r.spectrum.y, color: 0 }];
      if (overlay && r.spectrum.first_order_y) traces.push({ label: "first-order pattern", x: r.spectrum.x_ppm, y: r.spectrum.first_order_y, color: 1, dashed: true });
      spectrum.update({ traces }, true);
      spectrum.setXLabel(`δ(${r.observe}) / ppm`);
      const columns = [
        { key: "pair", label: "Pair", value: (c) => c.pair[0] * 100 + c.pair[1], show: (c) => `${c.labels[0]}–${c.labels[1]} (${c.nucleus})` },
        { key: "dnu", label: "Δν (Hz)", numeric: true, value: (c) => c.delta_nu_Hz, show: (c) => NMR.fixed(c.delta_nu_Hz, 1) },
        { key: "J", label: "J (Hz)", numeric: true, value: (c) => c.J_Hz, show: (c) => NMR.fixed(c.J_Hz, 2) },
        { key: "ratio", label: "Δν/J", numeric: true, value: (c) => c.delta_nu_over_J, show: (c) => (c.delta_nu_over_J === null ? "—" : NMR.fixed(c.delta_nu_over_J, 2)) },
        { key: "first", label: "1st order?", value: (c) => (c.first_order ? 1 : 0), show: (c) => el("span", { class: c.first_order ? "yes" : "no" }, c.first_order ? "yes" : "no") },
        { key: "from", label: "1st order from (MHz)", numeric: true, value: (c) => c.first_order_from_MHz, show: (c) => (c.first_order_from_MHz === null || c.first_order_from_MHz === undefined ? "—" : fmt(c.first_order_from_MHz, 4)) },
      ];
      checkBox.replaceChildren(
        el("h3", { class: "sub-title" }, `First-order check, pair by pair (first order when Δν/J ≥ ${r.first_order_threshold})`),
        r.checks.length ? NMR.sortableTable(columns, r.checks, "Coupled pairs: Δν/J and the magnet where it reaches the first-order limit") : el("p", { class: "hint" }, "No coupled pairs of like nuclides: only those are checked; a coupling between different nuclides (e.g. ¹H–¹⁹F) is treated as first order."),
      );
      transitionBox.replaceChildren(
        el("h3", { class: "sub-title" }, "Clusters"),
        el("ul", { id: "spins-clusters" }, ...r.clusters.map((c) => el("li", {}, `${c.labels.join(", ")}: ${c.method === "exact" ? "exact" : `weak links to first order, positions within about ${fmt(c.error_Hz, 2)} Hz`}`))),
        el("h3", { class: "sub-title" }, "Transitions"),
        NMR.sortableTable([
          { key: "ppm", label: "δ (ppm)", numeric: true, value: (t) => t.ppm, show: (t) => NMR.fixed(t.ppm, 4) },
          { key: "Hz", label: "ν (Hz)", numeric: true, value: (t) => t.Hz, show: (t) => NMR.fixed(t.Hz, 2) },
          { key: "intensity", label: "Intensity", numeric: true, value: (t) => t.intensity, show: (t) => fmt(t.intensity, 4) },
          { key: "spin", label: "Mostly spin", value: (t) => t.spin, show: (t) => t.label },
        ], r.transitions, "Every observed transition: position, intensity and the spin it mostly belongs to"),
      );
    }
    function renderFields(r) {
      const traces = r.fields.map((b, k) => ({ label: `${short(b.spectrometer_MHz)} MHz`, x: b.spectrum.x_ppm, y: b.spectrum.y, color: k % 6, legend: false }));
      stack.update({ traces, stacked: true }, true);
      stack.setXLabel(`δ(${r.observe}) / ppm`);
    }

    const { run, schedule } = NMR.calculation({
      form: formNode, fields: Object.values(fixed), delayMs: 500, busy, cancelButton: cancel, formError,
      cancelText: "Cancelled. Change an input or press Simulate to try again.",
      call: async () => {
        const overlay = fixed.overlay.read().value;
        const single = { ...baseRequest(), ...NMR.magnetRequest(fixed.magnet.read()), first_order: true };
        const several = { ...baseRequest(), fields: fieldList() };
        const [one, many] = await Promise.all([NMR.api(single), NMR.api(several)]);
        return { overlay, single, one, many };
      },
      show: ({ overlay, single, one, many }) => {
        clearErrors();
        card.classList.toggle("is-error", !one.ok);
        if (!one.ok) {
          showError(one.error.field, one.error.message);
          pin.update(null);
          out.classList.add("stale");
          return;
        }
        out.classList.remove("stale");
        renderSingle(one.result, one.warnings || [], overlay);
        pin.update({ request: single, result: one.result });
        if (many.ok) {
          renderFields(many.result);
          stack.node.hidden = false;
        } else {
          if (many.error.field && many.error.field.startsWith("fields")) fixed.fields.setError(many.error.message);
          else stackError.textContent = many.error.message;
          stack.node.hidden = true;
        }
      },
    });

    for (const preset of PRESETS) {
      const button = el("button", { type: "button", class: "preset" }, preset.name);
      button.addEventListener("click", () => NMR.withUndo("spins", `The example “${preset.name}”`, () => {
        fixed.magnet.input.value = preset.magnet;
        fixed.magnet.unitSelect.value = "MHz";
        fixed.magnet.save();
        fixed.observe.input.value = "1H";
        fixed.observe.save();
        rows = JSON.parse(JSON.stringify({ spins: preset.spins, couplings: preset.couplings }));
        save();
        drawRows();
        run();
      }));
      presetBar.append(button);
    }
    drawRows();
    NMR.whenShown(card, run);
  },
};
