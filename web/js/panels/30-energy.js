// Panel: energy & signal strength — the spin transition energy and Boltzmann
// populations, an optical photon for comparison, and relative receptivity.
import * as NMR from "../nmr.js";

export default {
  id: "energy",
  title: "Energy & signal",
  build(container) {
    const { el, fmt, nuclideLabel } = NMR;
    const ENERGY_ROWS = [
      ["J_per_mol", "J/mol"], ["cal_per_mol", "cal/mol"], ["kcal_per_mol", "kcal/mol"], ["eV", "eV"], ["wavenumber_cm-1", "cm⁻¹"],
    ];

    const gap = NMR.form({
      id: "energy",
      title: "Spin energy gap and populations",
      intro: "The energy of one NMR transition at this magnet and temperature, next to an optical photon if you give one.",
      fields: [
        { id: "nucleus", param: "energy.nucleus", value: "1H", list: "nuclide-list", placeholder: "e.g. 1H, 13C, 31P", required: true },
        { id: "magnet", either: "energy.spectrometer", value: "500", units: NMR.MAGNET_UNITS },
        { id: "temperature", param: "energy.temperature", value: "298" },
        {
          id: "photon", either: "energy.wavelength", value: "254", hint: true,
          units: [{ unit: "nm", label: "nm" }, { unit: "cm-1", label: "cm⁻¹" }],
        },
      ],
      request(v) {
        const req = {
          op: "energy", nucleus: v.nucleus.value, temperature: v.temperature.value,
          ...NMR.magnetRequest(v.magnet),
        };
        if (v.photon.value !== "") {
          req[v.photon.unit === "nm" ? "wavelength" : "wavenumber"] = v.photon.value;
        }
        return req;
      },
      render(r, out) {
        const head = el("tr", {}, el("th", { scope: "col" }, "Energy"), el("th", { scope: "col", class: "num" }, "NMR transition"));
        if (r.photon) head.append(el("th", { scope: "col", class: "num" }, "Photon"));
        const body = el("tbody");
        for (const [key, unit] of ENERGY_ROWS) {
          const row = el("tr", {}, el("th", { scope: "row" }, unit), el("td", { class: "num" }, NMR.numberNode(fmt(r[key], 5))));
          if (r.photon) row.append(el("td", { class: "num" }, NMR.numberNode(fmt(r.photon[key], 5))));
          body.append(row);
        }
        const energies = el("div", { class: "table-wrap" }, el("table", { class: "data compact" }, el("caption", {}, "One quantum, per mole"), el("thead", {}, head), body));
        const pops = el("tbody", {}, ...r.populations.map((p) => el("tr", {}, el("th", { scope: "row" }, `m = ${p.m}`), el("td", { class: "num" }, fmt(p.fraction, 9)))));
        const popTable = el("div", { class: "table-wrap" }, el("table", { class: "data compact" }, el("caption", {}, "Boltzmann populations"), el("thead", {}, el("tr", {}, el("th", { scope: "col" }, "Level"), el("th", { scope: "col", class: "num" }, "Fraction"))), pops));
        const rows = [
          ["Nucleus", nuclideLabel(r.nucleus)],
          ["Population excess (adjacent levels)", NMR.numberNode(fmt(r.population_excess, 4))],
          ["Field", fmt(r.field_T, 6), "T"],
        ];
        if (r.photon) rows.push(["Photon / NMR quantum", NMR.numberNode(fmt(r.photon_over_nmr, 4))]);
        out.replaceChildren(NMR.resultList(rows), el("div", { class: "pair" }, energies, popTable));
      },
    });

    const recept = NMR.form({
      id: "receptivity",
      title: "Receptivity",
      intro: "Signal per molecule of one nuclide relative to another at natural abundance (or at an enrichment you give), and how much longer averaging takes for the same signal-to-noise.",
      fields: [
        { id: "nucleus", param: "sensitivity.nucleus", value: "15N", list: "nuclide-list" },
        { id: "relative_to", param: "sensitivity.relative_to", list: "nuclide-list" },
        { id: "enrichment", param: "sensitivity.enrichment_percent", optional: true, value: "" },
      ],
      request(v) {
        const req = { op: "sensitivity", nucleus: v.nucleus.value, relative_to: v.relative_to.value };
        if (v.enrichment.value !== "") req.enrichment_percent = v.enrichment.value;
        return req;
      },
      render(r, out) {
        out.replaceChildren(NMR.resultList([
          [el("span", {}, "Receptivity of ", nuclideLabel(r.nucleus), " vs ", nuclideLabel(r.relative_to)), NMR.numberNode(fmt(r.receptivity, 4))],
          ["Time for equal S/N (×)", NMR.numberNode(fmt(r.time_factor, 4))],
          [el("span", {}, "vs ", nuclideLabel("1H")), NMR.numberNode(fmt(r.receptivity_H, 4))],
          [el("span", {}, "vs ", nuclideLabel("13C")), NMR.numberNode(fmt(r.receptivity_C, 4))],
          ["Abundance used", fmt(r.abundance_percent, 4), "%"],
        ]));
      },
    });
    container.append(el("div", { class: "cards" }, gap.node, recept.node));
    gap.node.classList.add("card-wide");
  },
};
