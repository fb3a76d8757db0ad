// Panel: spin-system simulator — a coupled system solved exactly (API op
// "spin_system"), the first-order pattern for comparison, the pair-by-pair
// first-order check, the transitions by spin, expanded views of each multiplet,
// and the same system at several magnets on one ppm axis. Spins carry labels as
// chemists write them (A, B, X or "H-3"). No physics here: spectra, lines,
// transitions and checks all come from the API result.
import * as NMR from "../nmr.js";
import NMRPlot from "../plot.js";
import NMRRows from "../rows.js";

export default {
  id: "spins",
  title: "Spin systems",
  build(container) {
    const { el, fmt } = NMR;
    const ROWS_KEY = "spins.rows";
    const short = (value) => String(Number(value.toPrecision(6))); // display only: drop trailing zeros
    const spin = (label, nucleus, shift, count) => ({ nucleus, shift, count, label });
    const J = (i, j, value) => ({ i, j, J: value });
    const PRESETS = [
      { name: "AB pair (made-up CH₂ next to a stereocentre)", magnet: "400", spins: [spin("A", "1H", "4.10", "1"), spin("B", "1H", "4.22", "1")], couplings: [J(0, 1, "-12.5")] },
      { name: "ABX-type vinyl group", magnet: "300", spins: [spin("A", "1H", "5.30", "1"), spin("B", "1H", "5.42", "1"), spin("X", "1H", "6.05", "1")], couplings: [J(0, 1, "1.5"), J(0, 2, "10.8"), J(1, 2, "17.4")] },
      {
        name: "AA′BB′ ring (made-up para-disubstituted arene)", magnet: "400",
        spins: [spin("A", "1H", "7.10", "1"), spin("A′", "1H", "7.10", "1"), spin("B", "1H", "7.32", "1"), spin("B′", "1H", "7.32", "1")],
        couplings: [J(0, 2, "8.4"), J(1, 3, "8.4"), J(0, 3, "0.4"), J(1, 2, "0.4"), J(0, 1, "2.3"), J(2, 3, "2.3")],
      },
      { name: "Ethyl group", magnet: "60", spins: [spin("CH₃", "1H", "1.22", "3"), spin("CH₂", "1H", "3.65", "2")], couplings: [J(0, 1, "7.1")] },
      { name: "¹H–¹⁹F pair (made-up fluoromethyl group)", magnet: "400", spins: [spin("H", "1H", "4.48", "2"), spin("F", "19F", "-215", "1")], couplings: [J(0, 1, "47.5")] },
      {
        name: "Aryl ring + 3-methylbutyl chain (made-up, 16 H, two clusters joined by weak links)", magnet: "400",
        spins: [spin("H-2", "1H", "7.17", "1"), spin("H-6", "1H", "7.17", "1"), spin("H-3", "1H", "7.27", "1"), spin("H-5", "1H", "7.27", "1"),
          spin("H-4", "1H", "7.16", "1"), spin("H-1′", "1H", "2.62", "2"), spin("H-2′", "1H", "1.50", "2"), spin("H-3′", "1H", "1.60", "1"),
          spin("H-4′", "1H", "0.94", "6")],
        couplings: [J(0, 2, "7.6"), J(1, 3, "7.6"), J(2, 4, "7.4"), J(3, 4, "7.4"), J(0, 4, "1.2"), J(1, 4, "1.2"), J(0, 1, "1.8"),
          J(2, 3, "1.4"), J(0, 3, "0.6"), J(1, 2, "0.6"), J(5, 6, "7.9"), J(6, 7, "6.8"), J(7, 8, "6.6"), J(0, 5, "0.6"), J(1, 5, "0.6")],
      },
    ];

    const card = NMRRows.card({
      id: "card-spins", prefix: "spins", title: "Spin-system simulator",
      intro: "Exact spectrum of coupled spins, compared with the first-order pattern, and checked pair by pair: where Δν/J is small, first-order rules fail.",
      examplesLabel: "Example spin systems (invented)", examplesHint: "Examples (invented), one tap to load:", examples: PRESETS, undo: "spins",
      pick: (preset) => {
        fixed.magnet.input.value = preset.magnet;
        fixed.magnet.unitSelect.value = "MHz";
        fixed.magnet.save();
        fixed.observe.input.value = "1H";
        fixed.observe.save();
        rows = normalise({ spins: preset.spins, couplings: preset.couplings });
        save();
        drawRows();
        run();
      },
    });

    const fixed = {
      observe: NMR.sharedField("spins", { id: "observe", param: "spin_system.observe", value: "1H", list: "nuclide-list", keys: ["observe"] }),
      magnet: NMR.sharedField("spins", { id: "magnet", either: "spin_system.spectrometer", value: "400", units: NMR.MAGNET_UNITS }),
      linewidth: NMR.sharedField("spins", { id: "linewidth", param: "spin_system.linewidth", value: "0.8", keys: ["linewidth"] }),
      fields: NMR.sharedField("spins", { id: "fields", param: "spin_system.fields", value: "60, 300, 400, 600, 800, 1200", wide: true }),
      overlay: NMR.sharedField("spins", { id: "overlay", param: "spin_system.first_order", kind: "checkbox", value: true }),
    };
    const formNode = el("form", { class: "calc-form", id: "form-spins", novalidate: true });
    formNode.append(el("div", { class: "fields" }, ...Object.values(fixed).map((f) => f.wrap)));

    // ---------- spins and couplings (dynamic rows) ----------
    // Every spin row keeps the same keys (pins and share links are checked against this shape).
    function normalise(value) {
      const copy = JSON.parse(JSON.stringify(value));
      return {
        spins: copy.spins.map((s) => ({ nucleus: String(s.nucleus ?? ""), shift: String(s.shift ?? ""), count: String(s.count ?? "1"), label: String(s.label ?? "") })),
        couplings: (copy.couplings || []).map((c) => ({ i: Number(c.i), j: Number(c.j), J: String(c.J ?? "") })),
      };
    }
    const saved = NMR.recall(ROWS_KEY);
    let rows = normalise(saved && Array.isArray(saved.spins) ? saved : PRESETS[3]);
    let matrixView = false;
    const save = () => NMR.remember(ROWS_KEY, { spins: rows.spins, couplings: rows.couplings });
    const rowKit = NMRRows.kit({ onEdit: save, onRemove: () => { save(); drawRows(); schedule(); } });
    const { errors } = rowKit;

    // A spin's name: its typed label, else the first letter A, B, C… (then A1, B1…) no other spin uses.
    const letter = (n) => `${String.fromCharCode(65 + (n % 26))}${n >= 26 ? Math.floor(n / 26) : ""}`;
    function names() {
      const typed = rows.spins.map((s) => s.label.trim());
      const used = new Set(typed.filter(Boolean));
      let next = 0;
      return typed.map((t) => {
        if (t) return t;
        while (used.has(letter(next))) next += 1;
        used.add(letter(next));
        return letter(next);
      });
    }
    const nameOf = (k) => names()[k];
    // nodes whose text follows the labels as they are typed (legends, options, matrix headers)
    let namers = [];
    const follow = (fn) => {
      namers.push(fn);
      fn();
    };
    const named = (node, text) => {
      follow(() => { node.textContent = text(); });
      return node;
    };
    const renameAll = () => namers.forEach((fn) => fn());
    const spinOption = (k) => `${nameOf(k)} · ${rows.spins[k].shift} ppm`;
    const pairName = (c) => `J(${nameOf(c.i)},${nameOf(c.j)})`;

    function spinSelect(c, end, id, label, where) {
      const node = rowKit.select({
        id, key: where, label, value: c[end], options: rows.spins.map((_, k) => [String(k), ""]),
        onChange: (v) => { c[end] = Number(v); renameAll(); }, name: () => `${pairName(c)}, ${label.toLowerCase()}`,
      });
      node.querySelectorAll("option").forEach((option, k) => named(option, () => spinOption(k)));
      return node;
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
          named(el("legend", { class: "row-title" }), () => `Coupling ${pairName(c)}`),
          spinSelect(c, "i", `${base}-i`, "Between", `${where}.between`),
          spinSelect(c, "j", `${base}-j`, "and", `${where}.between.1`),
          rowKit.input({ id: `${base}-J`, key: `${where}.J`, param: "spin_system.couplings.J", value: c.J, onInput: (v) => { c.J = v; }, name: () => pairName(c) }),
          rowKit.remove(`Remove coupling ${pairName(c)}`, () => rows.couplings.splice(k, 1)),
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
      const head = el("tr", {}, el("th", { scope: "col" }, "J (Hz)"), ...rows.spins.map((_, k) => named(el("th", { scope: "col" }), () => nameOf(k))));
      const body = el("tbody");
      const error = el("p", { class: "field-error", id: "spins-matrix-error", "aria-live": "polite" });
      for (let i = 0; i < n; i += 1) {
        const tr = el("tr", {}, named(el("th", { scope: "row" }), () => nameOf(i)));
        for (let j = 0; j < n; j += 1) {
          const k = rows.couplings.findIndex((c) => (c.i === i && c.j === j) || (c.i === j && c.j === i));
          if (i === j) {
            tr.append(el("td", {}, "—"));
          } else if (j < i) {
            tr.append(el("td", { class: "muted" }, k >= 0 ? rows.couplings[k].J : ""));
          } else {
            const id = `spins-m${i}-${j}`;
            const cell = el("input", { type: "text", id, autocomplete: "off", "aria-describedby": "spins-matrix-error" });
            follow(() => cell.setAttribute("aria-label", `J between ${nameOf(i)} and ${nameOf(j)} (Hz)`));
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
            // mirror the lower triangle once focus leaves the matrix, redrawing only the matrix: a redraw of every row replaced the input just tapped (what was typed there was lost)
            cell.addEventListener("focusout", (event) => { if (!event.relatedTarget || !event.relatedTarget.closest(".matrix")) couplingBox.replaceChildren(...drawCouplingMatrix()); });
            if (k >= 0) errors.add(`couplings.${k}.J`, cell, error, () => `J(${nameOf(i)},${nameOf(j)})`);
            tr.append(el("td", {}, cell));
          }
        }
        body.append(tr);
      }
      const table = el("table", { class: "data matrix" }, el("caption", {}, "Couplings: upper triangle, empty = no coupling"), el("thead", {}, head), body);
      errors.add("couplings", null, error, "Couplings");
      return [el("div", { class: "table-wrap", role: "region", "aria-label": "coupling matrix", tabindex: "0" }, table), error];
    }

    function drawRows() {
      errors.reset();
      namers = [];
      spinBox.replaceChildren(...rows.spins.map((s, k) => {
        const base = `spins-s${k}`;
        const where = `spins.${k}`;
        const what = (field) => () => `Spin ${nameOf(k)}, ${field}`;
        const label = rowKit.input({
          id: `${base}-label`, key: `${where}.label`, param: "spin_system.spins.label", value: s.label, name: what("label"),
          onInput: (v) => { s.label = v; renameAll(); }, attrs: { maxlength: "24" },
        });
        follow(() => { label.querySelector("input").placeholder = s.label.trim() ? "" : `${nameOf(k)} (automatic)`; });
        return el("fieldset", { class: "row-card" },
          named(el("legend", { class: "row-title" }), () => `Spin ${nameOf(k)}`),
          label,
          rowKit.input({ id: `${base}-nucleus`, key: `${where}.nucleus`, param: "spin_system.spins.nucleus", value: s.nucleus, onInput: (v) => { s.nucleus = v; }, name: what("nucleus"), attrs: { list: "nuclide-list" } }),
          rowKit.input({ id: `${base}-shift`, key: `${where}.shift`, param: "spin_system.spins.shift", value: s.shift, onInput: (v) => { s.shift = v; renameAll(); }, name: what("shift") }),
          rowKit.input({ id: `${base}-count`, key: `${where}.count`, label: "Equivalent nuclei", value: s.count, onInput: (v) => { s.count = v; }, name: what("equivalent nuclei"), attrs: { inputmode: "numeric" } }),
          rowKit.remove(`Remove spin ${nameOf(k)}`, () => {
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
      const taken = new Set(names());
      let n = 0;
      while (taken.has(letter(n))) n += 1;
      rows.spins.push({ nucleus: "1H", shift: "2.0", count: NMRRows.declaredDefault("spin_system.spins.count", "1"), label: letter(n) });
      save();
      drawRows();
      schedule();
    });
    const bar = NMRRows.actionBar("spins", "Simulate");
    const { busy, cancel, formError } = bar;
    formNode.append(
      el("h3", { class: "sub-title" }, "Spins"),
      el("p", { class: "hint" }, "Each spin has a label (A, B, X… or your own, e.g. H-3): couplings, tables and messages name spins by it."), spinBox, el("div", { class: "actions" }, addSpin),
      el("h3", { class: "sub-title" }, "Couplings"),
      el("div", { class: "actions", role: "group", "aria-label": "Coupling editor view" }, listButton, matrixButton),
      couplingBox,
      bar.node,
    );
    card.append(formNode);

    // ---------- results ----------
    const out = el("div", { class: "result", id: "spins-result", "aria-live": "polite" });
    const warn = el("ul", { class: "warnings", id: "spins-warnings" });
    const spectrumTitle = el("h3", { class: "sub-title" });
    const spectrumBox = el("div");
    const spectrum = NMRPlot.create(spectrumBox, { label: "Exact spectrum", height: 300, fileName: "spin-system" });
    spectrum.node.id = "spins-spectrum";
    const insetBox = el("div", { id: "spins-insets" });
    const checkBox = el("div", { id: "spins-checks" });
    const transitionBox = el("div", { id: "spins-transitions" });
    const stackBox = el("div");
    const stack = NMRPlot.create(stackBox, { label: "The system at several fields", height: 460, fileName: "spin-system-fields" });
    stack.node.id = "spins-stack";
    const stackError = el("p", { class: "form-error", id: "spins-stack-error", "aria-live": "polite" });
    // a large system at several fields takes long: then that view waits for a tap, and the main result
    // is never held back by it (calls run one after another in the worker)
    const stackLater = el("button", { type: "button", class: "small-button", id: "spins-stack-run", hidden: true }, "Draw it at those fields");
    const stackNote = el("p", { class: "hint", id: "spins-stack-note", hidden: true });
    out.append(warn, spectrumTitle, spectrumBox, insetBox, checkBox, transitionBox, el("h3", { class: "sub-title" }, "Several fields on one ppm axis"), stackNote, stackLater, stackError, stackBox);
    card.append(out);
    // bench notebook: pin / share this result (web/js/notebook.js)
    const pin = NMR.pinSource({
      id: "spins", node: card, fields: Object.values(fixed), run: () => run(),
      rows: { [ROWS_KEY]: { get: () => rows, set: (value) => { rows = normalise(value); save(); drawRows(); } } },
    });
    card.append(pin.node);
    container.append(el("div", { class: "cards" }, card));

    function baseRequest() {
      const req = { op: "spin_system", observe: fixed.observe.read().value, spectrum: true };
      req.linewidth = fixed.linewidth.read().value;
      const labels = names();
      req.spins = rows.spins.map((s, k) => {
        const count = Number(s.count);
        return { label: labels[k], nucleus: s.nucleus.trim(), shift: s.shift.trim(), count: s.count.trim() === "" || Number.isNaN(count) ? s.count : count };
      });
      // spins named by label: a pin, a CSV header or the command line reads "A, B", never an index
      req.couplings = rows.couplings.map((c) => ({ between: [labels[c.i], labels[c.j]], J: String(c.J).trim() }));
      return req;
    }

    const report = NMRRows.errorReport(errors, Object.values(fixed), formError,
      (field) => errors.find(field, [".J", ".nucleus"]) || (field.startsWith("couplings") ? errors.find("couplings") : null));

    // ---------- expanded views: one window per multiplet ----------
    // A window spans the transitions that mostly belong to one spin (those of at least 1 % of its
    // strongest), widened along the sampled trace until it falls below 2 % of the window's top,
    // plus 10 % each side; overlapping windows are merged. Only positions are chosen here: the
    // trace drawn is the API's, cut to the window.
    function multipletWindows(r) {
      const x = r.spectrum.x_ppm;
      const y = r.spectrum.y;
      const bySpin = new Map();
      for (const t of r.transitions) {
        if (!bySpin.has(t.spin)) bySpin.set(t.spin, []);
        bySpin.get(t.spin).push(t);
      }
      const windows = [];
      for (const lines of bySpin.values()) {
        const top = Math.max(...lines.map((t) => t.intensity));
        const kept = lines.filter((t) => t.intensity >= 0.01 * top);
        let lo = Math.min(...kept.map((t) => t.ppm));
        let hi = Math.max(...kept.map((t) => t.ppm));
        let a = x.findIndex((v) => v >= lo);
        let b = x.length - 1 - [...x].reverse().findIndex((v) => v <= hi);
        if (a < 0 || b < 0) continue;
        if (b < a) [a, b] = [b, a];
        let peak = 0;
        for (let i = a; i <= b; i += 1) peak = Math.max(peak, y[i]);
        while (a > 0 && y[a - 1] > 0.02 * peak) a -= 1;
        while (b < x.length - 1 && y[b + 1] > 0.02 * peak) b += 1;
        lo = x[a];
        hi = x[b];
        const pad = 0.1 * (hi - lo);
        windows.push({ lo: lo - pad, hi: hi + pad, spins: [lines[0].spin] });
      }
      windows.sort((p, q) => p.lo - q.lo);
      const merged = [];
      for (const w of windows) {
        const last = merged[merged.length - 1];
        if (last && w.lo <= last.hi) {
          last.hi = Math.max(last.hi, w.hi);
          last.spins.push(...w.spins);
        } else {
          merged.push({ ...w, spins: [...w.spins] });
        }
      }
      // labels in input order, so a merged window reads "A, A′", not "A′, A"
      const labelOf = new Map(r.transitions.map((t) => [t.spin, t.label]));
      for (const w of merged) w.labels = w.spins.sort((p, q) => p - q).map((k) => labelOf.get(k));
      const full = x[x.length - 1] - x[0];
      // one window showing most of the spectrum is the spectrum itself
      return merged.length === 1 && merged[0].hi - merged[0].lo > 0.6 * full ? [] : merged.reverse();
    }
    function renderInsets(r) {
      const windows = multipletWindows(r);
      const cut = (xs, ys, w) => {
        const keep = xs.map((v, i) => i).filter((i) => xs[i] >= w.lo && xs[i] <= w.hi);
        return { x: keep.map((i) => xs[i]), y: keep.map((i) => ys[i]) };
      };
      insetBox.replaceChildren();
      if (!windows.length) return;
      insetBox.append(
        el("h3", { class: "sub-title" }, "Each multiplet expanded"),
        el("p", { class: "hint" }, "Below each trace, the transitions as lines: a splitting narrower than the line width shows there."),
      );
      windows.forEach((w, k) => {
        const box = el("div", { class: "inset", id: `spins-inset-${k}` });
        const lines = r.transitions.filter((t) => t.ppm >= w.lo && t.ppm <= w.hi);
        box.append(el("h4", { class: "inset-title" }, `${w.labels.join(", ")}: δ ${NMR.fixed(w.hi, 3)} to ${NMR.fixed(w.lo, 3)} ppm, ${lines.length} transitions`));
        insetBox.append(box);
        const plot = NMRPlot.create(box, { label: `Expanded multiplet ${w.labels.join(", ")}`, height: 220, fileName: `spin-system-${k + 1}`, caption: null });
        plot.update({
          traces: [
            { label: "spectrum", ...cut(r.spectrum.x_ppm, r.spectrum.y, w), color: 0, legend: false },
            { label: "transitions", kind: "sticks", x: lines.map((t) => t.ppm), y: lines.map((t) => t.intensity), color: 2, legend: false },
          ],
          stacked: true,
          stackLabels: ["spectrum", "lines"],
        }, false);
        plot.setXLabel(`δ(${r.observe}) / ppm`);
      });
    }

    function renderSingle(r, warnings, overlay, sent) {
      warn.replaceChildren(...warnings.map((text) => el("li", {}, text)));
      spectrumTitle.textContent = `Exact spectrum at ${short(r.spectrometer_MHz)} MHz (${fmt(r.field_T, 4)} T)`;
      const traces = [{ label: "exact (second order)", x: r.spectrum.x_ppm, y: r.spectrum.y, color: 0 }];
      if (overlay && r.spectrum.first_order_y) traces.push({ label: "first-order pattern", x: r.spectrum.x_ppm, y: r.spectrum.first_order_y, color: 1, dashed: true });
      spectrum.update({ traces }, true);
      spectrum.setXLabel(`δ(${r.observe}) / ppm`);
      renderInsets(r);
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
        el("ul", { id: "spins-clusters" }, ...r.clusters.map((c) => el("li", {}, `${c.labels.join(", ")}: ${c.method === "exact" ? "exact" : `weak links to first order${c.partner_field ? " (solved again in each state of its partner)" : ""}, positions within about ${fmt(c.error_Hz, 2)} Hz`}`))),
        ...NMRRows.lineTable({
          id: "spins-lines", title: "Transitions", request: sent, lines: r.transitions, fileName: "spin-system-transitions",
          caption: "Every observed transition, high to low ppm: position, intensity and the spin it mostly belongs to (the one whose ⟨I_z⟩ changes most, the spin that flips)",
          places: { ppm: 4, Hz: 3 }, hzLabel: "ν from 0 ppm (Hz)", note: "offset from 0 ppm of the observed nucleus",
          columns: [{ key: "spin", label: "Mostly spin", value: (t) => t.label, show: (t) => t.label }],
        }),
      );
    }
    function renderFields(r) {
      const traces = r.fields.map((b, k) => ({ label: `${short(b.spectrometer_MHz)} MHz`, x: b.spectrum.x_ppm, y: b.spectrum.y, color: k % 6, legend: false }));
      stack.update({ traces, stacked: true }, true);
      stack.setXLabel(`δ(${r.observe}) / ppm`);
    }

    let stackSequence = 0; // a tap's several-fields reply is shown only if no newer result came meanwhile
    const STACK_WAIT_S = 4; // the several-fields view is computed at once when it takes less (estimated)
    const { run, schedule } = NMR.calculation({
      form: formNode, fields: Object.values(fixed), delayMs: 500, busy, cancelButton: cancel, formError,
      cancelText: "Cancelled. Change an input or press Simulate to try again.",
      call: async () => {
        const overlay = fixed.overlay.read().value;
        const single = { ...baseRequest(), ...NMR.magnetRequest(fixed.magnet.read()), first_order: true };
        const several = { ...baseRequest(), fields: fixed.fields.read().value };
        const started = performance.now();
        const one = await NMR.api(single);
        const seconds = (performance.now() - started) / 1000;
        // an empty list of several fields: no several-fields view (not an error about the magnet)
        const count = several.fields === "" ? 0 : String(several.fields).split(/[,;\s]+/).filter(Boolean).length;
        let many = null;
        if (count && one.ok && seconds * count > STACK_WAIT_S) many = { later: true, several, seconds: seconds * count };
        else if (count) many = await NMR.api(several);
        return { overlay, single, one, many };
      },
      show: ({ overlay, single, one, many }) => {
        report.clear();
        stackError.textContent = "";
        stackSequence += 1;
        stackLater.hidden = true;
        stackNote.hidden = true;
        card.classList.toggle("is-error", !one.ok);
        if (!one.ok) {
          report.show(one.error.field, one.error.message);
          pin.update(null);
          out.classList.add("stale");
          return;
        }
        out.classList.remove("stale");
        renderSingle(one.result, one.warnings || [], overlay, single);
        pin.update({ request: single, result: one.result });
        if (many && many.later) {
          stack.node.hidden = true;
          stackNote.hidden = false;
          stackNote.textContent = `This system takes about ${Math.ceil(many.seconds)} s at all the fields listed above, so that view waits for you.`;
          stackLater.hidden = false;
          stackLater.onclick = async () => {
            const mine = ++stackSequence;
            stackLater.disabled = true;
            stackNote.textContent = "Working out the other fields…";
            const reply = await NMR.api(many.several);
            stackLater.disabled = false;
            if (mine !== stackSequence) return;
            stackLater.hidden = true;
            stackNote.hidden = true;
            showFields(reply);
          };
        } else {
          showFields(many);
        }
      },
    });
    function showFields(many) {
      if (!many) {
        stack.node.hidden = true;
      } else if (many.ok) {
        renderFields(many.result);
        stack.node.hidden = false;
      } else {
        if (many.error.field && many.error.field.startsWith("fields")) fixed.fields.setError(many.error.message);
        else stackError.textContent = many.error.message;
        stack.node.hidden = true;
      }
    }

    drawRows();
    NMR.whenShown(card, run);
  },
};
