// Panel: solvent signals and deuteration level. Everything shown comes from the
// API ops "solvents" and "deuteration"; this file collects inputs and draws results.
import * as NMR from "../nmr.js";

export default {
  id: "labels",
  title: "Solvents & deuteration",
  build(container) {
    const { el, fmt, fixed } = NMR;

    // ---------- solvent table search ----------
    function loadIntoBuilder(s, note) {
      const req = s.multiplet_request;
      const groups = req.groups.map((g) => ({ kind: "partner", partner: g.partner, count: String(g.count), J: String(parseFloat(g.J)), J_isotope: "", quadrupolar: "" }));
      const inputs = {
        "mult.rows": { groups, abundance: [] },
        "mult.observe": { value: req.observe, unit: null },
        "mult.center": { value: String(s.shift_ppm), unit: null },
      };
      if (!NMR.openInputs("multiplet", "mult", inputs)) note.textContent = "The multiplet builder is not part of this page.";
    }
    const solvents = NMR.form({
      id: "solvents",
      title: "Solvent signals",
      intro: "Residual solvent and water signals of common deuterated solvents. Type a shift (is the peak at 2.50 ppm my solvent?) or a name; leave empty for the whole table.",
      submitLabel: "Search",
      fields: [
        { id: "query", param: "solvents.query", value: "", placeholder: "e.g. 2.50 or DMSO", keys: ["query", "tolerance"] },
        { id: "nucleus", param: "solvents.nucleus", kind: "select", options: [["", "1H and 13C"], ["1H", "1H"], ["13C", "13C"]] },
      ],
      request: (v) => {
        const req = { op: "solvents" };
        if (v.query.value !== "") req.query = v.query.value;
        if (v.nucleus.value !== "") req.nucleus = v.nucleus.value;
        return req;
      },
      render(r, out) {
        const note = el("p", { class: "hint", "aria-live": "polite" });
        const columns = [
          { key: "name", label: "Solvent", value: (s) => s.name, show: (s) => s.name },
          { key: "signal", label: "Signal", value: (s) => s.signal, show: (s) => s.signal },
          { key: "nucleus", label: "Nucleus", value: (s) => s.nucleus, show: (s) => NMR.nuclideLabel(s.nucleus) },
          { key: "shift", label: "δ (ppm)", numeric: true, value: (s) => s.shift_ppm, show: (s) => fixed(s.shift_ppm, 2) },
          { key: "mult", label: "Pattern (engine)", value: (s) => s.multiplicity, show: (s) => s.multiplicity },
          { key: "J", label: "J to 2H (Hz)", numeric: true, value: (s) => s.J_Hz, show: (s) => (s.J_Hz === null ? "—" : fmt(s.J_Hz, 3)) },
          { key: "source", label: "Source", value: (s) => s.source, show: (s) => s.source },
          {
            key: "load", label: "Multiplet builder", value: () => 0,
            show: (s) => el("button", { type: "button", class: "small-button", onclick: () => loadIntoBuilder(s, note) }, "Load"),
          },
        ];
        out.replaceChildren(
          el("p", { class: "count" }, r.solvents.length ? `${r.solvents.length} signals${r.query !== undefined && r.query !== null ? " (nearest first for a shift)" : ""}` : "No match."),
          NMR.sortableTable(columns, r.solvents, "Solvent signals"),
          note,
        );
      },
    });

    // ---------- deuteration level ----------
    const deut = NMR.form({
      id: "deut",
      title: "Deuteration level of one site",
      intro: "Route 1: the integrals of the site's isotopologue signals (k = number of D), compared with a random (binomial) distribution. Route 2: the residual 1H signal of the site against an internal standard. Fill either or both.",
      submitLabel: "Calculate",
      fields: [
        { id: "positions", param: "deuteration.positions", value: "3", inputmode: "numeric" },
        { id: "integrals", param: "deuteration.integrals", value: "0.2, 3.8, 27.9, 68.1", placeholder: "comma separated", wide: true },
        { id: "observed", param: "deuteration.observed_on", kind: "select", options: [["once_per_molecule", "once per molecule (13C)"], ["site_1H", "the site's own 1H"]] },
        { id: "error", param: "deuteration.integral_error", value: "", placeholder: "1 % of the largest", inputmode: "decimal" },
        { id: "residual", param: "deuteration.residual.integral", value: "", inputmode: "decimal", keys: ["residual.integral", "residual"] },
        { id: "standard", param: "deuteration.residual.standard_integral", value: "1", inputmode: "decimal" },
        { id: "nuclei", param: "deuteration.residual.standard_nuclei", value: "3", inputmode: "numeric" },
        { id: "ratio", param: "deuteration.residual.standard_per_analyte", value: "1", inputmode: "decimal" },
        { id: "relerr", param: "deuteration.residual.relative_error", value: "", placeholder: "none", inputmode: "decimal" },
      ],
      request: (v) => {
        // a number as typed; text that is not one goes to the op as typed, which names the field
        const num = (text) => (text === "" ? null : Number.isNaN(Number(text)) ? text : Number(text));
        const req = { op: "deuteration", positions: num(v.positions.value), observed_on: v.observed.value };
        if (v.integrals.value !== "") req.integrals = v.integrals.value;
        if (v.error.value !== "") req.integral_error = num(v.error.value);
        if (v.residual.value !== "") {
          req.residual = { integral: num(v.residual.value), standard_integral: num(v.standard.value), standard_nuclei: num(v.nuclei.value), standard_per_analyte: num(v.ratio.value) };
          if (v.relerr.value !== "") req.residual.relative_error = v.relerr.value;
        }
        return req;
      },
      render(r, out) {
        const boxes = [];
        const a = r.routes.integrals;
        if (a) {
          const rows = a.expected_integrals.map((e, k) => ({ k, expected: e }));
          boxes.push(el("div", { class: "route", id: "deut-integrals" },
            el("h3", { class: "sub-title" }, "From the isotopologue integrals"),
            el("p", { class: "headline" }, `D = ${fixed(a.D_percent, 2)} ± ${fixed(a.D_percent_uncertainty, 2)} %`),
            el("p", { class: "count" }, a.binomial === null ? "Too few integrals to test the distribution." : (a.binomial ? "Consistent with random (binomial) labelling." : "Not binomial: site-selective or incomplete labelling.")),
            NMR.sortableTable([
              { key: "k", label: "k (D atoms)", numeric: true, value: (x) => x.k, show: (x) => x.k },
              { key: "expected", label: "Binomial integral", numeric: true, value: (x) => x.expected, show: (x) => fmt(x.expected, 4) },
            ], rows, "Integrals a binomial distribution would give")));
        }
        const b = r.routes.residual;
        if (b) {
          boxes.push(el("div", { class: "route", id: "deut-residual" },
            el("h3", { class: "sub-title" }, "From the residual 1H signal"),
            el("p", { class: "headline" }, b.D_percent_uncertainty > 0 ? `D = ${fixed(b.D_percent, 2)} ± ${fixed(b.D_percent_uncertainty, 2)} %` : `D = ${fixed(b.D_percent, 2)} % (no integral error given)`),
            el("p", { class: "count" }, `${fmt(b.H_per_molecule, 4)} H left per molecule at this site`)));
        }
        out.replaceChildren(el("div", { class: "pair" }, ...boxes), el("p", { class: "hint" }, r.model));
      },
    });
    // integrals from the multiplet builder's isotopologue shares (stored there as mult.byD)
    const take = el("button", { type: "button", class: "small-button", id: "deut-from-builder" }, "Take the integrals from the multiplet builder");
    const takeNote = el("span", { class: "hint", "aria-live": "polite" });
    take.addEventListener("click", () => {
      const shares = NMR.recall("mult.byD");
      if (!shares) {
        takeNote.textContent = "Build a one-site H/D mixture in the multiplet builder first.";
        return;
      }
      const byId = Object.fromEntries(deut.fields.map((f) => [f.field.id, f]));
      byId.positions.load({ value: String(shares.positions) });
      byId.integrals.load({ value: shares.integrals.map((x) => String(Number(x.toPrecision(6)))).join(", ") });
      byId.observed.load({ value: "once_per_molecule" });
      takeNote.textContent = "Shares (%) of the builder's isotopologues, by number of 2H atoms.";
      deut.run();
    });
    deut.node.querySelector("form").after(el("div", { class: "actions" }, take, takeNote));
    solvents.node.classList.add("card-wide");
    container.append(el("div", { class: "cards" }, solvents.node, deut.node));
  },
};
