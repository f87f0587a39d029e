// Percentile bands over time: per step one estimate per percentile, its value interval shaded
// around it; grouped by a label, one panel per value, all on the same axes so panels compare by eye.
import { el, text, title, drawing, edgeAnchor } from "./svg.js";
import { valueScale, padded, drawValueAxis } from "./axis.js";
import { hoursMinutes, zoneName, instant, durationText } from "./clock.js";
import { percentileName, confidenceText, labelsText } from "./format.js";
import { fillFigures, quantileLine } from "./figures.js";
import { timeline, summarize, selectorOf, windowOf, PageError } from "./api.js";
import { quantilesOf } from "./state.js";
import { selectionText } from "./selection.js";

/** The steps of one group: `{ from, to, t, s }` per step with data (empty steps leave a gap, never a fake zero). */
function pointsOf(reply, key) {
  const points = [];
  for (const step of reply.steps || []) {
    const group = (step.groups || []).find((g) => key === null || (g.labels || {})[key.label] === key.value || ((g.labels || {})[key.label] === undefined && key.value === ""));
    if (!group || Number(group.summary.count || 0) === 0) continue;
    const from = Number(step.step.fromUnixMs), to = Number(step.step.toUnixMs);
    points.push({ from, to, t: (from + to) / 2, s: group.summary });
  }
  return points;
}

/** Draws one panel; returns its svg. Shared scales make every panel of a group-by read alike. */
function drawPanel(points, quantiles, x, y, size, label) {
  const { width, height, area } = size;
  const svg = drawing(width, height, label, "bands");
  svg.setAttribute("tabindex", "0");
  drawValueAxis(svg, y, area);
  el("line", { class: "axis", x1: area.left, y1: area.bottom, x2: area.right, y2: area.bottom }, svg);
  for (let i = 0; i <= 4; i++) {
    const t = x.lo + ((x.hi - x.lo) * i) / 4;
    text(hoursMinutes(t) + (i === 4 ? " " + zoneName() : ""), { class: "tick time", x: x.map(t), y: area.bottom + 18, "text-anchor": edgeAnchor(i, 4) }, svg);
  }
  quantiles.forEach((q, qi) => {
    // Colours follow the position in the list, so any percentile (p99.9, p99.99) gets one.
    const cls = "q-" + qi;
    const est = points.map((p) => ({ t: p.t, e: p.s.quantiles[qi] })).filter((p) => p.e);
    if (est.length === 0) return;
    const upper = est.map((p) => x.map(p.t) + "," + y.map(p.e.high));
    const lower = est.slice().reverse().map((p) => x.map(p.t) + "," + y.map(p.e.low));
    el("polygon", { class: "band " + cls, points: upper.concat(lower).join(" "), "data-q": q }, svg);
    el("polyline", { class: "line " + cls, points: est.map((p) => x.map(p.t) + "," + y.map(p.e.value)).join(" "), "data-q": q }, svg);
    for (const p of est) {
      const dot = el("circle", { class: "point " + cls, cx: x.map(p.t), cy: y.map(p.e.value), r: 2.6, "data-q": q, "data-value": p.e.value }, svg);
      title(quantileLine(p.e) + " at " + instant(p.t), dot);
    }
  });
  return svg;
}

/**
 * Hover and keyboard read-out: the step under the pointer (or chosen with ← and →) is marked with a
 * rule, and its figures with their intervals are written beside the panel.
 */
function attachReadout(svg, readout, points, x, area) {
  const rule = el("line", { class: "hover-rule", x1: 0, x2: 0, y1: area.top, y2: area.bottom, visibility: "hidden" }, svg);
  let index = -1;
  const show = (i) => {
    if (points.length === 0) return;
    index = Math.max(0, Math.min(points.length - 1, i));
    const p = points[index];
    rule.setAttribute("x1", x.map(p.t));
    rule.setAttribute("x2", x.map(p.t));
    rule.setAttribute("visibility", "visible");
    readout.replaceChildren();
    const head = document.createElement("strong");
    head.textContent = instant(p.from) + " + " + durationText((p.to - p.from) / 1000) + ": " + Number(p.s.count) + " values";
    readout.appendChild(head);
    for (const q of p.s.quantiles || []) {
      const line = document.createElement("span");
      line.dataset.q = q.q;
      line.textContent = quantileLine(q);
      readout.appendChild(line);
    }
    readout.dataset.step = p.from;
  };
  const nearest = (clientX) => {
    const box = svg.getBoundingClientRect(), vb = svg.viewBox.baseVal;
    const px = ((clientX - box.left) / box.width) * vb.width;
    let best = 0;
    points.forEach((p, i) => { if (Math.abs(x.map(p.t) - px) < Math.abs(x.map(points[best].t) - px)) best = i; });
    return best;
  };
  svg.addEventListener("mousemove", (e) => show(nearest(e.clientX)));
  svg.addEventListener("focus", () => show(index < 0 ? points.length - 1 : index));
  svg.addEventListener("keydown", (e) => {
    if (e.key === "ArrowLeft" || e.key === "ArrowRight") {
      e.preventDefault();
      show(index + (e.key === "ArrowLeft" ? -1 : 1));
    }
  });
}

/** One entry per percentile, and the confidence the bands are drawn at, stated beside them. */
function drawLegend(root, quantiles, confidence) {
  const legend = root.querySelector("#legend");
  legend.replaceChildren(...quantiles.map((q, qi) => {
    const span = document.createElement("span");
    span.className = "q-" + qi;
    span.dataset.q = q;
    span.textContent = percentileName(q);
    return span;
  }));
  root.querySelector("#confidence").textContent = confidence ? "Shaded bands: each estimate's value interval at " + confidenceText(confidence) + " confidence." : "";
}

export const bandsView = {
  id: "bands",
  title: "Percentiles over time",
  mount(root) {
    root.innerHTML = `
      <p class="hint">Lines are the estimates; the shaded band around each is its value interval. Point at a step, or focus a panel and use ← →, to read its figures.</p>
      <div class="legend"><span id="legend"></span><span id="confidence"></span><span id="axis-note"></span></div>
      <div id="panels" class="panels"></div>
      <h3>Figures of the whole window</h3>
      <table id="figures"><caption class="hint">Every series of the selection merged.</caption><thead><tr><th scope="col">figure</th><th scope="col">value</th><th scope="col">interval</th></tr></thead><tbody></tbody></table>`;
  },
  async draw(root, ctx) {
    const { state, span, signal } = ctx;
    const quantiles = quantilesOf(state);
    const selector = selectorOf(state.metric, state.filters);
    const window = windowOf(span);
    const [reply, whole] = await Promise.all([
      timeline({ selector, window, step: state.step + "s", quantiles, groupBy: state.group ? [state.group] : [] }, signal),
      summarize({ selector, window, quantiles }, signal),
    ]);
    const summary = whole.groups && whole.groups[0] ? whole.groups[0].summary : { count: 0 };
    if (Number(summary.count || 0) === 0) throw new PageError("nodata", "No values of " + selectionText(state.metric, state.filters, span, instant, durationText) + ". Widen the window or loosen the filters.");

    // Panels: one per value of the group-by label seen in any step, else one for the whole selection.
    const keys = state.group
      ? [...new Set((reply.steps || []).flatMap((s) => (s.groups || []).map((g) => (g.labels || {})[state.group] ?? "")))].sort().map((value) => ({ label: state.group, value }))
      : [null];
    const panels = keys.map((key) => ({ key, points: pointsOf(reply, key) }));

    // Shared axes: time from the first step's start to the last step's end, values over every panel.
    const steps = reply.steps || [];
    const t0 = steps.length ? Number(steps[0].step.fromUnixMs) : span.from, t1 = steps.length ? Number(steps[steps.length - 1].step.toUnixMs) : span.to;
    let lo = Infinity, hi = -Infinity;
    for (const panel of panels) for (const p of panel.points) for (const q of p.s.quantiles) { lo = Math.min(lo, q.low); hi = Math.max(hi, q.high); }
    const single = panels.length === 1;
    const size = single
      ? { width: 900, height: 320, area: { left: 60, right: 884, top: 14, bottom: 286 } }
      : { width: 440, height: 220, area: { left: 56, right: 428, top: 10, bottom: 188 } };
    const [d0, d1] = padded(state.axis, lo, hi);
    const y = valueScale(state.axis, d0, d1, size.area.bottom, size.area.top);
    const x = valueScale("linear", t0, t1, size.area.left, size.area.right);
    root.querySelector("#axis-note").textContent = state.axis === "log" && y.kind !== "log" ? "Values reach 0 or below: drawn on a linear axis." : "";

    const container = root.querySelector("#panels");
    container.className = single ? "panels single" : "panels multiples";
    container.replaceChildren(...panels.map(({ key, points }) => {
      const figure = document.createElement("figure");
      figure.className = "panel";
      const name = key ? labelsText({ [key.label]: key.value }) : labelsText(state.filters);
      if (key) figure.dataset.group = key.value;
      const caption = document.createElement("figcaption");
      caption.textContent = key ? name + " · " + points.reduce((n, p) => n + Number(p.s.count), 0) + " values" : "";
      const svg = drawPanel(points, quantiles, x, y, size, "percentile bands over time, " + name);
      const readout = document.createElement("p");
      readout.className = "readout";
      readout.setAttribute("aria-live", "polite");
      attachReadout(svg, readout, points, x, size.area);
      figure.append(caption, svg, readout);
      return figure;
    }));
    drawLegend(root, quantiles, summary.confidence);
    fillFigures(root.querySelector("#figures tbody"), summary);
    const covered = whole.covered ? " covering " + instant(Number(whole.covered.fromUnixMs)) + " → " + instant(Number(whole.covered.toUnixMs)) : "";
    const withData = panels.reduce((n, p) => n + p.points.length, 0);
    return state.metric + ": " + Number(summary.count) + " values" + covered + ", " + withData + " step(s) with data in " + panels.length + " panel(s)" +
      (summary.exact ? "; every figure exact." : "; figures are estimates with intervals.");
  },
};
