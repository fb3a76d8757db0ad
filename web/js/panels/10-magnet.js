// Panel: magnet & frequencies — one nucleus at the magnet, ppm <-> Hz, and the
// table of every magnetic nuclide at that field. One magnet field feeds all three.
import * as NMR from "../nmr.js";

export default {
  id: "magnet",
  title: "Magnet & frequencies",
  build(container) {
    const { el, fmt, fixed, nuclideLabel } = NMR;
    // 0 ppm − bare nucleus, rounded by the API to the precision of the tabulated γ and Ξ
    const diffText = (row) => (row.difference_ppm === null ? "—" : `${fixed(row.difference_ppm, row.difference_decimals)} ± ${fmt(row.difference_precision_ppm, 1)}`);
    const magnet = NMR.sharedField("freqs", {
      id: "magnet", either: "frequency.spectrometer", value: "400.13", units: NMR.MAGNET_UNITS, hint: true,
    });
    const magnetCard = el("section", { class: "card card-magnet card-wide", "aria-label": "Magnet" }, el("h2", {}, "Magnet"), magnet.wrap);
    const magnetOut = el("p", { class: "magnet-summary", id: "freqs-magnet-summary", "aria-live": "polite" });
    magnetCard.append(magnetOut);

    const one = NMR.form({
      id: "larmor",
      title: "One nucleus",
      intro: "The frequency of its 0 ppm reference (from Ξ) at this magnet — where a spectrometer is set — and the Larmor frequency of the bare nucleus.",
      shared: [magnet],
      fields: [
        { id: "nucleus", param: "frequency.nucleus", value: "13C", list: "nuclide-list", placeholder: "e.g. 13C, 15N, 31P", required: true },
        {
          id: "scale", param: "frequency.scale", kind: "select",
          options: [["unified", "Unified (TMS-based)"], ["biomolecular", "Biomolecular (DSS)"]],
        },
      ],
      request: (v) => ({ op: "frequency", nucleus: v.nucleus.value, scale: v.scale.value, ...NMR.magnetRequest(v.magnet) }),
      render(r, out) {
        magnetOut.replaceChildren(`${fmt(r.field_T, 6)} T · ${fmt(r.field_G, 6)} G · ¹H at ${fixed(r.proton_MHz, 4)} MHz`);
        out.replaceChildren(NMR.resultList([
          ["Nucleus", nuclideLabel(r.symbol)],
          ["0 ppm frequency (Ξ)", el("strong", { class: "headline" }, fixed(r.reference_MHz, 6)), r.reference_MHz === null ? "none recommended" : "MHz"],
          ["Larmor frequency, bare nucleus", fixed(r.larmor_MHz, 6), "MHz"],
          ["0 ppm − bare nucleus", diffText(r), r.difference_ppm === null ? "" : "ppm"],
          ["Spin", r.spin],
          ["Natural abundance", fmt(r.abundance_percent, 4), "%"],
        ]), el("p", { class: "hint" }, r.difference_note));
      },
    });

    const convert = NMR.form({
      id: "ppmhz",
      title: "ppm ↔ Hz",
      intro: "Convert a chemical shift to an offset from 0 ppm, or back. Give a carrier to get the offset from it too.",
      shared: [magnet],
      fields: [
        { id: "nucleus", param: "ppm_hz.nucleus", value: "1H", list: "nuclide-list" },
        { id: "direction", label: "Convert", kind: "select", options: [["ppm", "ppm → Hz"], ["Hz", "Hz → ppm"]] },
        { id: "amount", either: "ppm_hz.ppm", value: "7.26" },
        { id: "carrier", param: "ppm_hz.carrier_ppm", optional: true, value: "" },
      ],
      request(v) {
        const req = { op: "ppm_hz", nucleus: v.nucleus.value, ...NMR.magnetRequest(v.magnet) };
        req[v.direction.value] = v.amount.value;
        if (v.carrier.value !== "") req.carrier_ppm = v.carrier.value;
        return req;
      },
      render(r, out) {
        const rows = [
          ["Shift", fmt(r.ppm, 7), "ppm"],
          ["Offset from 0 ppm", fmt(r.offset_Hz, 7), "Hz"],
          ["Absolute frequency", fixed(r.frequency_MHz, 6), "MHz"],
          ["Hz per ppm", fmt(r.Hz_per_ppm, 7), "Hz"],
        ];
        if (r.offset_from_carrier_Hz !== undefined) rows.push(["Offset from carrier", fmt(r.offset_from_carrier_Hz, 7), "Hz"]);
        out.replaceChildren(NMR.resultList(rows));
      },
    });

    const window_ = NMR.form({
      id: "acqwin",
      title: "Acquisition window",
      intro: "From the shift range to record: carrier, spectral width, dwell and acquisition time, digital resolution; with a 90° pulse length, the nutation frequency and the range that pulse excites well.",
      shared: [magnet],
      fields: [
        { id: "nucleus", param: "acquisition_window.nucleus", value: "13C", list: "nuclide-list" },
        { id: "low", param: "acquisition_window.low_ppm", value: "-10" },
        { id: "high", param: "acquisition_window.high_ppm", value: "230" },
        { id: "points", param: "acquisition_window.points", value: "32768", inputmode: "numeric" },
        { id: "pulse", param: "acquisition_window.pulse_90", optional: true, value: "10", hint: true },
      ],
      request(v) {
        const req = { op: "acquisition_window", nucleus: v.nucleus.value, low_ppm: v.low.value, high_ppm: v.high.value, ...NMR.magnetRequest(v.magnet) };
        const n = v.points.value;
        req.points = /^\d+$/.test(n) ? Number(n) : n;
        const pulse = v.pulse.value;
        if (pulse !== "") req.pulse_90 = pulse;
        return req;
      },
      render(r, out) {
        const rows = [
          ["Carrier", fixed(r.carrier_MHz, 6), "MHz"],
          ["Carrier from 0 ppm", `${fmt(r.carrier_ppm, 6)} ppm · ${fmt(r.carrier_offset_Hz, 7)} Hz`],
          ["Spectral width", `${fmt(r.spectral_width_Hz, 7)} Hz · ${fmt(r.spectral_width_kHz, 5)} kHz`],
          ["Dwell time", fmt(r.dwell_time_us, 5), "µs"],
          ["Acquisition time", fmt(r.acquisition_time_ms, 5), "ms"],
          ["Digital resolution", `${fmt(r.digital_resolution_Hz, 4)} Hz/point · ${fmt(r.digital_resolution_ppm, 4)} ppm/point`],
        ];
        if (r.nutation_Hz !== null) {
          rows.push(
            ["Nutation frequency γB₁/2π", fmt(r.nutation_kHz, 5), "kHz"],
            ["B₁", NMR.numberNode(fmt(r.B1_mT, 4)), "mT"],
            [`Excited well (≥ ${fmt(r.well_excited_percent, 3)} % signal)`, `± ${fmt(r.well_excited_kHz, 4)} kHz · ± ${fmt(r.well_excited_ppm, 4)} ppm`],
            ["Signal at the window edges", fmt(r.edge_percent, 3), "%"],
          );
        }
        out.replaceChildren(NMR.resultList(rows), el("p", { class: "hint" }, "Quadrature detection: dwell time = 1 / spectral width; acquisition time = points × dwell time; resolution before zero filling."));
      },
    });

    const table = NMR.form({
      id: "table",
      title: "Every nuclide at this magnet",
      intro: "Highest frequency first. Filter, then tap a column heading to sort by it.",
      shared: [magnet],
      submitLabel: "Show table",
      fields: [
        { id: "spinhalf", param: "frequency.spin_half_only", kind: "checkbox" },
        { id: "minab", param: "frequency.min_abundance_percent", value: "" },
        { id: "minmhz", param: "frequency.min_MHz", value: "" },
        { id: "maxmhz", param: "frequency.max_MHz", value: "" },
      ],
      request(v) {
        const req = { op: "frequency", spin_half_only: v.spinhalf.value, ...NMR.magnetRequest(v.magnet) };
        if (v.minab.value !== "") req.min_abundance_percent = v.minab.value;
        if (v.minmhz.value !== "") req.min_MHz = v.minmhz.value;
        if (v.maxmhz.value !== "") req.max_MHz = v.maxmhz.value;
        return req;
      },
      render(r, out) {
        const columns = [
          { key: "A", label: "Nuclide", value: (row) => row.symbol.replace(/^\d+/, "") + row.symbol.match(/^\d+/)[0].padStart(3, "0"), show: (row) => nuclideLabel(row.symbol) },
          { key: "spin", label: "Spin", value: (row) => { const [n, d] = row.spin.split("/"); return Number(n) / Number(d || 1); }, show: (row) => row.spin },
          { key: "ab", label: "Abundance %", numeric: true, value: (row) => row.abundance_percent, show: (row) => fmt(row.abundance_percent, 4) },
          { key: "ref", label: "0 ppm MHz", numeric: true, value: (row) => row.reference_MHz, show: (row) => fixed(row.reference_MHz, 4) },
          { key: "nu", label: "Bare nucleus MHz", numeric: true, value: (row) => row.larmor_MHz, show: (row) => fixed(row.larmor_MHz, 4) },
          { key: "dppm", label: "0 ppm − bare, ppm", numeric: true, value: (row) => row.difference_ppm, show: diffText },
          { key: "dc", label: "Signal vs ¹³C at natural abundance", numeric: true, value: (row) => row.receptivity_C, show: (row) => NMR.numberNode(fmt(row.receptivity_C, 3)) },
        ];
        out.replaceChildren(
          el("p", { class: "count" }, `${r.count} nuclides at ${fmt(r.field_T, 5)} T`),
          NMR.sortableTable(columns, r.table, "Magnetic nuclides at the chosen magnet"),
          el("p", { class: "hint" }, r.difference_note, " Signal vs ¹³C: |γ|³ I(I+1) × natural abundance, relative to the same for ¹³C (equal numbers of atoms, same conditions)."),
        );
      },
    });

    container.append(el("div", { class: "cards" }, magnetCard, one.node, convert.node, window_.node, table.node));
    container.lastChild.lastChild.classList.add("card-wide");
  },
};
