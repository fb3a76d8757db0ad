// Panel: nuclide reference — search the nuclide data, tap one for its details.
import * as NMR from "../nmr.js";

export default {
  id: "reference",
  title: "Nuclide reference",
  build(container) {
    const { el, fmt, fixed, nuclideLabel } = NMR;
    const details = el("section", { class: "card", id: "nuclide-details", "aria-live": "polite", "aria-label": "Nuclide details" },
      el("h2", {}, "Details"), el("p", { class: "intro" }, "Choose a nuclide from the list."));

    async function show(symbol) {
      try {
        localStorage.setItem("nmrcalc.nuclide.v1", symbol);
      } catch (err) {
        // not kept across reloads then
      }
      const response = await NMR.api({ op: "nuclide", query: symbol });
      if (!response.ok) {
        details.replaceChildren(el("h2", {}, "Details"), el("p", { class: "form-error" }, response.error.message));
        return;
      }
      const n = response.result;
      const rows = [
        ["Element", `${n.element_name || n.element} (Z = ${n.Z})`],
        ["Spin I", n.spin],
        ["Natural abundance", n.abundance_percent === null ? "none (not natural)" : fmt(n.abundance_percent, 5), n.abundance_percent === null ? "" : "%"],
        ["γ", NMR.numberNode(fmt(n.gamma_rad_per_s_per_T, 7)), "rad s⁻¹ T⁻¹"],
        ["Ξ (unified scale)", n.xi_percent === null ? "none" : fixed(n.xi_percent, 6), n.xi_percent === null ? "" : "%"],
        ["Reference compound", n.reference || "none"],
        ["Quadrupole moment Q", n.quadrupole_fm2 === null ? "none" : fmt(n.quadrupole_fm2, 4), n.quadrupole_fm2 === null ? "" : "fm²"],
        [el("span", {}, "Receptivity vs ", nuclideLabel("1H")), NMR.numberNode(fmt(n.receptivity_H, 4))],
        [el("span", {}, "Receptivity vs ", nuclideLabel("13C")), NMR.numberNode(fmt(n.receptivity_C, 4))],
      ];
      if (n.biomolecular_xi_percent !== null && n.biomolecular_xi_percent !== undefined) {
        rows.splice(5, 0, ["Ξ (biomolecular)", fixed(n.biomolecular_xi_percent, 6), `% (${n.biomolecular_reference})`]);
      }
      details.replaceChildren(
        el("h2", {}, nuclideLabel(n.symbol)),
        NMR.resultList(rows),
        el("ul", { class: "warnings" }, ...(n.notes || []).map((t) => el("li", {}, t))),
      );
    }

    const search = NMR.form({
      id: "nuclides",
      title: "Find a nuclide",
      intro: "Search by nuclide (13C, N-15, ¹⁵N, D), element symbol or name, or mass number.",
      submitLabel: "Search",
      fields: [{ id: "search", label: "Search", value: "", placeholder: "e.g. nitrogen, 19F, Sn" }],
      request: (v) => ({ op: "nuclides", search: v.search.value }),
      render(r, out) {
        const list = el("ul", { class: "pick-list" }, ...r.nuclides.map((n) => el("li", {},
          el("button", { type: "button", class: "pick", onclick: () => show(n.symbol).then(() => details.scrollIntoView({ block: "nearest" })) },
            el("span", { class: "pick-sym" }, nuclideLabel(n.symbol)),
            el("span", { class: "pick-meta" }, `${n.element_name || n.element} · I = ${n.spin} · ${n.abundance_percent === null ? "not natural" : `${fmt(n.abundance_percent, 3)} %`}`)))));
        out.replaceChildren(el("p", { class: "count" }, `${r.count} nuclides`), list);
      },
    });
    container.append(el("div", { class: "cards" }, search.node, details));
    let last = "1H";
    try {
      last = localStorage.getItem("nmrcalc.nuclide.v1") || last;
    } catch (err) {
      // default nuclide
    }
    NMR.whenShown(details, () => show(last));
  },
};
