// Panel: coupling between isotopologues — scale J from one isotope to another
// by the ratio of magnetogyric ratios (of Ξ where both share a reference compound); optionally the reduced coupling K.
import * as NMR from "../nmr.js";

export default {
  id: "coupling",
  title: "Isotopologue coupling",
  build(container) {
    const { el, fmt, nuclideLabel } = NMR;
    const scale = NMR.form({
      id: "scale",
      title: "Scale a coupling to another isotope",
      intro: "A coupling measured with one isotope (say ²H) predicts the coupling of the same bond with another (¹H).",
      fields: [
        { id: "J", param: "scale_coupling.J", value: "32" },
        { id: "from", param: "scale_coupling.from", value: "2H", list: "nuclide-list" },
        { id: "to", param: "scale_coupling.to", value: "1H", list: "nuclide-list" },
        { id: "partner", param: "scale_coupling.partner", label: "Coupling partner (optional, for K)", value: "13C", list: "nuclide-list" },
      ],
      request(v) {
        const req = { op: "scale_coupling", J: v.J.value, from: v.from.value, to: v.to.value };
        if (v.partner.value !== "") req.partner = v.partner.value;
        return req;
      },
      render(r, out) {
        const rows = [
          ["Predicted J", el("span", {}, fmt(r.J_Hz, 5)), "Hz"],
          [r.ratio_source === "xi" ? "Ratio Ξ(to) / Ξ(from)" : "Ratio γ(to) / γ(from)", fmt(r.ratio, 7)],
          ["Sign of J", r.sign_flipped ? "flips (γ of opposite sign)" : "unchanged"],
        ];
        if (r.reduced_coupling !== null) {
          rows.push([el("span", {}, "Reduced coupling K (", nuclideLabel(r.from), "–", nuclideLabel(r.partner), ")"),
            NMR.numberNode(fmt(r.reduced_coupling, 4)), "N A⁻² m⁻³"]);
        }
        out.replaceChildren(NMR.resultList(rows), el("p", { class: "hint" }, r.ratio_note));
      },
    });
    container.append(el("div", { class: "cards" }, scale.node));
  },
};
