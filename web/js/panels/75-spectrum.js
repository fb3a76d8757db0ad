// Panel: a measured spectrum — open or drop a JCAMP-DX or two-column file (read
// in this page's worker; nothing leaves the device), set 0 ppm from a peak of
// known shift or a typed offset (stored with the spectrum), pick peaks (tap the
// trace to add or remove one), integrate regions (relative to a chosen one), send
// a region's peaks to the pattern finder, draw a multiplet or spin system over a
// region with the residual below, and fit a spin system to the region's trace.
// Every number comes from the ops read_spectrum, pick_peaks, peak_at, integrate,
// compare_region and fit_spin_system; this file only maps points to the plot and
// to index ranges (a linear axis between the first and last x given).
import * as NMR from "../nmr.js";
import NMRPlot from "../plot.js";

export default {
  id: "spectrum",
  title: "Measured spectrum",
  build(container) {
    const { el } = NMR;
    const short = (value, digits) => String(Number(Number(value).toPrecision(digits || 7)));
    const card = el("section", { class: "card card-wide", id: "card-spectrum", "aria-labelledby": "spec-title" });
    card.append(
      el("h2", { id: "spec-title" }, "Measured spectrum"),
      el("p", { class: "intro" }, "Open or drop a JCAMP-DX file or a two-column table (x, intensity). It is read on this device; nothing is sent anywhere."),
    );
    const file = el("input", { type: "file", id: "spec-file", accept: ".jdx,.dx,.jcamp,.txt,.csv,.tsv" });
    const drop = el("div", { class: "drop-zone", id: "spec-drop", tabindex: "0" }, "Drop a spectrum file here, or ", el("label", { for: "spec-file" }, "choose one"), file);
    const status = el("p", { class: "hint", id: "spec-status", "aria-live": "polite" });
    const errorLine = el("p", { class: "form-error", id: "spec-error", "aria-live": "polite" });
    const checks = el("ul", { class: "notes", id: "spec-checks" });
    const warn = el("ul", { class: "warnings", id: "spec-warnings" });
    const plotBox = el("div");
    const plot = NMRPlot.create(plotBox, { label: "Measured spectrum", height: 320, fileName: "measured-spectrum", onTap: (x) => tapped(x) });
    plot.node.id = "spec-plot";

    const input = (id, label, attrs) => {
      const node = el("input", { type: "text", id, inputmode: "decimal", ...attrs });
      return { node, row: el("div", { class: "field" }, el("label", { for: id }, label), node) };
    };
    const refShift = input("spec-ref-shift", "Shift of the chosen peak (ppm)", { placeholder: "e.g. 7.26" });
    const refOffset = input("spec-ref-offset", "or: x of 0 ppm (file unit)", { placeholder: "e.g. 913.4" });
    const solvent = el("select", { id: "spec-solvent" });
    const solventRow = el("div", { class: "field", hidden: true }, el("label", { for: "spec-solvent" }, "Solvent signal for the chosen peak"), solvent);
    const refButton = el("button", { type: "button", class: "primary", id: "spec-ref-set" }, "Set reference");
    const refNote = el("p", { class: "hint", id: "spec-ref-note" });
    const threshold = input("spec-threshold", "Threshold (multiples of the noise)", { value: "5" });
    const pickButton = el("button", { type: "button", class: "primary", id: "spec-pick" }, "Pick peaks");
    const from = input("spec-from", "Region from", { placeholder: "ppm or file unit" });
    const to = input("spec-to", "to", {});
    const sendButton = el("button", { type: "button", class: "primary", id: "spec-send" }, "Send region's peaks to the pattern finder");
    const sendNote = el("p", { class: "hint", id: "spec-send-note" });
    const table = el("table", { class: "result-table", id: "spec-peaks" });
    const tapMode = el("select", { id: "spec-tap-mode" },
      el("option", { value: "" }, "pan and zoom only"), el("option", { value: "add" }, "add the peak there"), el("option", { value: "remove" }, "remove the nearest peak"));
    const tapNote = el("p", { class: "hint", id: "spec-tap-note", "aria-live": "polite" });
    const addRegion = el("button", { type: "button", class: "primary", id: "spec-add-region" }, "Integrate this region");
    const nuclei = input("spec-nuclei", "Nuclei in the reference region", { value: "1" });
    const integrals = el("table", { class: "result-table", id: "spec-integrals" });
    const integralNote = el("p", { class: "hint", id: "spec-integral-note", "aria-live": "polite" });
    const model = el("select", { id: "spec-model" }, el("option", { value: "multiplet" }, "multiplet (first order, partner groups)"), el("option", { value: "spin_system" }, "spin system (exact)"));
    const groupsIn = input("spec-groups", "Partner groups (partner, count, J; …)", { inputmode: "text", placeholder: "e.g. 1H,2,7 Hz; 19F,1,48 Hz" });
    const observeIn = input("spec-observe", "Observed nucleus", { inputmode: "text", placeholder: "e.g. 1H" });
    const spinsIn = input("spec-spins", "Spins (nucleus, shift ppm[, count]; …)", { inputmode: "text", placeholder: "e.g. 1H,7.10; 1H,7.02" });
    const couplingsIn = input("spec-couplings", "Couplings (spin, spin, J Hz; …), spins A, B… or 0, 1…", { inputmode: "text", placeholder: "e.g. A,B,8" });
    const magnetIn = input("spec-magnet", "Spectrometer (¹H MHz)", { placeholder: "e.g. 400.13" });
    const widthIn = input("spec-width", "Line width (Hz; empty: from the region)", {});
    const vary = ["shifts", "couplings", "linewidth"].map((v) => {
      const box = el("input", { type: "checkbox", id: `spec-vary-${v}`, checked: true });
      return { v, box, row: el("label", { class: "check", for: `spec-vary-${v}` }, box, ` ${v === "linewidth" ? "line width" : v}`) };
    });
    const simButton = el("button", { type: "button", class: "primary", id: "spec-simulate" }, "Simulate this region");
    const fitButton = el("button", { type: "button", class: "primary", id: "spec-fit" }, "Fit the spin system to the trace");
    const simNote = el("p", { class: "hint", id: "spec-sim-note", "aria-live": "polite" });
    const simError = el("p", { class: "form-error", id: "spec-sim-error", "aria-live": "polite" });
    const simWarn = el("ul", { class: "warnings", id: "spec-sim-warnings" });
    const regionBox = el("div");
    const regionPlot = NMRPlot.create(regionBox, { label: "Region: measured, simulated and residual", height: 300, fileName: "spectrum-region" });
    regionPlot.node.id = "spec-region-plot";
    regionBox.hidden = true;
    const fitTable = el("table", { class: "result-table", id: "spec-fit-table" });
    const multipletRows = el("div", { class: "calc-form" }, observeIn.row, groupsIn.row);
    const spinRows = el("div", { class: "calc-form", hidden: true }, spinsIn.row, couplingsIn.row, magnetIn.row,
      el("fieldset", { class: "field" }, el("legend", {}, "Fit varies"), ...vary.map((x) => x.row)), fitButton);

    card.append(drop, status, errorLine, warn, plotBox, checks,
      el("h3", { class: "sub-title" }, "Reference"),
      el("p", { class: "hint" }, "Tap a peak in the table to choose it, then give its shift; or type where 0 ppm lies."),
      el("div", { class: "calc-form" }, refShift.row, solventRow, refOffset.row, refButton), refNote,
      el("h3", { class: "sub-title" }, "Peaks"),
      el("div", { class: "calc-form" }, threshold.row, pickButton,
        el("div", { class: "field" }, el("label", { for: "spec-tap-mode" }, "A tap on the trace will"), tapMode)), tapNote,
      el("p", { class: "hint" }, "Tap a row to choose that peak (for the reference); its “use” box leaves it in or out of what is sent."),
      el("div", { class: "table-wrap" }, table),
      el("h3", { class: "sub-title" }, "Region"),
      el("div", { class: "calc-form" }, from.row, to.row, sendButton, addRegion), sendNote,
      el("h3", { class: "sub-title" }, "Integrals"),
      el("p", { class: "hint" }, "Choose the reference region and how many nuclei it stands for; the others are given relative to it."),
      el("div", { class: "calc-form" }, nuclei.row),
      el("div", { class: "table-wrap" }, integrals), integralNote,
      el("h3", { class: "sub-title" }, "Simulate the region"),
      el("div", { class: "calc-form" }, el("div", { class: "field" }, el("label", { for: "spec-model" }, "Model"), model), widthIn.row),
      multipletRows, spinRows,
      el("div", { class: "calc-form" }, simButton), simNote, simError, simWarn, regionBox,
      el("div", { class: "table-wrap" }, fitTable));
    container.append(el("div", { class: "cards" }, card));

    let spectrum = null;   // the read_spectrum result
    let text = "";
    let name = "";
    let peaks = [];        // pick_peaks result rows, each with .use
    let chosen = -1;
    let level = null;      // {noise, baseline} of the latest pick_peaks or integrate result
    let regions = [];      // [{from, to}] in the display unit
    let reference = 0;     // index of the reference region

    const scale = () => {
      if (spectrum && spectrum.first_ppm !== undefined) return { unit: "ppm", first: spectrum.first_ppm, last: spectrum.last_ppm };
      return spectrum ? { unit: spectrum.x_unit, first: spectrum.first_x, last: spectrum.last_x } : null;
    };
    // a position in the file's unit → the display unit (a linear map between the API's end points)
    const toDisplay = (x) => {
      const s = scale();
      if (spectrum.last_x === spectrum.first_x) return s.first;
      return s.first + ((x - spectrum.first_x) / (spectrum.last_x - spectrum.first_x)) * (s.last - s.first);
    };

    function draw() {
      if (!spectrum) return;
      const s = scale();
      const n = spectrum.y.length;
      const traces = [];
      if (n) {
        const xs = new Float64Array(n);
        const step = n > 1 ? (s.last - s.first) / (n - 1) : 0;
        for (let k = 0; k < n; k += 1) xs[k] = s.first + k * step;
        traces.push({ label: spectrum.title || "spectrum", x: xs, y: spectrum.y, kind: "line", color: 0 });
      }
      const used = peaks.filter((p) => p.use);
      const list = n ? used : (spectrum.peaks || []);
      if (list.length) traces.push({ label: "peaks", x: list.map((p) => toDisplay(p.position)), y: list.map((p) => p.height), kind: "sticks", mark: true });
      plot.setXLabel(s.unit === "ppm" ? "δ / ppm" : `x / ${s.unit} (no reference yet)`);
      plot.update({ traces }, true);
    }

    function drawPeaks() {
      const s = scale();
      table.replaceChildren();
      const head = el("tr", {}, el("th", {}, "use"), el("th", {}, `position (${s.unit})`), el("th", {}, "height"), el("th", {}, "width (Hz)"), el("th", {}, "integral"));
      table.append(el("thead", {}, head));
      const body = el("tbody");
      peaks.forEach((p, i) => {
        const box = el("input", { type: "checkbox", "aria-label": "use this peak" });
        box.checked = p.use;
        box.addEventListener("click", (event) => {
          event.stopPropagation();
          p.use = box.checked;
          draw();
        });
        const row = el("tr", { tabindex: "0", class: i === chosen ? "chosen" : null, "aria-selected": String(i === chosen) },
          el("td", {}, box), el("td", {}, short(toDisplay(p.position), 7)), el("td", {}, short(p.height, 4)),
          el("td", {}, short(p.width_Hz, 3)), el("td", {}, short(p.integral, 4)));
        const choose = () => {
          chosen = i;
          refNote.textContent = `Chosen peak at ${short(p.position, 8)} ${spectrum.x_unit}.`;
          drawPeaks();
        };
        row.addEventListener("click", choose);
        row.addEventListener("keydown", (event) => { if (event.key === "Enter" || event.key === " ") { event.preventDefault(); choose(); } });
        body.append(row);
      });
      table.append(body);
    }

    const refKey = () => `spectrum.ref.${name}.${spectrum ? spectrum.npoints : 0}`;

    async function read(reference) {
      errorLine.textContent = "";
      const request = { op: "read_spectrum", text, filename: name };
      if (reference) request.reference = reference;
      status.textContent = `Reading ${name}…`;
      const response = await NMR.api(request);
      if (!response.ok) {
        errorLine.textContent = response.error.message;
        status.textContent = "";
        return;
      }
      spectrum = response.result;
      regions = [];
      reference = 0;
      drawIntegrals(null);
      status.textContent = `${spectrum.title} — ${spectrum.nucleus || "nucleus not stated"}, ${spectrum.observe_MHz ? `${spectrum.observe_MHz} MHz` : "observe frequency not stated"}, ${spectrum.npoints} points.`;
      checks.replaceChildren(...spectrum.checks.map((c) => el("li", {}, `Checked: ${c}`)));
      warn.replaceChildren(...response.warnings.map((w) => el("li", {}, w)));
      const ref = spectrum.reference;
      refNote.textContent = ref ? `Reference: x = ${short(ref.x, 8)} ${spectrum.x_unit} is ${short(ref.shift_ppm, 6)} ppm (${ref.source}).` : "";
      if (reference) NMR.remember(refKey(), reference);
      else if (!ref && NMR.recall(refKey())) return read(NMR.recall(refKey()));
      draw();
      drawPeaks();
      offerSolvents();
    }

    async function offerSolvents() {
      if (!spectrum || !spectrum.nucleus) return;
      const response = await NMR.api({ op: "solvents", nucleus: spectrum.nucleus });
      if (!response.ok) { solventRow.hidden = true; return; }
      solvent.replaceChildren(el("option", { value: "" }, "—"), ...response.result.solvents.map((s) => el("option", { value: String(s.shift_ppm) }, `${s.name} ${short(s.shift_ppm, 5)} ppm`)));
      solventRow.hidden = false;
    }
    solvent.addEventListener("change", () => { if (solvent.value) refShift.node.value = solvent.value; });

    async function load(f) {
      name = f.name;
      text = await f.text();
      peaks = [];
      chosen = -1;
      await read(null);
    }
    file.addEventListener("change", () => { if (file.files.length) load(file.files[0]); });
    drop.addEventListener("dragover", (event) => { event.preventDefault(); drop.classList.add("over"); });
    drop.addEventListener("dragleave", () => drop.classList.remove("over"));
    drop.addEventListener("drop", (event) => {
      event.preventDefault();
      drop.classList.remove("over");
      if (event.dataTransfer.files.length) load(event.dataTransfer.files[0]);
    });

    refButton.addEventListener("click", () => {
      if (!spectrum) return;
      const offset = refOffset.node.value.trim();
      const shift = refShift.node.value.trim();
      if (offset !== "") read({ x: Number(offset), shift_ppm: 0 });
      else if (shift !== "" && chosen >= 0) read({ x: peaks[chosen].position, shift_ppm: Number(shift) });
      else errorLine.textContent = "Choose a peak in the table and give its shift, or type where 0 ppm lies.";
    });

    pickButton.addEventListener("click", async () => {
      if (!spectrum || !spectrum.y.length) return;
      errorLine.textContent = "";
      const request = { op: "pick_peaks", first_x: spectrum.first_x, last_x: spectrum.last_x, x_unit: spectrum.x_unit, y: spectrum.y, threshold: `${threshold.node.value} sigma` };
      if (spectrum.observe_MHz) request.observe_MHz = spectrum.observe_MHz;
      const response = await NMR.api(request);
      if (!response.ok) { errorLine.textContent = response.error.message; return; }
      peaks = response.result.peaks.map((p) => ({ ...p, use: true }));
      level = { noise: response.result.noise, baseline: response.result.baseline };
      chosen = -1;
      status.textContent = `${peaks.length} peaks above ${response.result.threshold} × the noise (σ = ${short(response.result.noise, 3)}).`;
      draw();
      drawPeaks();
    });

    sendButton.addEventListener("click", () => {
      if (!spectrum) return;
      const a = Number(from.node.value);
      const b = Number(to.node.value);
      const s = scale();
      const inRegion = peaks.filter((p) => p.use && toDisplay(p.position) >= Math.min(a, b) && toDisplay(p.position) <= Math.max(a, b));
      if (!inRegion.length) { sendNote.textContent = "No peak in use lies in that region."; return; }
      // ppm needs the 1H magnet in the finder: send ppm for 1H, else the file's own x (Hz spacings)
      const ppm = s.unit === "ppm" && spectrum.nucleus === "1H" && spectrum.observe_MHz;
      const unit = ppm ? "ppm" : spectrum.x_unit;
      const at = (p) => (ppm ? toDisplay(p.position) : p.position);
      const list = `${unit}\theight\n` + inRegion.map((p) => `${short(at(p), 9)}\t${short(p.height, 6)}`).join("\n") + "\n";
      const inputs = { "ident.peaklist": list, "ident.mode": "paste", "ident.unit": { value: unit, unit: null } };
      if (spectrum.nucleus) inputs["ident.observe"] = { value: spectrum.nucleus, unit: null };
      // Hz positions here are the file's own x, not offsets from 0 ppm: no magnet, so none is read as ppm
      inputs["ident.magnet"] = ppm ? { value: String(spectrum.observe_MHz), unit: "MHz" } : { value: "", unit: "MHz" };
      sendNote.textContent = `${inRegion.length} peaks sent.`;
      if (!NMR.openInputs("identify", "ident", inputs)) sendNote.textContent = "The pattern finder is not part of this page.";
    });

    // ---------- points of the display scale (index arithmetic only) ----------
    const step = () => { const sc = scale(); return (sc.last - sc.first) / Math.max(1, spectrum.y.length - 1); };
    const indexAt = (x) => (x - scale().first) / step();
    // the points between display positions a and b, as an op's trace
    function region(a, b) {
      const n = spectrum.y.length;
      const [i, j] = [indexAt(a), indexAt(b)].sort((p, q) => p - q);
      const lo = Math.max(0, Math.ceil(i));
      const hi = Math.min(n - 1, Math.floor(j));
      if (!(hi - lo >= 2)) return null;
      const sc = scale();
      const out = { first_x: sc.first + lo * step(), last_x: sc.first + hi * step(), x_unit: sc.unit, y: Array.from(spectrum.y.slice(lo, hi + 1)) };
      if (spectrum.observe_MHz) out.observe_MHz = spectrum.observe_MHz;
      return out;
    }
    const gridOf = (first, last, n) => {
      const xs = new Float64Array(n);
      for (let k = 0; k < n; k += 1) xs[k] = first + (k * (last - first)) / Math.max(1, n - 1);
      return xs;
    };

    // ---------- taps on the trace ----------
    async function tapped(x) {
      if (!spectrum || !spectrum.y.length || !tapMode.value) return;
      const [lo, hi] = plot.view();
      const perPixel = Math.abs(hi - lo) / Math.max(1, plot.svg.getBoundingClientRect().width);
      if (tapMode.value === "remove") {
        let best = -1;
        peaks.forEach((p, i) => { if (best < 0 || Math.abs(toDisplay(p.position) - x) < Math.abs(toDisplay(peaks[best].position) - x)) best = i; });
        if (best < 0 || Math.abs(toDisplay(peaks[best].position) - x) > 16 * perPixel) { tapNote.textContent = "No peak near the tap."; return; }
        const [gone] = peaks.splice(best, 1);
        chosen = -1;
        tapNote.textContent = `Peak at ${short(toDisplay(gone.position), 7)} ${scale().unit} removed.`;
        draw();
        drawPeaks();
        return;
      }
      // the tap's reach: ±12 pixels of the current view, in points of the file
      const n = spectrum.y.length;
      const reach = Math.max(3, Math.min(2000, Math.round((12 * perPixel) / Math.abs(step()))));
      const k = Math.round(indexAt(x));
      const a = Math.max(0, k - reach);
      const b = Math.min(n - 1, k + reach);
      const fileStep = (spectrum.last_x - spectrum.first_x) / Math.max(1, n - 1);
      const request = { op: "peak_at", first_x: spectrum.first_x + a * fileStep, last_x: spectrum.first_x + b * fileStep, x_unit: spectrum.x_unit, y: Array.from(spectrum.y.slice(a, b + 1)) };
      if (spectrum.observe_MHz) request.observe_MHz = spectrum.observe_MHz;
      if (level) { request.baseline = level.baseline; request.noise = level.noise; }
      const response = await NMR.api(request);
      if (!response.ok) { tapNote.textContent = response.error.message; return; }
      peaks.push({ ...response.result.peak, use: true, added: true });
      tapNote.textContent = `Peak added at ${short(toDisplay(response.result.peak.position), 7)} ${scale().unit}.${response.warnings.length ? ` ${response.warnings.join(" ")}` : ""}`;
      draw();
      drawPeaks();
    }

    // ---------- integrals ----------
    function drawIntegrals(result) {
      integrals.replaceChildren();
      if (!regions.length) { integralNote.textContent = ""; return; }
      const unit = scale().unit;
      integrals.append(el("thead", {}, el("tr", {}, el("th", {}, "reference"), el("th", {}, `from (${unit})`), el("th", {}, "to"), el("th", {}, "integral"), el("th", {}, "± (noise)"), el("th", {}, "relative"), el("th", {}, "±"), el("th", {}, ""))));
      const body = el("tbody");
      regions.forEach((r, i) => {
        const row = result ? result.regions[i] : null;
        const radio = el("input", { type: "radio", name: "spec-ref-region", "aria-label": `region ${i + 1} is the reference`, checked: i === reference });
        radio.addEventListener("change", () => { reference = i; integrate(); });
        const drop = el("button", { type: "button", class: "small-button", "aria-label": `remove region ${i + 1}` }, "remove");
        drop.addEventListener("click", () => { regions.splice(i, 1); reference = Math.min(reference, Math.max(0, regions.length - 1)); integrate(); });
        body.append(el("tr", {}, el("td", {}, radio), el("td", {}, short(r.from, 6)), el("td", {}, short(r.to, 6)),
          el("td", {}, row ? short(row.integral, 4) : "…"), el("td", {}, row && row.error !== null ? short(row.error, 2) : ""),
          el("td", { class: "relative" }, row && row.relative !== undefined ? short(row.relative, 4) : ""),
          el("td", {}, row && row.relative_error !== undefined && row.relative_error !== null ? short(row.relative_error, 2) : ""), el("td", {}, drop)));
      });
      integrals.append(body);
    }
    async function integrate() {
      drawIntegrals(null);
      if (!spectrum || !regions.length) return;
      const sc = scale();
      const request = { op: "integrate", first_x: sc.first, last_x: sc.last, x_unit: sc.unit, y: spectrum.y, regions, normalize_to: reference };
      const typed = nuclei.node.value.trim();
      if (typed !== "") request.nuclei = Number.isFinite(Number(typed)) ? Number(typed) : typed;   // the op checks it
      if (spectrum.observe_MHz) request.observe_MHz = spectrum.observe_MHz;
      const response = await NMR.api(request);
      if (!response.ok) { integralNote.textContent = response.error.message; return; }
      level = { noise: response.result.noise, baseline: response.result.baseline };
      drawIntegrals(response.result);
      integralNote.textContent = `Noise σ = ${short(response.result.noise, 3)} (signal-free parts), baseline ${short(response.result.baseline, 3)}. ${response.warnings.join(" ")}`;
    }
    addRegion.addEventListener("click", () => {
      if (!spectrum) return;
      const a = Number(from.node.value);
      const b = Number(to.node.value);
      if (from.node.value.trim() === "" || to.node.value.trim() === "" || !Number.isFinite(a) || !Number.isFinite(b)) { integralNote.textContent = "Type both ends of the region first."; return; }
      regions.push({ from: a, to: b });
      integrate();
    });
    nuclei.node.addEventListener("change", () => integrate());

    // ---------- simulation over the region, and the fit to its trace ----------
    // "a, b, c; d, e, f" → [{k1: a, k2: b, k3: c}, …] in the op's declared order (text only: the op reads the values)
    const items = (text, keys) => text.split(";").map((part) => part.trim()).filter(Boolean).map((part) => {
      const values = part.split(",").map((v) => v.trim());
      return Object.fromEntries(keys.map((k, i) => [k, values[i]]).filter(([, v]) => v !== undefined && v !== ""));
    });
    const countOf = (v) => (v === undefined || Number.isNaN(Number(v)) ? v : Number(v));
    const spinRef = (v) => (/^\d+$/.test(v || "") ? Number(v) : v);
    const SIM_KEYS = { groups: groupsIn, observe: observeIn, spins: spinsIn, couplings: couplingsIn, magnet: magnetIn, width: widthIn };
    for (const [key, field] of Object.entries(SIM_KEYS)) {
      const saved = NMR.recall(`spectrum.sim.${key}`);
      if (typeof saved === "string") field.node.value = saved;
      field.node.addEventListener("change", () => NMR.remember(`spectrum.sim.${key}`, field.node.value));
    }
    model.addEventListener("change", () => {
      multipletRows.hidden = model.value !== "multiplet";
      spinRows.hidden = model.value !== "spin_system";
    });
    function spinSystem() {
      const req = {
        observe: observeIn.node.value.trim() || spectrum.nucleus || "1H",
        spins: items(spinsIn.node.value, ["nucleus", "shift", "count"]).map((s) => ({ ...s, ...(s.count !== undefined ? { count: countOf(s.count) } : {}) })),
        couplings: items(couplingsIn.node.value, ["a", "b", "J"]).map((c) => ({ between: [spinRef(c.a), spinRef(c.b)], J: c.J })),
      };
      if (magnetIn.node.value.trim()) req.spectrometer = `${magnetIn.node.value.trim()} MHz`;
      return req;
    }
    function regionOrSay() {
      if (!spectrum || !spectrum.y.length) { simError.textContent = "Open a spectrum first."; return null; }
      const trace = region(Number(from.node.value), Number(to.node.value));
      if (!trace || from.node.value.trim() === "" || to.node.value.trim() === "") { simError.textContent = "Type both ends of a region with at least 3 points."; return null; }
      return trace;
    }
    function drawRegion(result, trace, label) {
      const xs = gridOf(trace.first_x, trace.last_x, trace.y.length);
      regionBox.hidden = false;
      regionPlot.setXLabel(trace.x_unit === "ppm" ? "δ / ppm" : `x / ${trace.x_unit}`);
      regionPlot.update({ traces: [
        { label: "measured", x: xs, y: trace.y, kind: "line", color: 0 },
        { label, x: xs, y: result.simulated, kind: "line", color: 1, dashed: true },
        { label: "residual (measured − simulated)", x: xs, y: result.residual, kind: "line", color: 2, below: true },
      ] });
    }
    function showWarnings(response) {
      simWarn.replaceChildren(...response.warnings.map((w) => el("li", {}, w)));
    }
    simButton.addEventListener("click", async () => {
      simError.textContent = "";
      fitTable.replaceChildren();
      const trace = regionOrSay();
      if (!trace) return;
      const request = { op: "compare_region", ...trace, model: model.value };
      if (level) request.baseline = level.baseline;
      if (widthIn.node.value.trim()) request.linewidth = `${widthIn.node.value.trim()} Hz`;
      if (model.value === "multiplet") {
        request.observe = observeIn.node.value.trim() || spectrum.nucleus || "";
        request.groups = items(groupsIn.node.value, ["partner", "count", "J"]).map((g) => ({ ...g, ...(g.count !== undefined ? { count: countOf(g.count) } : {}) }));
      } else Object.assign(request, spinSystem());
      simNote.textContent = "Simulating…";
      const response = await NMR.api(request);
      if (!response.ok) { simNote.textContent = ""; simError.textContent = response.error.message; return; }
      const r = response.result;
      drawRegion(r, trace, `simulated: ${r.label}`);
      showWarnings(response);
      simNote.textContent = `${r.label}: scaled ×${short(r.scale, 4)} to the region's integral, line width ${short(r.linewidth_Hz, 3)} Hz${r.center !== undefined ? `, centre ${short(r.center, 7)} ${r.x_unit}` : ""}; rms residual ${short(r.rms_residual, 3)} (${short(100 * r.relative_rms, 3)} % of the tallest point).`;
    });
    fitButton.addEventListener("click", async () => {
      simError.textContent = "";
      const trace = regionOrSay();
      if (!trace) return;
      const request = { op: "fit_spin_system", ...spinSystem(), first_x: trace.first_x, last_x: trace.last_x, x_unit: trace.x_unit, y: trace.y, vary: vary.filter((x) => x.box.checked).map((x) => x.v) };
      if (level) request.baseline = level.baseline;
      if (widthIn.node.value.trim()) request.linewidth = `${widthIn.node.value.trim()} Hz`;
      simNote.textContent = "Fitting…";
      const response = await NMR.api(request);
      if (!response.ok) { simNote.textContent = ""; simError.textContent = response.error.message; return; }
      const r = response.result;
      drawRegion(r, trace, "fitted spin system");
      showWarnings(response);
      const pm = (v, e, digits) => `${short(v, digits)}${e === null || e === undefined ? "" : ` ± ${short(e, 2)}`}`;
      fitTable.replaceChildren(el("thead", {}, el("tr", {}, el("th", {}, "fitted"), el("th", {}, "value"), el("th", {}, "first-order check"))));
      const body = el("tbody");
      r.spins.forEach((sp, i) => body.append(el("tr", {}, el("td", {}, `shift of ${String.fromCharCode(65 + i)} (${sp.nucleus}), ppm`), el("td", {}, sp.fitted ? pm(sp.shift_ppm, sp.error_ppm, 8) : `${short(sp.shift_ppm, 8)} (held)`), el("td", {}, ""))));
      r.couplings.forEach((c) => {
        const check = r.checks.find((k) => k.pair.includes(c.between[0]) && k.pair.includes(c.between[1]));
        body.append(el("tr", {}, el("td", {}, `J between ${c.between.join(" and ")}, Hz`), el("td", {}, c.fitted ? pm(c.J_Hz, c.error_Hz, 6) : `${short(c.J_Hz, 6)} (held)`),
          el("td", {}, check ? `Δν/J = ${short(check.delta_nu_over_J, 3)}: ${check.first_order ? "first order" : "second order"}` : "")));
      });
      body.append(el("tr", {}, el("td", {}, "line width, Hz"), el("td", {}, r.linewidth_fitted ? pm(r.linewidth_Hz, r.linewidth_error_Hz, 4) : `${short(r.linewidth_Hz, 4)} (held)`), el("td", {}, "")));
      body.append(el("tr", {}, el("td", {}, "intensity scale"), el("td", {}, pm(r.scale, r.scale_error, 5)), el("td", {}, "")));
      body.append(el("tr", {}, el("td", {}, "rms residual"), el("td", { id: "spec-fit-rms" }, `${short(r.rms_residual, 3)} (${short(100 * r.relative_rms, 3)} % of the tallest point)`), el("td", {}, "")));
      const use = el("button", { type: "button", class: "small-button", id: "spec-fit-use" }, "Start from the fitted values");
      use.addEventListener("click", () => {
        spinsIn.node.value = r.spins.map((sp) => `${sp.nucleus},${sp.shift_ppm}${sp.count > 1 ? `,${sp.count}` : ""}`).join("; ");
        couplingsIn.node.value = r.couplings.map((c) => `${c.between[0]},${c.between[1]},${c.J_Hz}`).join("; ");
        widthIn.node.value = String(r.linewidth_Hz);
        for (const field of [spinsIn, couplingsIn, widthIn]) field.node.dispatchEvent(new Event("change"));
      });
      body.append(el("tr", {}, el("td", { colspan: "3" }, use)));
      fitTable.append(body);
      simNote.textContent = `Fitted in ${r.iterations} steps.`;
    });
  },
};
