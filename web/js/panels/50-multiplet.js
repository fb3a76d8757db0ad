// Panel: multiplet builder — one observed line split by groups of partners
// (nuclides, elements with their isotope mixture, or bare spins). Everything
// shown (label, ratio, lines, tree, spectrum, isotopologue traces) comes from
// the API op "multiplet"; this file only collects inputs and draws results.
import * as NMR from "../nmr.js";
import NMRPlot from "../plot.js";
import NMRRows from "../rows.js";

export default {
  id: "multiplet",
  title: "Multiplet builder",
  build(container) {
    const { el, fmt } = NMR;
    const ROWS_KEY = "mult.rows";
    // display only: n significant digits without trailing zeros
    const short = (value, digits) => String(Number(value.toPrecision(digits || 6)));
    const PRESETS = [
      {
        name: "Labelled intermediate with a CD3 group (made up)",
        fixed: { observe: "13C", magnet: ["400", "MHz"], center: "29.8", linewidth: "0.8", shape: "lorentzian" },
        groups: [{ kind: "partner", partner: "2H", count: "3", J: "19.3", J_isotope: "", quadrupolar: "" }],
        abundance: [{ isotope: "2H", percent: "99.8" }],
      },
      {
        name: "Made-up platinum hydride complex",
        fixed: { observe: "1H", magnet: ["500", "MHz"], center: "-12.4", linewidth: "2", shape: "lorentzian" },
        groups: [
          { kind: "partner", partner: "Pt", count: "1", J: "1180", J_isotope: "195Pt", quadrupolar: "" },
          { kind: "partner", partner: "31P", count: "2", J: "14.5", J_isotope: "", quadrupolar: "" },
        ],
        abundance: [],
      },
      {
        name: "Made-up tin reagent",
        fixed: { observe: "1H", magnet: ["400", "MHz"], center: "0.27", linewidth: "0.6", shape: "lorentzian" },
        groups: [{ kind: "partner", partner: "Sn", count: "1", J: "54", J_isotope: "119Sn", quadrupolar: "" }],
        abundance: [],
      },
      {
        name: "Made-up ammonium salt: 14N splitting partly collapsed",
        fixed: { observe: "1H", magnet: ["400", "MHz"], center: "7.1", linewidth: "1", shape: "lorentzian" },
        groups: [{ kind: "partner", partner: "14N", count: "1", J: "52", J_isotope: "", quadrupolar: "", T1: "5" }],
        abundance: [],
      },
      {
        name: "Borohydride salt",
        fixed: { observe: "1H", magnet: ["400", "MHz"], center: "-0.4", linewidth: "3", shape: "lorentzian" },
        groups: [{ kind: "partner", partner: "B", count: "1", J: "81", J_isotope: "11B", quadrupolar: "resolved" }],
        abundance: [],
      },
    ];

    const card = NMRRows.card({
      id: "card-mult", prefix: "mult", title: "Multiplet builder",
      intro: "Split one line by groups of equivalent partners, first order. An element partner brings its isotope mixture: each isotopologue is its own pattern.",
      examplesLabel: "Example scenarios (invented)", examplesHint: "Examples (invented scenarios), one tap to load:", examples: PRESETS, undo: "mult",
      pick: (preset) => {
        for (const [id, value] of Object.entries(preset.fixed)) {
          const f = fixed[id];
          if (Array.isArray(value)) {
            f.input.value = value[0];
            f.unitSelect.value = value[1];
          } else {
            f.input.value = value;
          }
          f.save();
        }
        rows = JSON.parse(JSON.stringify({ groups: preset.groups, abundance: preset.abundance }));
        save();
        drawRows();
        run();
      },
    });

    const fixed = {
      observe: NMR.sharedField("mult", { id: "observe", param: "multiplet.observe", value: "13C", list: "nuclide-list" }),
      magnet: NMR.sharedField("mult", { id: "magnet", either: "multiplet.spectrometer", value: "400", units: NMR.MAGNET_UNITS }),
      center: NMR.sharedField("mult", { id: "center", param: "multiplet.center", value: "77.0", keys: ["center"] }),
      linewidth: NMR.sharedField("mult", { id: "linewidth", param: "multiplet.linewidth", value: "0.5", keys: ["linewidth"] }),
      shape: NMR.sharedField("mult", { id: "shape", param: "multiplet.shape", kind: "select", options: [["lorentzian", "Lorentzian"], ["gaussian", "Gaussian"]] }),
    };
    const formNode = el("form", { class: "calc-form", id: "form-mult", novalidate: true });
    formNode.append(el("div", { class: "fields" }, ...Object.values(fixed).map((f) => f.wrap)));

    // ---------- partner groups and abundance overrides (dynamic rows) ----------
    const saved = NMR.recall(ROWS_KEY);
    let rows = saved && Array.isArray(saved.groups) ? saved : {
      groups: [{ kind: "partner", partner: "2H", count: "3", J: "19.3", J_isotope: "", quadrupolar: "" }],
      abundance: [],
    };
    const groupBox = el("div", { class: "rows", id: "mult-groups" });
    const abundanceBox = el("div", { class: "rows", id: "mult-abundance" });
    const save = () => NMR.remember(ROWS_KEY, rows);
    const rowKit = NMRRows.kit({ onEdit: save, onRemove: () => { save(); drawRows(); schedule(); } });
    const { errors } = rowKit;
    // one row field: {id, key, label | param, value, onInput, attrs}; its messages start with "Group n, …"
    const named = (spec, where) => ({ ...spec, name: `${where}, ${(spec.label || (NMR.param(spec.param) || { label: "" }).label).split(" (")[0]}` });
    const rowInput = (spec, where) => rowKit.input(named(spec, where));
    const rowSelect = (spec, where) => rowKit.select(named(spec, where));

    // T1 of a quadrupolar partner: a text field in ms and a logarithmic slider (0.01 ms … 1000 ms) driving it.
    function t1Field(g, base, key, where) {
      const wrap = rowInput({ id: `${base}-t1`, label: "Partner T1 (ms), quadrupolar only", value: g.T1 || "", key: `${key}.T1`, onInput: (v) => { g.T1 = v; }, attrs: { placeholder: "not set" } }, where);
      const slider = el("input", { type: "range", id: `${base}-t1-slider`, min: "-2", max: "3", step: "0.05", "aria-label": "Partner T1, logarithmic from 0.01 ms to 1000 ms" });
      slider.value = g.T1 && Number(g.T1) > 0 ? String(Math.log10(Number(g.T1))) : "3";
      const text = wrap.querySelector("input");
      slider.addEventListener("input", () => {
        g.T1 = short(10 ** Number(slider.value), 3);
        text.value = g.T1;
        save();
        schedule();
      });
      wrap.insertBefore(slider, wrap.querySelector(".field-error"));
      return wrap;
    }

    function drawRows() {
      errors.reset();
      groupBox.replaceChildren(...rows.groups.map((g, i) => {
        const base = `mult-g${i}`;
        const key = `groups.${i}`;
        const where = `Group ${i + 1}`;
        const box = el("fieldset", { class: "row-card", id: `${base}-box` });
        box.append(el("legend", { class: "row-title" }, where));
        box.append(rowSelect({ id: `${base}-kind`, label: "Partner kind", value: g.kind, options: [["partner", "Named"], ["spin", "Spin only"]], key: `${key}.kind`, onChange: (v) => {
          g.kind = v;
          drawRows();
        } }, where));
        if (g.kind === "spin") {
          box.append(rowInput({ id: `${base}-spin`, label: "Spin I", value: g.spin || "1/2", key: `${key}.spin`, onInput: (v) => { g.spin = v; } }, where));
        } else {
          box.append(rowInput({ id: `${base}-partner`, label: "Partner (e.g. 2H, Pt)", value: g.partner || "", key: `${key}.partner`, onInput: (v) => { g.partner = v; }, attrs: { list: "nuclide-list" } }, where));
        }
        box.append(
          rowInput({ id: `${base}-count`, label: "How many", value: g.count, key: `${key}.count`, onInput: (v) => { g.count = v; }, attrs: { inputmode: "numeric" } }, where),
          rowInput({ id: `${base}-J`, param: "multiplet.groups.J", value: g.J, key: `${key}.J`, onInput: (v) => { g.J = v; } }, where),
        );
        if (g.kind !== "spin") {
          box.append(
            rowInput({ id: `${base}-jiso`, label: "J belongs to isotope (elements)", value: g.J_isotope || "", key: `${key}.J_isotope`, onInput: (v) => { g.J_isotope = v; }, attrs: { list: "nuclide-list", placeholder: "default" } }, where),
            rowSelect({ id: `${base}-quad`, param: "multiplet.groups.quadrupolar", value: g.quadrupolar || "", options: [["", "Usual choice"], ["resolved", "Resolved"], ["collapsed", "Collapsed"]], key: `${key}.quadrupolar`, onChange: (v) => { g.quadrupolar = v; } }, where),
            rowSelect({ id: `${base}-equiv`, label: "Same site as the observed nucleus?", value: g.equivalent || "", options: [["", "Automatic (yes for its own element)"], ["yes", "Yes: equivalent, no splitting by its isotope"], ["no", "No: a neighbouring group"]], key: `${key}.equivalent`, onChange: (v) => { g.equivalent = v; } }, where),
            rowInput({ id: `${base}-siso`, label: "Enrichment here: isotope", value: g.site_isotope || "", key: `${key}.abundance`, onInput: (v) => { g.site_isotope = v; }, attrs: { list: "nuclide-list", placeholder: "e.g. 2H" } }, where),
            rowInput({ id: `${base}-spct`, label: "Enrichment here (%)", value: g.site_percent || "", key: `${key}.abundance.pct`, onInput: (v) => { g.site_percent = v; }, attrs: { placeholder: "request default" } }, where),
            rowInput({ id: `${base}-shiso`, label: "Isotope shift: isotope", value: g.shift_isotope || "", key: `${key}.isotope_shift`, onInput: (v) => { g.shift_isotope = v; }, attrs: { list: "nuclide-list", placeholder: "e.g. 2H" } }, where),
            rowInput({ id: `${base}-shppm`, label: "Shift per atom (ppm)", value: g.shift_ppm || "", key: `${key}.isotope_shift.ppm`, onInput: (v) => { g.shift_ppm = v; }, attrs: { placeholder: "none" } }, where),
            t1Field(g, base, key, where),
          );
        }
        box.append(rowKit.remove(`Remove group ${i + 1}`, () => rows.groups.splice(i, 1)));
        return box;
      }));
      abundanceBox.replaceChildren(...rows.abundance.map((a, i) => {
        const base = `mult-a${i}`;
        const where = `Abundance override ${i + 1}`;
        return el("fieldset", { class: "row-card" }, el("legend", { class: "row-title" }, where),
          rowInput({ id: `${base}-iso`, label: "Isotope", value: a.isotope, key: `abundance.${i}.isotope`, onInput: (v) => { a.isotope = v; }, attrs: { list: "nuclide-list" } }, where),
          rowInput({ id: `${base}-pct`, label: "Abundance (%)", value: a.percent, key: `abundance.${i}.percent`, onInput: (v) => { a.percent = v; } }, where),
          rowKit.remove(`Remove abundance override ${i + 1}`, () => rows.abundance.splice(i, 1)));
      }));
    }

    const addGroup = el("button", { type: "button", class: "small-button", id: "mult-add-group" }, "+ Add partner group");
    addGroup.addEventListener("click", () => {
      rows.groups.push({ kind: "partner", partner: "1H", count: "1", J: "7", J_isotope: "", quadrupolar: "" });
      save();
      drawRows();
      schedule();
    });
    const addAbundance = el("button", { type: "button", class: "small-button", id: "mult-add-abundance" }, "+ Add abundance override");
    addAbundance.addEventListener("click", () => {
      rows.abundance.push({ isotope: "2H", percent: "99.8" });
      save();
      drawRows();
      schedule();
    });
    formNode.append(
      el("h3", { class: "sub-title" }, "Partner groups"), groupBox, el("div", { class: "actions" }, addGroup),
      el("h3", { class: "sub-title" }, "Isotope abundances (optional)"),
      el("p", { class: "hint" }, "Natural abundances are used unless you set one here, e.g. 2H at 99.8 % for a labelled site."),
      abundanceBox, el("div", { class: "actions" }, addAbundance),
    );
    const bar = NMRRows.actionBar("mult", "Build multiplet");
    const { busy, cancel, formError } = bar;
    formNode.append(bar.node);
    card.append(formNode);

    // ---------- results ----------
    const out = el("div", { class: "result", id: "mult-result", "aria-live": "polite" });
    const headline = el("p", { class: "headline", id: "mult-label" });
    const ratio = el("p", { class: "count", id: "mult-ratio" });
    const warn = el("ul", { class: "warnings", id: "mult-warnings" });
    const plots = el("div", { class: "pair" });
    const left = el("div");
    const right = el("div");
    plots.append(left, right);
    left.append(el("h3", { class: "sub-title" }, "Stick diagram"));
    const sticks = NMRPlot.create(left, { label: "Stick diagram of the multiplet", height: 220, fileName: "multiplet-sticks" });
    sticks.node.id = "mult-sticks";
    right.append(el("h3", { class: "sub-title" }, "Splitting tree (to scale, Hz)"));
    const tree = NMRPlot.tree(right, { label: "Splitting tree", fileName: "multiplet-tree" });
    tree.node.id = "mult-tree";
    const treeNote = el("p", { class: "hint", id: "mult-tree-note" });
    right.append(treeNote);
    const spectrumTitle = el("h3", { class: "sub-title" }, "Line-shape spectrum");
    const spectrumBox = el("div");
    const spectrum = NMRPlot.create(spectrumBox, { label: "Line-shape spectrum", height: 300, fileName: "multiplet-spectrum" });
    spectrum.node.id = "mult-spectrum";
    const rulesBox = el("div", { id: "mult-rules" });
    const isoBox = el("div", { id: "mult-isotopologues" });
    const linesBox = el("div", { id: "mult-lines" });
    out.append(headline, ratio, warn, rulesBox, plots, spectrumTitle, spectrumBox, isoBox, linesBox);
    card.append(out);
    // bench notebook: pin / share this result (web/js/notebook.js)
    const pin = NMR.pinSource({
      id: "mult", node: card, fields: Object.values(fixed), run: () => run(),
      rows: { [ROWS_KEY]: { get: () => rows, set: (value) => { rows = value; save(); drawRows(); } } },
    });
    card.append(pin.node);
    container.append(el("div", { class: "cards" }, card));

    function groupRequest(g) {
      const req = { count: g.count.trim() === "" ? "" : Number(g.count), J: g.J.trim() };
      if (Number.isNaN(req.count)) req.count = g.count;
      if (g.kind === "spin") req.spin = (g.spin || "").trim();
      else req.partner = (g.partner || "").trim();
      if (g.kind !== "spin" && (g.J_isotope || "").trim()) req.J_isotope = g.J_isotope.trim();
      if (g.kind !== "spin" && g.quadrupolar) req.quadrupolar = g.quadrupolar;
      // T1 typed as a bare number is in the field's ms; with a unit ("2 ms", "0.5 s") as typed
      if (g.kind !== "spin" && (g.T1 || "").trim()) req.T1 = /^[\s\d.eE+\-\u2212]*$/.test(g.T1) ? `${g.T1.trim()} ms` : g.T1.trim();
      if (g.kind !== "spin" && g.equivalent) req.equivalent = g.equivalent === "yes";
      if (g.kind !== "spin" && (g.site_isotope || "").trim()) req.abundance = { [g.site_isotope.trim()]: (g.site_percent || "").trim() };
      if (g.kind !== "spin" && (g.shift_isotope || "").trim()) req.isotope_shift = { [g.shift_isotope.trim()]: (g.shift_ppm || "").trim() };
      return req;
    }
    function request() {
      const req = { op: "multiplet", observe: fixed.observe.read().value, ...NMR.magnetRequest(fixed.magnet.read()) };
      const center = fixed.center.read().value;
      if (center !== "") req.center = center;
      const width = fixed.linewidth.read().value;
      req.linewidth = width;
      req.shape = fixed.shape.read().value;
      req.spectrum = true;
      req.groups = rows.groups.map(groupRequest);
      const abundance = {};
      for (const a of rows.abundance) if (a.isotope.trim()) abundance[a.isotope.trim()] = a.percent.trim();
      if (Object.keys(abundance).length) req.abundance = abundance;
      return req;
    }

    const report = NMRRows.errorReport(errors, Object.values(fixed), formError, (field) => {
      // request-level abundance is a map by isotope: "abundance.2H" belongs to that isotope's row
      const abundance = /^abundance\.(.+)$/.exec(field);
      const row = abundance ? rows.abundance.findIndex((a) => a.isotope.trim() === abundance[1]) : -1;
      return (row >= 0 ? errors.find(`abundance.${row}.percent`) : null) || errors.find(field, [".partner", ".spin"]);
    });

    // Minor isotopologues around a main species without a magnetic partner are
    // called satellites (e.g. 195Pt or 117/119Sn satellites); otherwise just minor.
    function role(r, i) {
      if (i === 0) return "main";
      return r.isotopologues[0].label.startsWith("spin-0") ? "satellites" : "minor isotopologue";
    }
    function roleNote(r, i) {
      return i === 0 ? "" : ` — ${role(r, i)}`;
    }

    function renderRules(r) {
      const offers = (r.isotope_shift_suggestions || []).map((o) => {
        const button = el("button", { type: "button", class: "small-button", "data-group": o.group },
          `Use ${o.shift_ppm} ppm per ${o.isotope} in group ${o.group + 1}`);
        button.addEventListener("click", () => {
          const g = rows.groups[o.group];
          if (!g) return;
          g.shift_isotope = o.isotope;
          g.shift_ppm = String(o.shift_ppm);
          save();
          drawRows();
          run();
        });
        return el("li", {}, button, ` ${o.note} — ${o.source}.`);
      });
      const pc = r.partial_collapse;
      rulesBox.replaceChildren(
        ...(r.rules || []).map((text) => el("p", { class: "hint rule" }, text)),
        ...(pc ? [el("p", { class: "hint rule", id: "mult-collapse" }, `Group ${pc.group + 1} (I = ${pc.spin}): T1 = ${short(pc.T1_s * 1000, 3)} ms, 2πJT1 = ${short(pc.two_pi_J_T1, 3)} — resolved when ≫ 1, one line when ≪ 1. Line shape: ${pc.source}.`)] : []),
        ...(offers.length ? [el("p", { class: "hint" }, "Isotope shifts are not applied unless you set them. Typical values, one tap to use:"), el("ul", { class: "offers" }, ...offers)] : []),
      );
    }

    // Hand the isotopologue shares of a one-site H/D mixture to the deuteration section
    // (index = number of 2H atoms); a plain regrouping of the result, no physics.
    function rememberShares(r) {
      const isos = r.isotopologues || [];
      const site = isos.length && isos.every((x) => x.atoms && x.atoms.length === 1) && isos.some((x) => x.atoms[0]["2H"]);
      if (!site) return NMR.remember("mult.byD", null);
      const positions = Object.values(isos[0].atoms[0]).reduce((a, b) => a + b, 0);
      const integrals = new Array(positions + 1).fill(0);
      for (const x of isos) integrals[x.atoms[0]["2H"] || 0] += x.share * 100;
      NMR.remember("mult.byD", { positions, integrals });
    }

    function render(r, warnings, sent) {
      renderRules(r);
      rememberShares(r);
      headline.textContent = r.label;
      ratio.textContent = r.ratio ? `Intensity ratio ${r.ratio}` : "Several isotopologues: see the table below for each pattern and share.";
      warn.replaceChildren(...warnings.map((text) => el("li", {}, text)));
      const ppm = r.center_ppm !== null && r.center_ppm !== undefined;
      const key = ppm ? "ppm" : "Hz";
      const xLabel = ppm ? `δ(${r.observe}) / ppm` : `offset from the centre / Hz`;
      const stickTraces = r.isotopologues
        ? r.isotopologues.slice(0, 6).map((iso, i) => ({
          label: `${iso.label} (${short(iso.share * 100, 4)} %)${roleNote(r, i)}`, kind: "sticks",
          x: iso.lines.map((l) => l[key]), y: iso.lines.map((l) => l.intensity * iso.share), color: i,
        }))
        : [{ label: "lines", kind: "sticks", x: r.lines.map((l) => l[key]), y: r.lines.map((l) => l.intensity), color: 0, legend: false }];
      sticks.update({ traces: stickTraces }, false);
      sticks.setXLabel(xLabel);

      const s = r.spectrum;
      const sx = ppm ? s.x_ppm : s.x_Hz;
      const traces = s.traces.slice(0, 5).map((t, i) => ({ label: `${t.label} (${short(t.share * 100, 4)} %)${roleNote(r, i)}`, x: sx, y: t.y, color: i + 1, dashed: true }));
      traces.push({ label: s.traces.length ? "sum of isotopologues" : "spectrum", x: sx, y: s.y, color: 0, legend: s.traces.length > 0 });
      spectrum.update({ traces }, false);
      spectrum.setXLabel(xLabel);
      spectrumTitle.textContent = s.traces.length ? "Line-shape spectrum: each isotopologue and the sum" : "Line-shape spectrum";

      plots.classList.toggle("single", !r.tree);
      right.hidden = !r.tree;
      if (r.tree) {
        const ordered = r.groups.filter((g) => g.J_Hz !== 0).sort((a, b) => Math.abs(b.J_Hz) - Math.abs(a.J_Hz));
        tree.update(r.tree, ["one line", ...ordered.map((g) => `${g.count} × I=${g.spin}, J ${short(g.J_Hz)} Hz`)]);
        treeNote.textContent = r.tree.length < 2 ? "No coupling: a single line." : "Largest coupling first; each row splits every line of the row above.";
      } else {
        tree.update([], []);
        treeNote.textContent = r.isotopologues ? "With an isotope mixture each isotopologue has its own tree; see the traces below." : "Too many lines to draw a tree.";
      }

      if (r.isotopologues) {
        const columns = [
          { key: "label", label: "Isotopologue", value: (x) => x.label, show: (x) => x.label },
          { key: "share", label: "Share (%)", numeric: true, value: (x) => x.share, show: (x) => short(x.share * 100, 5) },
          { key: "mult", label: "Pattern", value: (x) => x.multiplet, show: (x) => x.multiplet },
          { key: "ratio", label: "Ratio", value: (x) => x.ratio, show: (x) => x.ratio },
          { key: "centre", label: ppm ? "Centre (ppm)" : "Centre (Hz)", numeric: true, value: (x) => x.center_Hz, show: (x) => (ppm ? NMR.fixed(x.center_ppm, 4) : NMR.fixed(x.center_Hz, 3)) },
          { key: "role", label: "Role", value: (x) => x.role, show: (x) => x.role },
        ];
        const isoRows = r.isotopologues.map((x, i) => ({ ...x, role: role(r, i) }));
        isoBox.replaceChildren(el("h3", { class: "sub-title" }, "Isotopologues"), NMR.sortableTable(columns, isoRows, "Isotopologues and their shares"));
        if (r.dropped_share > 0) isoBox.append(el("p", { class: "hint" }, `Left out (below the cut-off): ${fmt(r.dropped_share * 100, 3)} %`));
      } else {
        isoBox.replaceChildren();
      }

      linesBox.replaceChildren(...NMRRows.lineTable({
        id: "mult", title: "Lines", request: sent, lines: r.lines, fileName: "multiplet-lines",
        caption: "Lines, high to low ppm: position, offset from the centre and relative intensity (sum 1)",
      }));
    }

    const { run, schedule } = NMR.calculation({
      form: formNode, fields: Object.values(fixed), delayMs: 450, busy, cancelButton: cancel, formError,
      cancelText: "Cancelled. Change an input or press Build multiplet to try again.",
      call: async () => {
        const sent = request();
        return { sent, response: await NMR.api(sent) };
      },
      show: ({ sent, response }) => {
        report.clear();
        card.classList.toggle("is-error", !response.ok);
        if (!response.ok) {
          report.show(response.error.field, response.error.message);
          pin.update(null);
          out.classList.add("stale");
          return;
        }
        out.classList.remove("stale");
        render(response.result, response.warnings || [], sent);
        pin.update({ request: sent, result: response.result });
      },
    });

    drawRows();
    NMR.whenShown(card, run);
  },
};
