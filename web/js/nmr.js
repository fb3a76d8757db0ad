// The shared namespace of the page's modules: core.js's exports and the notebook's hand-over,
// pin and share-link functions, read by panels as `import * as NMR from "../nmr.js"`
// (a module namespace: read-only, nothing patches it). Plots: js/plot.js; the notebook's
// pin list and exports: js/notebook.js (their default exports, NMRPlot and NMRNotebook).
export * from "./core.js";
export { withUndo, openInputs, openShareLink, pinSource, pinBar } from "./notebook.js";
