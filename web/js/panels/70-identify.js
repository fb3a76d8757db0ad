// Panel: pattern finder — measured lines of one multiplet in, ranked
// first-order explanations out (which groups of equivalent partners, how many,
// which J). Every candidate, score, predicted line and note comes from the API
// op "identify"; this file only collects inputs and draws the answer.
import * as NMR from "../nmr.js";
import NMRPlot from "../plot.js";
import NMRRows from "../rows.js";

export default {
  id: "identify",
  title: "Pattern finder",
  build(container) {
    const { el } = NMR;
    const MODE_KEY = "ident.mode";
    const LIST_KEY = "ident.peaklist";
    const ROWS_KEY = "ident.rows";
    // display only: n significant digits without trailing zeros
    const short = (value, digits) => String(Number(value.toPrecision(digits || 6)));
    const DEMOS = [
      {
        name: "Made-up CD₃ ester carbon, ¹³C (ppm list)",
        observe: "13C", magnet: "400", partners: "2H, H",
        peaklist: "ppm\theight\n20.2616\t1.05\n20.4541\t2.90\n20.6471\t6.10\n20.8401\t7.00\n21.0327\t5.90\n21.2259\t3.10\n21.4186\t0.96\n",
      },
      {
        name: "Made-up vinyl proton, ¹H (Hz list)",
        observe: "1H", magnet: "400", partners: "",
        peaklist: "Hz,intensity\n2400.65,1.00\n2404.10,2.00\n2407.55,1.00\n2416.45,1.00\n2419.90,2.00\n2423.35,1.00\n",
      },
    ];

    const card = NMRRows.card({
      id: "card-ident", prefix: "ident", title: "Pattern finder",
      intro: "Give the measured lines of one multiplet. The finder ranks first-order explanations: groups of equivalent partners, how many of each, and their J.",
      examplesLabel: "Example peak lists (invented)", examplesHint: "Examples (invented samples), one tap to load:", examples: DEMOS,
      pick: (demo) => {
        fixed.observe.input.value = demo.observe;
        fixed.magnet.input.value = demo.magnet;
        fixed.magnet.unitSelect.value = "MHz";
        fixed.partners.input.value = demo.partners;
        fixed.unit.input.value = "";
        for (const f of [fixed.observe, fixed.magnet, fixed.partners, fixed.unit]) f.save();
        peaklist.value = demo.peaklist;
        NMR.remember(LIST_KEY, peaklist.value);
        setMode("paste");
        run();
      },
    });

    const fixed = {
      observe: NMR.sharedField("ident", { id: "observe", param: "identify.observe", value: "1H", list: "nuclide-list" }),
      magnet: NMR.sharedField("ident", {
        id: "magnet", either: "identify.spectrometer", value: "400", units: NMR.MAGNET_UNITS,
        hint: "Needed for ppm positions; blank for Hz offsets only.",
      }),
      unit: NMR.sharedField("ident", {
        id: "unit", param: "identify.unit", kind: "select",
        options: [["", "Auto (header or guess)"], ["Hz", "Hz"], ["ppm", "ppm"]],
      }),
      partners: NMR.sharedField("ident", {
        id: "partners", param: "identify.partners", value: "", placeholder: "e.g. H, 2H, B, Pt",
        hint: "Nuclides, elements or spins (1/2, spin=3/2), comma-separated. Blank: spin 1/2 first on 1H, 13C, 19F and 31P (higher spins only when the intensities need them), and natural-abundance satellites for a weak symmetric pair.",
      }),
      tolerance: NMR.sharedField("ident", {
        id: "tolerance", param: "identify.tolerance", value: "", placeholder: "from the data",
      }),
      linewidth: NMR.sharedField("ident", {
        id: "linewidth", param: "identify.linewidth", optional: true, value: "", placeholder: "not known",
      }),
      resolution: NMR.sharedField("ident", {
        id: "resolution", param: "identify.digital_resolution", optional: true, value: "", placeholder: "not known",
      }),
      maxGroups: NMR.sharedField("ident", {
        id: "max_groups", param: "identify.max_groups", kind: "select",
        options: [["3", "3"], ["2", "2"], ["1", "1"]],
      }),
    };
    const formNode = el("form", { class: "calc-form", id: "form-ident", novalidate: true });
    formNode.append(el("div", { class: "fields" }, ...Object.values(fixed).map((f) => f.wrap)));

    // ---------- the measured lines: a pasted list or typed rows ----------
    let mode = NMR.recall(MODE_KEY) === "table" ? "table" : "paste";
    const modeBox = el("div", { class: "mode-switch", id: "ident-mode", role: "group", "aria-labelledby": "ident-mode-title" },
      el("span", { class: "mode-title", id: "ident-mode-title" }, "Measured lines:"));
    const modeButtons = {};
    for (const [value, text] of [["paste", "Paste a list"], ["table", "Type lines"]]) {
      const button = el("button", { type: "button", class: "small-button mode-button", id: `ident-mode-${value}` }, text);
      button.addEventListener("click", () => setMode(value));
      modeButtons[value] = button;
      modeBox.append(button);
    }
    function setMode(value) {
      mode = value;
      NMR.remember(MODE_KEY, mode);
      showMode();
    }

    const pasteBox = el("div", { class: "field", id: "ident-paste" });
    const peaklist = el("textarea", {
      id: "ident-peaklist", rows: "8", spellcheck: "false", autocomplete: "off",
      "aria-describedby": "ident-peaklist-hint ident-peaklist-error",
      placeholder: "Hz\tintensity\n1230.5\t1\n1237.5\t2\n1244.5\t1",
    });
    peaklist.value = NMR.recall(LIST_KEY) || "";
    peaklist.addEventListener("input", () => NMR.remember(LIST_KEY, peaklist.value));
    const peaklistError = el("p", { class: "field-error", id: "ident-peaklist-error", "aria-live": "polite" });
    pasteBox.append(
      el("label", { for: "ident-peaklist" }, "Peak list (one peak a line: position, intensity)"),
      peaklist,
      el("p", { class: "hint", id: "ident-peaklist-hint" }, "Columns split by commas, tabs or spaces; a header line may name them (ppm, Hz, intensity). Copied tables and the multiplet builder's CSV work as they are."),
      peaklistError,
    );

    const saved = NMR.recall(ROWS_KEY);
    let rows = Array.isArray(saved) && saved.length ? saved : [{ position: "", intensity: "1" }];
    const tableBox = el("div", { id: "ident-table-box" });
    const rowsBody = el("tbody", { id: "ident-rows" });
    const linesError = el("p", { class: "field-error", id: "ident-lines-error", "aria-live": "polite" });
    const saveRows = () => NMR.remember(ROWS_KEY, rows);
    const rowKit = NMRRows.kit({ onEdit: saveRows, onRemove: () => { saveRows(); drawRows(); } });
    const { errors } = rowKit;

    // a table cell: the input named by its aria-label (the column head labels it on screen);
    // a bare position is in the unit chosen above, or carries its own ("2412.5 Hz"), so no decimal keypad
    function cellInput(i, key, attrs) {
      const label = NMR.param(`identify.lines.${key}`)?.label || key;
      return el("td", {}, rowKit.input({
        id: `ident-l${i}-${key}`, key: `lines.${i}.${key}`, label: null, value: rows[i][key], name: `Line ${i + 1}, ${label.toLowerCase()}`,
        onInput: (v) => { rows[i][key] = v; }, attrs: { "aria-label": `Line ${i + 1} ${label.toLowerCase()}`, ...attrs },
      }));
    }
    function drawRows() {
      errors.reset();
      errors.add("peaklist", peaklist, peaklistError, null);
      errors.add("lines", null, linesError, null);
      rowsBody.replaceChildren(...rows.map((_, i) => el("tr", {},
        el("th", { scope: "row", class: "num" }, String(i + 1)),
        cellInput(i, "position", {}),
        cellInput(i, "intensity", { inputmode: "decimal" }),
        el("td", {}, rowKit.remove(`Remove line ${i + 1}`, () => {
          rows.splice(i, 1);
          if (!rows.length) rows.push({ position: "", intensity: "1" });
        })))));
    }
    const addRow = el("button", { type: "button", class: "small-button", id: "ident-add-line" }, "+ Add line");
    addRow.addEventListener("click", () => {
      rows.push({ position: "", intensity: "1" });
      saveRows();
      drawRows();
      document.getElementById(`ident-l${rows.length - 1}-position`).focus();
    });
    const linesTable = el("table", { class: "data compact lines-input" },
      el("caption", {}, "Measured lines"),
      el("thead", {}, el("tr", {}, el("th", { scope: "col" }, "#"), el("th", { scope: "col" }, "Position"), el("th", { scope: "col" }, "Intensity"), el("th", { scope: "col" }, el("span", { class: "hint" }, "Row")))),
      rowsBody);
    tableBox.append(el("p", { class: "hint" }, "Positions in the unit chosen above, or with their own unit (2412.5 Hz, 6.03 ppm). Rows with no position are skipped."), el("div", { class: "table-wrap" }, linesTable), linesError, el("div", { class: "actions" }, addRow));

    function showMode() {
      pasteBox.hidden = mode !== "paste";
      tableBox.hidden = mode !== "table";
      for (const [value, button] of Object.entries(modeButtons)) button.setAttribute("aria-pressed", String(value === mode));
    }

    const bar = NMRRows.actionBar("ident", "Find patterns", "Searching…", "ident-find");
    const { busy, cancel, formError } = bar;
    formNode.append(modeBox, pasteBox, tableBox, bar.node);
    card.append(formNode);

    // ---------- results ----------
    const out = el("div", { class: "result", id: "ident-result", "aria-live": "polite", hidden: true });
    const headline = el("p", { class: "headline", id: "ident-label" });
    const centre = el("p", { class: "count", id: "ident-centre" });
    const candidatesBox = el("div", { id: "ident-candidates" });
    const plotTitle = el("h3", { class: "sub-title" }, "Measured lines and the chosen candidate");
    const plotBox = el("div");
    const plot = NMRPlot.create(plotBox, { label: "Measured lines overlaid with the chosen candidate's predicted lines", height: 260, fileName: "pattern-finder" });
    plot.node.id = "ident-plot";
    const STACK_KEY = "ident.stacked";
    const stackBox = el("input", { type: "checkbox", id: "ident-stacked" });
    stackBox.checked = Boolean(NMR.recall(STACK_KEY));
    stackBox.addEventListener("change", () => {
      NMR.remember(STACK_KEY, stackBox.checked);
      if (result) drawPlot();
    });
    const stackLabel = el("label", { class: "check", for: "ident-stacked" }, stackBox, el("span", {}, "Draw measured and predicted in separate rows"));
    const openBox = el("div", { class: "actions" });
    const openButton = el("button", { type: "button", class: "small-button", id: "ident-open-multiplet" }, "Open in multiplet builder");
    const openNote = el("span", { class: "hint", id: "ident-open-note" }, "Loads the chosen candidate's groups there, and its centre if the list is in ppm.");
    openBox.append(openButton, openNote);
    const notes = el("ul", { class: "notes", id: "ident-notes" });
    const warn = el("ul", { class: "warnings", id: "ident-warnings" });
    const linesBox = el("div", { id: "ident-lines" });
    out.append(headline, centre, warn, candidatesBox, plotTitle, plotBox, stackLabel, openBox, linesBox, el("h3", { class: "sub-title" }, "Notes"), notes);
    card.append(out);
    const pin = NMR.pinSource({
      id: "ident", node: card, fields: Object.values(fixed), run: () => run(),
      rows: {
        [ROWS_KEY]: { get: () => rows, set: (value) => { rows = value.length ? value : [{ position: "", intensity: "1" }]; saveRows(); drawRows(); } },
        [LIST_KEY]: { get: () => peaklist.value, set: (value) => { peaklist.value = String(value); NMR.remember(LIST_KEY, peaklist.value); } },
        [MODE_KEY]: { get: () => mode, set: (value) => setMode(value === "table" ? "table" : "paste") },
      },
    });
    card.append(pin.node);
    container.append(el("div", { class: "cards" }, card));

    // spin of each nuclide, from the API, to describe a named partner group
    // (asked for again if an earlier ask was cancelled)
    let spinMap = null;
    async function spinOf() {
      if (spinMap) return spinMap;
      const response = await NMR.api({ op: "nuclides" });
      if (!response.ok) return new Map();
      spinMap = new Map(response.result.nuclides.map((n) => [n.symbol, n.spin]));
      return spinMap;
    }

    function partnerList(text) {
      return text.split(/[,;]/).map((p) => p.trim()).filter(Boolean);
    }
    let sentRows = [];
    function request() {
      const req = { op: "identify", observe: fixed.observe.read().value };
      const magnet = fixed.magnet.read();
      if (magnet.value !== "") Object.assign(req, NMR.magnetRequest(magnet));
      const unit = fixed.unit.read().value;
      if (unit) req.unit = unit;
      const partners = partnerList(fixed.partners.read().value);
      if (partners.length) req.partners = partners;
      const tolerance = fixed.tolerance.read().value;
      if (tolerance !== "") req.tolerance = tolerance;
      for (const [key, f] of [["linewidth", fixed.linewidth], ["digital_resolution", fixed.resolution]]) {
        const text = f.read().value;
        if (text !== "") req[key] = text;
      }
      req.max_groups = Number(fixed.maxGroups.read().value);
      if (mode === "paste") {
        req.peaklist = peaklist.value;
      } else {
        // rows with no position are left out; sentRows maps a request index back to its row
        sentRows = rows.map((row, i) => (row.position.trim() ? i : -1)).filter((i) => i >= 0);
        req.lines = sentRows.map((i) => rows[i]).map((row) => {
          const y = row.intensity.trim();
          const number = Number(y);
          return { position: row.position.trim(), intensity: y !== "" && Number.isFinite(number) ? number : y };
        });
      }
      return req;
    }

    const report = NMRRows.errorReport(errors, Object.values(fixed), formError, (key) => {
      if (key === "peaklist" || (key === "lines" && mode === "paste")) return errors.find("peaklist");
      if (!key.startsWith("lines")) return null;
      // a request index of "lines" is the sentRows[index]-th typed row (empty rows are not sent)
      const [, k, ...rest] = key.split(".");
      return errors.find(k === undefined ? "lines" : ["lines", sentRows[Number(k)], ...rest].join("."), [".position"]);
    });

    function groupText(g, spins) {
      const J = `J ${short(g.J_Hz, 5)} Hz`;
      if (g.spin !== undefined) return `${g.count} × spin (I=${g.spin}), ${J}`;
      if (g.J_isotope) return `${g.count} × ${g.partner} (isotope mix), ${J} to ${g.J_isotope} (I=${spins.get(g.J_isotope) ?? "?"})`;
      return `${g.count} × ${g.partner} (I=${spins.get(g.partner) ?? "?"}), ${J}`;
    }

    let result = null;
    let sentRequest = null;
    let chosen = 0;
    let pickButtons = [];
    function drawPlot() {
      const r = result;
      const key = r.unit !== "Hz" && r.center_ppm !== null ? "ppm" : "Hz";
      const cand = r.candidates[chosen];
      plot.update({
        traces: [
          { label: "measured", kind: "sticks", x: r.observed.map((l) => l[key]), y: r.observed.map((l) => l.intensity), color: 0 },
          { label: `candidate ${chosen + 1}: ${cand.label}`, kind: "sticks", dashed: true, x: cand.lines.map((l) => l[key]), y: cand.lines.map((l) => l.intensity), color: 1 },
        ],
        stacked: stackBox.checked,
        stackLabels: ["measured", `candidate ${chosen + 1}`],
      }, false);
      plot.setXLabel(key === "ppm" ? `δ(${r.observe}) / ppm` : "position / Hz");
    }
    function choose(i, focus) {
      chosen = i;
      pickButtons.forEach((b, j) => {
        b.setAttribute("aria-pressed", String(j === i));
        b.closest("tr").classList.toggle("is-chosen", j === i);
      });
      if (focus) pickButtons[i].focus();
      drawPlot();
      linesBox.replaceChildren(...NMRRows.lineTable({
        id: "ident-lines", title: `Lines of candidate ${i + 1}`, request: sentRequest, lines: result.candidates[i].lines,
        fileName: "pattern-finder-lines", hzLabel: "Position (Hz)", note: "position on the measured list's scale",
        caption: `Predicted lines of candidate ${i + 1} (${result.candidates[i].label}), high to low ppm`,
      }));
    }

    async function render(r, warnings) {
      const spins = await spinOf();
      result = r;
      headline.textContent = `Best fit: ${r.label}`;
      const where = r.center_ppm === null || r.center_ppm === undefined
        ? `Centre at ${NMR.fixed(r.center_Hz, 2)} Hz`
        : `Centre at δ ${NMR.fixed(r.center_ppm, 4)} ppm (${NMR.fixed(r.center_Hz, 2)} Hz)`;
      centre.textContent = `${where} · ${r.observed.length} measured lines · ${r.searched} explanations tried${r.complete ? "" : " (search stopped early)"}`;
      warn.replaceChildren(...warnings.map((text) => el("li", {}, text)));
      notes.replaceChildren(...r.notes.map((text) => el("li", {}, text)));

      pickButtons = [];
      const body = el("tbody");
      r.candidates.forEach((c, i) => {
        const pick = el("button", { type: "button", class: "pick-row", id: `ident-pick-${i}`, "aria-pressed": "false", "aria-label": `Show candidate ${i + 1}, ${c.label}, in the plot` }, c.label);
        pick.addEventListener("click", () => choose(i, false));
        pick.addEventListener("keydown", (event) => {
          const step = { ArrowDown: 1, ArrowUp: -1 }[event.key];
          if (!step) return;
          event.preventDefault();
          choose((i + step + r.candidates.length) % r.candidates.length, true);
        });
        pickButtons.push(pick);
        const tr = el("tr", {},
          el("td", { class: "num" }, String(i + 1)),
          el("td", {}, pick),
          el("td", { class: "groups" }, ...c.groups.map((g, k) => el("span", { class: "group" }, `${groupText(g, spins)}${k < c.groups.length - 1 ? ";" : ""}`))),
          el("td", { class: "num" }, short(c.score, 3)),
          el("td", { class: "num" }, NMR.fixed(c.position_rms, 3)),
          el("td", { class: "num" }, String(c.unmatched_observed)));
        tr.addEventListener("click", (event) => {
          if (event.target !== pick) choose(i, false);
        });
        body.append(tr);
      });
      const head = el("tr", {}, ...[["#", true], ["Pattern", false], ["Groups of partners", false], ["Score", true], ["rms (Hz)", true], ["Unassigned", true]]
        .map(([text, num]) => el("th", { scope: "col", class: num ? "num" : null }, text)));
      const table = el("table", { class: "data compact candidates" }, el("caption", {}, "Candidates, best first"), el("thead", {}, head), body);
      candidatesBox.replaceChildren(
        el("h3", { class: "sub-title" }, "Candidates"),
        el("p", { class: "hint" }, "Lower score is better. rms: how far the measured positions sit from the predicted ones; unassigned: measured lines no predicted line explains. Tap or press a pattern (arrow keys move) to draw it."),
        el("div", { class: "table-wrap" }, table),
      );
      choose(0, false);
    }

    // Hand the chosen candidate to the multiplet builder in that panel's own
    // input format; it shows them and computes.
    openButton.addEventListener("click", () => {
      if (!result) return;
      const cand = result.candidates[chosen];
      const groups = cand.groups.map((g) => (g.spin !== undefined
        ? { kind: "spin", spin: g.spin, count: String(g.count), J: short(g.J_Hz, 6), J_isotope: "", quadrupolar: "" }
        : { kind: "partner", partner: g.partner, count: String(g.count), J: short(g.J_Hz, 6), J_isotope: g.J_isotope || "", quadrupolar: "" }));
      const inputs = { "mult.rows": { groups, abundance: [] } };
      if (result.observe) inputs["mult.observe"] = { value: result.observe, unit: null };
      const magnet = fixed.magnet.read();
      if (magnet.value !== "") inputs["mult.magnet"] = { value: magnet.value, unit: magnet.unit };
      // a list in Hz may hold offsets from anywhere: only a ppm list fixes the builder's centre
      if (result.unit !== "Hz" && result.center_ppm !== null && result.center_ppm !== undefined) inputs["mult.center"] = { value: short(result.center_ppm, 7), unit: null };
      if (!NMR.openInputs("multiplet", "mult", inputs)) openNote.textContent = "The multiplet builder is not part of this page.";
    });

    const { run } = NMR.calculation({
      form: formNode, busy, cancelButton: cancel, formError,
      cancelText: "Cancelled. Press Find patterns to try again.",
      call: async () => {
        const sent = request();
        return { sent, response: await NMR.api(sent) };
      },
      show: async ({ sent, response }) => {
        report.clear();
        card.classList.toggle("is-error", !response.ok);
        if (!response.ok) {
          report.show(response.error.field, response.error.message);
          out.classList.add("stale");
          pin.update(null);
          return;
        }
        out.classList.remove("stale");
        out.hidden = false;
        sentRequest = sent;
        await render(response.result, response.warnings || []);
        pin.update({ request: sent, result: response.result });
      },
    });
    formNode.addEventListener("input", () => out.classList.add("stale"));

    drawRows();
    showMode();
    NMR.whenShown(card, () => {
      if (mode === "paste" ? peaklist.value.trim() : rows.some((row) => row.position.trim())) run();
    });
  },
};
