// Starts the Python worker as early as the page allows, before the page's own
// scripts run: from <head> on a web server; in the single file right after the
// worker's source, each embedded file being posted to the worker as soon as the
// browser has parsed it (NMRBoot.sendPrevious() follows every file block), so
// Python starts while the rest of the page still loads.
// The shell (js/core.js) takes the worker (NMRBoot.worker()) over with NMRBoot.adopt(listener) and
// starts a fresh one with NMRBoot.restart(listener) after a crash or a cancel.
// listener(event, worker) gets the worker's message, error and messageerror events.
"use strict";

const NMRBoot = (() => {
  // Uncaught errors and CSP violations on the page, from its first script on, so that a
  // test driving any engine (even one whose console it cannot read) can ask for them.
  const problems = [];
  addEventListener("error", (event) => problems.push(`error: ${event.message}`));
  addEventListener("unhandledrejection", (event) => problems.push(`unhandled rejection: ${event.reason}`));
  document.addEventListener("securitypolicyviolation", (event) => problems.push(`CSP ${event.violatedDirective}: ${event.blockedURI}`));
  let worker = null;
  let early = [];  // events that arrive before the shell listens
  let listener = (event, from) => early.push([event, from]);
  let startedAt = null;

  function send(node) {
    worker.postMessage({ type: "asset", name: node.dataset.name, kind: node.dataset.kind, data: node.textContent.trim(), gzip: node.dataset.gzip === "1" });
  }

  // A browser that cannot start this kind of worker gets a stand-in that reports
  // why, in one plain sentence, instead of a page waiting for Python forever.
  function refused(err) {
    const stand = { postMessage() {}, terminate() {} };
    const data = { type: "boot-error", message: String(err), advice: "This browser cannot start the calculator's background worker: open the page in a current Chrome, Edge, Firefox or Safari." };
    setTimeout(() => listener({ type: "message", data }, stand), 0);
    return stand;
  }

  function create() {
    startedAt = performance.now();
    const source = document.getElementById("nmrcalc-worker");
    let made;
    try {
      made = source
        // single file on file://: an opaque origin, so the worker comes from a data: URL
        // and every other file by message
        ? new Worker(`data:text/javascript;base64,${source.textContent.trim()}`, { type: "module" })
        : new Worker("worker.js", { type: "module" });
    } catch (err) {
      worker = refused(err);
      return;
    }
    for (const type of ["message", "error", "messageerror"]) made.addEventListener(type, (event) => listener(event, made));
    made.postMessage(source
      ? { type: "boot", mode: "inline", indexURL: "https://nmrcalc.invalid/", names: source.dataset.assets.split(" ") }
      : { type: "boot", mode: "site" });
    worker = made;
  }

  create();
  return {
    startedAt: () => startedAt,
    problems: () => problems.slice(),
    worker: () => worker,
    sendPrevious() {
      send(document.currentScript.previousElementSibling);
    },
    adopt(fn) {
      listener = fn;
      const queued = early;
      early = [];
      for (const [event, from] of queued) fn(event, from);
    },
    restart(fn) {
      listener = fn;
      create();
      for (const node of document.querySelectorAll("script.nmrcalc-asset")) send(node);
      return worker;
    },
  };
})();
