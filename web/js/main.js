// The page's entry module (esbuild bundles it and everything it imports into one script):
// the panels in tab order, registered with the shell, then the shell starts.
import { registerPanel, start, api, cancel, debugWorker, setSilentLimit } from "./core.js";
import NMRNotebook, { openShareLink } from "./notebook.js";
import magnet from "./panels/10-magnet.js";
import coupling from "./panels/20-coupling.js";
import energy from "./panels/30-energy.js";
import reference from "./panels/40-reference.js";
import multiplet from "./panels/50-multiplet.js";
import labels from "./panels/55-labels.js";
import spins from "./panels/60-spins.js";
import identify from "./panels/70-identify.js";
import spectrum from "./panels/75-spectrum.js";
import notebook from "./panels/80-notebook.js";
import about from "./panels/90-about.js";

for (const panel of [magnet, coupling, energy, reference, multiplet, labels, spins, identify, spectrum, notebook, about]) {
  registerPanel(panel);
}

// The page's one deliberate global besides window.nmrcalcStatus: a frozen hook for the browser
// tests and build_scripts/benchmark.py (calls timed in the page, a worker a test makes fail,
// the notebook's pins and CSV cell guard). The page itself never reads it.
window.nmrcalcTest = Object.freeze({
  api, cancel, openShareLink, worker: debugWorker, setSilentLimit,
  notebook: Object.freeze({ list: NMRNotebook.list, csvCell: NMRNotebook.csvCell, cleanNumber: NMRNotebook.cleanNumber }),
});

start();
