// Panel: a measured spectrum — open or drop a JCAMP-DX or two-column file (read
// in this page's worker; nothing leaves the device), set 0 ppm from a peak of
// known shift or a typed offset (stored with the spectrum), pick peaks (tap a
// row to leave a peak out), and send a region's peaks to the pattern finder.
// Every number comes from the ops read_spectrum and pick_peaks; this file only
// maps points to the plot (a linear axis between the first and last x given).
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
    const plot = NMRPlot.create(plotBox, { label: "Measured spectrum", height: 320, fileName: "measured-spectrum" });
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

    card.append(drop, status, errorLine, warn, plotBox, checks,
      el("h3", { class: "sub-title" }, "Reference"),
      el("p", { class: "hint" }, "Tap a peak in the table to choose it, then give its shift; or type where 0 ppm lies."),
      el("div", { class: "calc-form" }, refShift.row, solventRow, refOffset.row, refButton), refNote,
      el("h3", { class: "sub-title" }, "Peaks"),
      el("div", { class: "calc-form" }, threshold.row, pickButton),
      el("p", { class: "hint" }, "Tap a row to choose that peak (for the reference); its “use” box leaves it in or out of what is sent."),
      el("div", { class: "table-wrap" }, table),
      el("h3", { class: "sub-title" }, "Region"),
      el("div", { class: "calc-form" }, from.row, to.row, sendButton), sendNote);
    container.append(el("div", { class: "cards" }, card));

    let spectrum = null;   // the read_spectrum result
    let text = "";
    let name = "";
    let peaks = [];        // pick_peaks result rows, each with .use
    let chosen = -1;

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
  },
};
