// Panel: bench notebook — the pinned results, newest first, with their notes;
// re-open, share, delete; export/import JSON, export CSV, print.
import * as NMR from "../nmr.js";
import NMRPlot from "../plot.js";
import NMRNotebook from "../notebook.js";

export default {
  id: "notebook",
  title: "Bench notebook",
  build(container) {
    const { el } = NMR;
    const status = el("p", { class: "hint", id: "notebook-status", "aria-live": "polite" });
    const exportJson = el("button", { type: "button", class: "small-button", id: "notebook-export-json" }, "Export JSON");
    const exportCsv = el("button", { type: "button", class: "small-button", id: "notebook-export-csv" }, "Export CSV");
    const printButton = el("button", { type: "button", class: "small-button", id: "notebook-print" }, "Print");
    const importInput = el("input", { type: "file", id: "notebook-import", accept: "application/json,.json", class: "file-input" });
    const importLabel = el("label", { class: "small-button file-label" }, "Import JSON…", importInput);
    const listNode = el("ol", { class: "pins", id: "notebook-pins", "aria-label": "Pinned results, newest first" });
    const count = el("p", { class: "count", id: "notebook-count" });

    const stamp = () => new Date().toISOString().slice(0, 19).replace(/:/g, "-");
    exportJson.addEventListener("click", () => NMRPlot.downloadText(`nmrcalc-notebook-${stamp()}.json`, "application/json", NMRNotebook.exportJSON()));
    exportCsv.addEventListener("click", () => NMRPlot.downloadText(`nmrcalc-notebook-${stamp()}.csv`, "text/csv", NMRNotebook.toCSV()));
    printButton.addEventListener("click", () => window.print());
    importInput.addEventListener("change", async () => {
      const file = importInput.files && importInput.files[0];
      if (!file) return;
      try {
        const added = NMRNotebook.importJSON(await file.text());
        status.textContent = `Imported ${added} pin${added === 1 ? "" : "s"} from ${file.name}.`;
      } catch (err) {
        const reason = err instanceof NMRNotebook.NotebookError ? err.message : "it could not be read";
        status.textContent = `Not imported: ${reason}.`;
      }
      importInput.value = "";
    });

    function pinItem(pin) {
      const when = new Date(pin.time);
      const row = ([label, value]) => el("div", { class: "value" }, el("dt", {}, label), el("dd", {}, value));
      const results = NMRNotebook.resultRows(pin).map(row);
      const inputs = NMRNotebook.inputRows(pin).map(row);
      const reopen = el("button", { type: "button", class: "small-button pin-reopen" }, "Re-open");
      reopen.addEventListener("click", () => NMRNotebook.reopen(pin));
      const share = el("button", { type: "button", class: "small-button pin-share-link" }, "Share link");
      const link = el("input", { type: "text", readonly: true, class: "pin-link", hidden: true, "aria-label": `Share link for ${pin.title || pin.op}` });
      share.addEventListener("click", () => {
        link.value = NMRNotebook.shareLink(pin);
        link.hidden = false;
        link.focus();
        link.select();
      });
      const remove = el("button", { type: "button", class: "small-button pin-delete", "aria-label": `Delete pin from ${when.toLocaleString()}` }, "Delete");
      remove.addEventListener("click", () => {
        NMRNotebook.remove(pin.id);
        status.textContent = "Pin deleted.";
      });
      return el("li", { class: "card pin", "data-pin-id": pin.id },
        el("h3", {}, pin.title || pin.form),
        el("p", { class: "pin-meta" }, el("time", { datetime: pin.time }, when.toLocaleString()), ` · panel: ${pin.panel}`, pin.version ? ` · nmrcalc ${pin.version}` : ""),
        pin.note ? el("p", { class: "pin-note-text" }, pin.note) : null,
        el("h4", {}, "Inputs"), el("dl", { class: "values pin-inputs" }, ...inputs),
        el("h4", {}, "Key results"), el("dl", { class: "values pin-results" }, ...results),
        el("div", { class: "actions no-print" }, reopen, share, remove), link);
    }

    function draw() {
      const pins = NMRNotebook.list();
      count.textContent = pins.length ? `${pins.length} pinned result${pins.length === 1 ? "" : "s"}, newest first.` : "No pins yet: press “Pin result” under any result.";
      listNode.replaceChildren(...pins.map(pinItem));
    }
    NMRNotebook.onChange(draw);

    container.append(el("div", { class: "cards" },
      el("section", { class: "card card-wide", "aria-labelledby": "notebook-title" },
        el("h2", { id: "notebook-title" }, "Bench notebook"),
        el("p", { class: "intro" }, "Results you pin, with your note and the time. Kept in this browser; export them to keep a copy or move them to another device. Opened from a file (file://), this notebook is shared with every other local file this browser opens: Export JSON is your backup."),
        el("div", { class: "actions no-print" }, exportJson, exportCsv, importLabel, printButton),
        status, count, listNode)));
    draw();
  },
};
