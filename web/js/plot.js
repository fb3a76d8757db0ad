// nmrcalc plot module: small SVG plots for line spectra, stick diagrams,
// stacked spectra and splitting trees. It draws numbers it is given (from the
// API result) and computes no physics: only the mapping of data to pixels,
// reducing many points to one min/max pair per pixel column, and view state.
//
// Why no plotting library: the page is one self-contained file under a strict
// CSP (hashed scripts, no inline style attributes, no network). The small,
// well-kept libraries we weighed either draw on canvas only (so no SVG export),
// or are large general toolkits whose size would dwarf this module; a reversed
// ppm axis, a stick diagram and a tree are a few dozen lines each in plain SVG.
// Colours come from CSS variables (--plot-*) so light and dark themes both work,
// and are written as presentation attributes so an exported SVG keeps them.
// An ES module; the notebook gives an exported plot its caption (used only when a plot is exported).
import NMRNotebook from "./notebook.js";

const NMRPlot = (() => {
  const SVG_NS = "http://www.w3.org/2000/svg";
  const FONT = "system-ui, -apple-system, Segoe UI, Roboto, sans-serif";
  const MARGIN = { left: 14, right: 14, top: 12, bottom: 40 };

  function svgEl(tag, attrs) {
    const node = document.createElementNS(SVG_NS, tag);
    for (const [name, value] of Object.entries(attrs || {})) {
      if (value !== null && value !== undefined) node.setAttribute(name, String(value));
    }
    return node;
  }

  function cssVar(name, fallback) {
    const value = getComputedStyle(document.documentElement).getPropertyValue(name).trim();
    return value || fallback;
  }

  function palette() {
    const series = [];
    for (let i = 1; i <= 6; i += 1) series.push(cssVar(`--plot-${i}`, cssVar("--accent", "#1d5a63")));
    return {
      ink: cssVar("--ink", "#17262a"), muted: cssVar("--muted", "#50646a"), grid: cssVar("--line", "#d3dedf"),
      bg: cssVar("--card", "#ffffff"), mark: cssVar("--plot-mark", cssVar("--note", "#7a5200")), series,
    };
  }

  // "Nice" tick positions covering [lo, hi] (lo < hi), about `count` of them.
  function ticks(lo, hi, count) {
    const raw = (hi - lo) / Math.max(count, 1);
    const power = 10 ** Math.floor(Math.log10(raw));
    // the smallest "nice" step that gives at most count + 1 ticks
    const step = [0.1, 0.2, 0.5, 1, 2, 5, 10].map((m) => m * power).find((s) => (hi - lo) / s <= count + 1) || raw;
    const out = [];
    for (let v = Math.ceil(lo / step) * step; v <= hi + step * 1e-9; v += step) out.push(Number(v.toPrecision(12)));
    const places = Math.max(0, -Math.floor(Math.log10(step) + 1e-9));
    return { values: out, places };
  }

  // ---------- downloads (data: URLs: allowed by the single file's CSP) ----------
  function downloadURL(name, url) {
    const link = document.createElement("a");
    link.href = url;
    link.download = name;
    document.body.append(link);
    link.click();
    link.remove();
  }
  function downloadText(name, mime, text) {
    downloadURL(name, `data:${mime};charset=utf-8,${encodeURIComponent(text)}`);
  }
  function svgDataURL(svg) {
    const text = new XMLSerializer().serializeToString(svg);
    const bytes = new TextEncoder().encode(text);
    let binary = "";
    for (let i = 0; i < bytes.length; i += 0x8000) binary += String.fromCharCode(...bytes.subarray(i, i + 0x8000));
    return `data:image/svg+xml;base64,${btoa(binary)}`;
  }
  // The exported picture carries its own caption: the tool version and the inputs of the result
  // it shows (from the notebook's record of the card's latest result), wrapped under the plot.
  function withCaption(svg) {
    const lines = typeof NMRNotebook !== "undefined" ? NMRNotebook.captionLines(svg, 110) : [];
    const copy = svg.cloneNode(true);
    const width = Number(svg.getAttribute("width"));
    const height = Number(svg.getAttribute("height"));
    const extra = lines.length ? lines.length * 14 + 10 : 0;
    copy.setAttribute("height", String(height + extra));
    copy.setAttribute("viewBox", `0 0 ${width} ${height + extra}`);
    const colors = palette();
    if (extra) copy.append(svgEl("rect", { x: 0, y: height, width, height: extra, fill: colors.bg }));
    lines.forEach((line, i) => {
      const text = svgEl("text", { x: 8, y: height + 16 + i * 14, "font-size": 11, "font-family": FONT, fill: colors.ink });
      text.textContent = line;
      copy.append(text);
    });
    return { node: copy, width, height: height + extra };
  }
  function exportSVG(svg, name) {
    downloadURL(`${name}.svg`, svgDataURL(withCaption(svg).node));
  }
  function exportPNG(svg, name) {
    const { node, width, height } = withCaption(svg);
    const image = new Image();
    image.onload = () => {
      const canvas = document.createElement("canvas");
      canvas.width = width * 2;
      canvas.height = height * 2;
      const context = canvas.getContext("2d");
      context.scale(2, 2);
      context.drawImage(image, 0, 0, width, height);
      downloadURL(`${name}.png`, canvas.toDataURL("image/png"));
    };
    image.src = svgDataURL(node);
  }

  function toolButton(label, text, onClick) {
    const button = document.createElement("button");
    button.type = "button";
    button.className = "plot-tool";
    button.setAttribute("aria-label", label);
    button.title = label;
    button.textContent = text;
    button.addEventListener("click", onClick);
    return button;
  }

  function frame(container, options, redraw) {
    const wrap = document.createElement("figure");
    wrap.className = "plot";
    const svg = svgEl("svg", { role: "img", "aria-label": options.label || "plot", tabindex: "0", class: "plot-svg" });
    const tools = document.createElement("div");
    tools.className = "plot-tools";
    tools.setAttribute("role", "toolbar");
    tools.setAttribute("aria-label", `${options.label || "plot"} controls`);
    const legend = document.createElement("ul");
    legend.className = "plot-legend";
    wrap.append(tools, svg, legend);
    if (options.caption) {
      const caption = document.createElement("figcaption");
      caption.textContent = options.caption;
      wrap.append(caption);
    }
    container.append(wrap);
    const name = options.fileName || "nmrcalc-plot";
    tools.append(
      toolButton("Export SVG", "SVG", () => exportSVG(svg, name)),
      toolButton("Export PNG", "PNG", () => exportPNG(svg, name)),
    );
    let lastWidth = 0;
    new ResizeObserver(() => {
      const width = Math.round(svg.getBoundingClientRect().width);
      if (width > 0 && width !== lastWidth) {
        lastWidth = width;
        redraw();
      }
    }).observe(wrap);
    window.matchMedia("(prefers-color-scheme: dark)").addEventListener("change", () => redraw());
    return { wrap, svg, tools, legend };
  }

  // The largest y among the points with lo <= x <= hi (the y scale follows the zoom).
  function visibleTop(traces, lo, hi) {
    let top = 0;
    for (const t of traces) {
      for (let i = 0; i < t.x.length; i += 1) {
        if (t.x[i] >= lo && t.x[i] <= hi && t.y[i] > top) top = t.y[i];
      }
    }
    return top;
  }

  function setLegend(legend, entries, colors) {
    legend.replaceChildren(...entries.map((entry) => {
      const item = document.createElement("li");
      const swatch = document.createElement("span");
      swatch.className = `plot-swatch${entry.dashed ? " dashed" : ""}${entry.kind === "sticks" ? " sticks" : ""}`;
      swatch.style.borderColor = colors(entry);
      item.append(swatch, document.createTextNode(entry.label));
      return item;
    }));
  }

  /**
   * A pan/zoom plot on an x axis (ppm decreasing to the right when reversed).
   * create(container, {label, xLabel, reversed, height, fileName})
 *   -> {node, svg, update(data, keepView), view(), setXLabel(text), zoom(factor), pan(fraction), reset()}
   * data: {traces: [{label, x, y, kind: "line"|"sticks", color, dashed, mark, legend, below}], stacked, stackLabels}
   * color: index into --plot-1..6; mark: draw in the marker colour (e.g. satellites); below: drawn in a
   * band under the others at their vertical scale (a residual). options.onTap(x): a tap (or click) at data x.
   */
  function create(container, options) {
    const opts = { height: 300, reversed: true, caption: "Zoom: wheel, pinch or + / −. Pan: drag or ← →. 0 or Reset restores the view.", ...options };
    let data = { traces: [] };
    let full = [0, 1];
    let view = [0, 1];
    const parts = frame(container, opts, () => draw());
    const { svg, tools, legend } = parts;
    svg.dataset.view = "";

    function extent() {
      let lo = Infinity;
      let hi = -Infinity;
      for (const t of data.traces) {
        for (const x of t.x) {
          if (x < lo) lo = x;
          if (x > hi) hi = x;
        }
      }
      if (!Number.isFinite(lo)) return [0, 1];
      if (hi - lo < 1e-12) return [lo - 0.5, hi + 0.5];
      const pad = (hi - lo) * 0.04;
      return [lo - pad, hi + pad];
    }

    function setView(lo, hi) {
      const span = full[1] - full[0];
      const minSpan = span * 1e-5;
      if (hi - lo < minSpan) {
        const mid = (lo + hi) / 2;
        lo = mid - minSpan / 2;
        hi = mid + minSpan / 2;
      }
      view = [lo, hi];
      draw();
    }

    function colorOf(pal, t) {
      if (t.mark) return pal.mark;
      return pal.series[(t.color || 0) % pal.series.length];
    }

    function draw() {
      const pal = palette();
      const width = Math.max(280, Math.round(svg.getBoundingClientRect().width || container.clientWidth || 600));
      const height = opts.height;
      svg.setAttribute("width", width);
      svg.setAttribute("height", height);
      svg.setAttribute("viewBox", `0 0 ${width} ${height}`);
      svg.replaceChildren();
      svg.append(svgEl("rect", { x: 0, y: 0, width, height, fill: pal.bg }));
      const left = MARGIN.left + (data.stacked ? 86 : 0);
      const plotW = width - left - MARGIN.right;
      const plotH = height - MARGIN.top - MARGIN.bottom;
      const [lo, hi] = view;
      const px = (x) => (opts.reversed ? left + ((hi - x) / (hi - lo)) * plotW : left + ((x - lo) / (hi - lo)) * plotW);
      const tk = ticks(lo, hi, Math.max(3, Math.floor(plotW / 90)));
      const axisY = MARGIN.top + plotH;
      const grid = svgEl("g", { stroke: pal.grid, "stroke-width": 1 });
      const labels = svgEl("g", { fill: pal.muted, "font-size": 12, "font-family": FONT, "text-anchor": "middle" });
      for (const v of tk.values) {
        const x = px(v);
        grid.append(svgEl("line", { x1: x, x2: x, y1: MARGIN.top, y2: axisY }));
        const text = svgEl("text", { x, y: axisY + 16 });
        text.textContent = v.toFixed(tk.places);
        labels.append(text);
      }
      const axisTitle = svgEl("text", { x: left + plotW / 2, y: axisY + 33, fill: pal.ink, "font-weight": 600 });
      axisTitle.textContent = opts.xLabel || "";
      labels.append(axisTitle);
      svg.append(grid, labels, svgEl("line", { x1: left, x2: left + plotW, y1: axisY, y2: axisY, stroke: pal.ink, "stroke-width": 1.2 }));

      const clipId = `clip-${Math.random().toString(36).slice(2)}`;
      const defs = svgEl("defs");
      const clip = svgEl("clipPath", { id: clipId });
      clip.append(svgEl("rect", { x: left, y: MARGIN.top - 2, width: plotW, height: plotH + 2 }));
      defs.append(clip);
      svg.append(defs);
      const layer = svgEl("g", { "clip-path": `url(#${clipId})` });
      svg.append(layer);

      // traces marked `below` (a residual) share the main traces' vertical scale in a band under them,
      // about their own zero line
      const lower = data.traces.some((t) => t.below) && !data.stacked ? 0.3 : 0;
      const sharedTop = visibleTop(data.traces.filter((t) => !t.below), lo, hi);
      const bands = data.stacked ? data.traces.length : 1;
      const bandH = (plotH * (1 - lower)) / bands;
      data.traces.forEach((t, index) => {
        const band = data.stacked ? index : 0;
        const below = lower && t.below;
        const base = below ? MARGIN.top + plotH * (1 - lower / 2) : MARGIN.top + bandH * (band + 1) - (data.stacked ? 4 : 0);
        const scaleH = bandH - (data.stacked ? 10 : 6);
        const inView = [];
        const yMax = data.stacked ? visibleTop([t], lo, hi) : sharedTop;
        const py = (y) => base - (yMax > 0 ? (y / yMax) * scaleH : 0);
        if (below) layer.append(svgEl("line", { x1: left, x2: left + plotW, y1: base, y2: base, stroke: pal.grid, "stroke-dasharray": "3 3" }));
        const color = colorOf(pal, t);
        if (t.kind === "sticks") {
          const g = svgEl("g", { stroke: color, "stroke-width": 2, "stroke-dasharray": t.dashed ? "4 3" : null });
          for (let i = 0; i < t.x.length; i += 1) {
            if (t.x[i] < lo || t.x[i] > hi) continue;
            const x = px(t.x[i]);
            g.append(svgEl("line", { x1: x, x2: x, y1: base, y2: py(t.y[i]) }));
          }
          layer.append(g);
        } else {
          // one min/max pair per pixel column keeps every peak top visible
          let column = null;
          let cMin = 0;
          let cMax = 0;
          const flush = () => {
            if (column !== null) inView.push([column, py(cMax)], [column, py(cMin)]);
          };
          for (let i = 0; i < t.x.length; i += 1) {
            const x = t.x[i];
            if (x < lo || x > hi) {
              if ((i + 1 < t.x.length && t.x[i + 1] >= lo && t.x[i + 1] <= hi) || (i > 0 && t.x[i - 1] >= lo && t.x[i - 1] <= hi)) {
                flush();
                column = null;
                inView.push([px(x), py(t.y[i])]);
              }
              continue;
            }
            const c = Math.round(px(x) * 2) / 2;
            if (c !== column) {
              flush();
              column = c;
              cMin = t.y[i];
              cMax = t.y[i];
            } else {
              cMin = Math.min(cMin, t.y[i]);
              cMax = Math.max(cMax, t.y[i]);
            }
          }
          flush();
          if (inView.length) {
            layer.append(svgEl("polyline", {
              points: inView.map(([x, y]) => `${x.toFixed(1)},${y.toFixed(1)}`).join(" "),
              fill: "none", stroke: color, "stroke-width": t.dashed ? 1.4 : 1.6, "stroke-linejoin": "round",
              "stroke-dasharray": t.dashed ? "5 3" : null,
            }));
          }
        }
        if (data.stacked) {
          layer.append(svgEl("line", { x1: left, x2: left + plotW, y1: base, y2: base, stroke: pal.grid }));
          const text = svgEl("text", { x: MARGIN.left, y: base - scaleH / 2, fill: pal.ink, "font-size": 13, "font-family": FONT, "font-weight": 600 });
          text.textContent = (data.stackLabels || [])[index] || t.label;
          svg.append(text);
        }
      });
      svg.dataset.view = `${lo.toPrecision(8)},${hi.toPrecision(8)}`;
      setLegend(legend, data.traces.filter((t) => t.legend !== false).map((t) => ({
        label: t.label, dashed: t.dashed, kind: t.kind, color: colorOf(pal, t),
      })), (entry) => entry.color);
    }

    // ---------- interaction ----------
    const toData = (clientX) => {
      const rect = svg.getBoundingClientRect();
      const left = MARGIN.left + (data.stacked ? 86 : 0);
      const plotW = rect.width - left - MARGIN.right;
      const f = Math.min(1, Math.max(0, (clientX - rect.left - left) / plotW));
      return opts.reversed ? view[1] - f * (view[1] - view[0]) : view[0] + f * (view[1] - view[0]);
    };
    function zoomAt(center, factor) {
      setView(center - (center - view[0]) * factor, center + (view[1] - center) * factor);
    }
    function zoom(factor) {
      zoomAt((view[0] + view[1]) / 2, factor);
    }
    function pan(fraction) {
      const shift = (view[1] - view[0]) * fraction * (opts.reversed ? -1 : 1);
      setView(view[0] + shift, view[1] + shift);
    }
    function reset() {
      setView(full[0], full[1]);
    }
    svg.addEventListener("wheel", (event) => {
      event.preventDefault();
      zoomAt(toData(event.clientX), Math.exp(event.deltaY * 0.0015));
    }, { passive: false });
    const pointers = new Map();
    let gesture = null;
    let tap = null;  // a single pointer that went down and up within a few pixels: opts.onTap(x)
    svg.addEventListener("pointerdown", (event) => {
      try {
        svg.setPointerCapture(event.pointerId);
      } catch (err) {
        // a pointer the browser no longer tracks: the gesture still works without capture
      }
      pointers.set(event.pointerId, event.clientX);
      const xs = [...pointers.values()];
      gesture = { view: view.slice(), xs, anchor: xs.map(toData) };
      tap = xs.length === 1 ? { x: event.clientX, y: event.clientY, time: event.timeStamp } : null;
    });
    svg.addEventListener("pointermove", (event) => {
      if (!pointers.has(event.pointerId) || !gesture) return;
      pointers.set(event.pointerId, event.clientX);
      const xs = [...pointers.values()];
      const rect = svg.getBoundingClientRect();
      const left = MARGIN.left + (data.stacked ? 86 : 0);
      const plotW = rect.width - left - MARGIN.right;
      const [lo0, hi0] = gesture.view;
      const perPx = ((hi0 - lo0) / plotW) * (opts.reversed ? -1 : 1);
      if (xs.length === 1 && gesture.xs.length === 1) {
        const shift = -(xs[0] - gesture.xs[0]) * perPx;
        view = [lo0 + shift, hi0 + shift];
        draw();
      } else if (xs.length >= 2 && gesture.xs.length >= 2) {
        const before = Math.abs(gesture.xs[1] - gesture.xs[0]) || 1;
        const after = Math.abs(xs[1] - xs[0]) || 1;
        const factor = before / after;
        const mid = (gesture.anchor[0] + gesture.anchor[1]) / 2;
        setView(mid - (mid - lo0) * factor, mid + (hi0 - mid) * factor);
      }
    });
    const release = (event) => {
      if (tap && event.type === "pointerup" && opts.onTap && Math.hypot(event.clientX - tap.x, event.clientY - tap.y) < 6 && event.timeStamp - tap.time < 600) {
        view = gesture ? gesture.view.slice() : view;
        draw();
        opts.onTap(toData(event.clientX));
      }
      tap = null;
      pointers.delete(event.pointerId);
      const xs = [...pointers.values()];
      gesture = xs.length ? { view: view.slice(), xs, anchor: xs.map(toData) } : null;
    };
    svg.addEventListener("pointerup", release);
    svg.addEventListener("pointercancel", release);
    svg.addEventListener("keydown", (event) => {
      const keys = { "+": () => zoom(1 / 1.5), "=": () => zoom(1 / 1.5), "-": () => zoom(1.5), ArrowLeft: () => pan(-0.15), ArrowRight: () => pan(0.15), 0: reset, Home: reset };
      if (keys[event.key]) {
        event.preventDefault();
        keys[event.key]();
      }
    });
    tools.prepend(
      toolButton("Zoom in", "+", () => zoom(1 / 1.5)),
      toolButton("Zoom out", "−", () => zoom(1.5)),
      toolButton("Pan left", "←", () => pan(-0.15)),
      toolButton("Pan right", "→", () => pan(0.15)),
      toolButton("Reset view", "Reset", reset),
    );

    return {
      node: parts.wrap,
      svg,
      /** New data; keepView keeps the current zoom if it still overlaps the data. */
      update(next, keepView) {
        data = next;
        const old = full;
        full = extent();
        const overlaps = keepView && view[0] < full[1] && view[1] > full[0] && (old[0] !== view[0] || old[1] !== view[1]);
        if (!overlaps) view = full.slice();
        draw();
      },
      view: () => view.slice(),
      setXLabel(text) {
        opts.xLabel = text;
        draw();
      },
      zoom, pan, reset,
    };
  }

  /**
   * Splitting tree drawn to scale: levels[k] are the line positions (Hz) after
   * the first k coupling groups (from the API's result.tree). A child joins each
   * parent p for which child − p is an offset shared by every parent of that level.
   * tree(container, {label, fileName, levelLabels}) -> {update(levels, levelLabels)}
   */
  function tree(container, options) {
    let levels = [];
    let levelLabels = [];
    const parts = frame(container, { ...options, caption: options.caption }, () => draw());
    const { svg } = parts;

    function offsetsOf(parents, children, eps) {
      let common = null;
      for (const p of parents) {
        const mine = children.map((c) => c - p);
        common = common === null ? mine : common.filter((d) => mine.some((m) => Math.abs(m - d) <= eps));
      }
      return common || [];
    }

    function draw() {
      const pal = palette();
      const width = Math.max(280, Math.round(svg.getBoundingClientRect().width || container.clientWidth || 600));
      const rowH = 58;
      const labelW = 150;
      const height = Math.max(1, levels.length) * rowH + 24;
      svg.setAttribute("width", width);
      svg.setAttribute("height", height);
      svg.setAttribute("viewBox", `0 0 ${width} ${height}`);
      svg.replaceChildren(svgEl("rect", { x: 0, y: 0, width, height, fill: pal.bg }));
      if (!levels.length) return;
      const last = levels[levels.length - 1];
      const lo = Math.min(...last);
      const hi = Math.max(...last);
      const span = hi - lo || 1;
      const left = labelW;
      const plotW = width - left - 20;
      // higher frequency (larger Hz offset) drawn to the left, matching the ppm axis
      const px = (x) => left + ((hi - x) / span) * plotW * (hi === lo ? 0 : 1) + (hi === lo ? plotW / 2 : 0);
      const eps = span * 1e-6 + 1e-9;
      const g = svgEl("g", { stroke: pal.series[0], "stroke-width": 1.6, fill: "none" });
      levels.forEach((level, k) => {
        const y = 16 + k * rowH;
        for (const x of level) g.append(svgEl("line", { x1: px(x), x2: px(x), y1: y, y2: y + 14 }));
        const text = svgEl("text", { x: 8, y: y + 12, fill: pal.ink, "font-size": 13, "font-family": FONT });
        text.textContent = levelLabels[k] || "";
        svg.append(text);
        if (k === 0) return;
        const parents = levels[k - 1];
        const offsets = offsetsOf(parents, level, eps);
        for (const p of parents) {
          for (const d of offsets) {
            g.append(svgEl("line", { x1: px(p), y1: y - rowH + 14, x2: px(p + d), y2: y, "stroke-opacity": 0.75 }));
          }
        }
      });
      svg.append(g);
    }
    return {
      node: parts.wrap,
      svg,
      update(nextLevels, nextLabels) {
        levels = nextLevels || [];
        levelLabels = nextLabels || [];
        parts.wrap.hidden = levels.length < 2;
        draw();
      },
    };
  }

  return { create, tree, downloadText, exportSVG, exportPNG };
})();

export default NMRPlot;
