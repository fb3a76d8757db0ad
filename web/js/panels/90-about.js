// Panel: about & safety — what the numbers are, and the cautions around magnets.
import * as NMR from "../nmr.js";

export default {
  id: "about",
  title: "About & safety",
  build(container) {
    const { el } = NMR;
    const list = (...items) => el("ul", {}, ...items.map((t) => el("li", {}, t)));
    container.append(el("div", { class: "cards" },
      el("section", { class: "card card-safety", "aria-labelledby": "safety-title" },
        el("h2", { id: "safety-title" }, "Safety around NMR magnets"),
        list(
          "Superconducting magnets are always on. The strong static field reaches well outside the magnet; respect the marked lines around it.",
          "The 5 G line (0.5 mT) marks where the stray field can upset pacemakers and other implanted devices: nobody with such a device goes inside it unless cleared.",
          "Keep ferromagnetic objects away: tools, gas cylinders, chairs, keys, phones and bank cards can be pulled in with great force or be damaged.",
          "People with pacemakers, defibrillators, neurostimulators, insulin pumps or other implanted medical devices or metal implants must not enter the marked area unless cleared.",
          "Liquid helium and nitrogen are cryogens: cold burns, and in a quench or a spill the boiling gas can displace the air and cause asphyxiation. Leave the room if the magnet quenches and follow the alarm procedure.",
          "Follow your facility's rules and training; they take precedence over anything here.",
        )),
      el("section", { class: "card", "aria-labelledby": "about-title" },
        el("h2", { id: "about-title" }, "About these numbers"),
        el("p", {}, "Every value is computed by the nmrcalc Python package running inside this browser page. Nothing is sent anywhere, and after the first load the page works without a network."),
        list(
          "The results are planning aids. Verify frequencies, pulse settings and references on the instrument before you rely on them.",
          "Scaled couplings are estimates: primary isotope effects shift real couplings slightly.",
          "Receptivities compare ideal signals; relaxation, line width, NOE and probe tuning change what you measure.",
        ),
        el("p", { class: "hint" }, "Inputs and pins are kept in this browser's local storage so they survive a reload. Opened as a file (file://), the page shares that storage with every other local file this browser opens: another file can read or change it. Export the bench notebook as JSON: the export is your backup."),
        el("p", { class: "hint", id: "offline-status", "aria-live": "polite" }, location.protocol.startsWith("http") ? "" : "This single file works offline as it is."))));
  },
};
