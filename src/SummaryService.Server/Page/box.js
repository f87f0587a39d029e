// The five-number summary as a compact box: whiskers to the exact min and max, a box from the
// lower to the upper quartile, a line at the median; each quartile's interval shaded around it.
import { el, text, title, drawing } from "./svg.js";
import { valueScale, padded, drawBottomValueAxis } from "./axis.js";
import { formatNumber } from "./format.js";
import { quantileLine } from "./figures.js";

/** Draws `five` (the reply's fiveNumber) on a value axis of `kind`; returns the svg. */
export function drawBox(five, kind, label) {
  const width = 900, height = 130, area = { left: 60, right: 884, top: 16, bottom: 96 };
  const svg = drawing(width, height, label, "box");
  const [lo, hi] = padded(kind, five.min, five.max);
  const x = valueScale(kind, lo, hi, area.left, area.right);
  drawBottomValueAxis(svg, x, area);
  const mid = (area.top + area.bottom) / 2, half = 20;
  const q1 = five.lowerQuartile, q2 = five.median, q3 = five.upperQuartile;
  el("line", { class: "box-whisker", x1: x.map(five.min), x2: x.map(q1.value), y1: mid, y2: mid }, svg);
  el("line", { class: "box-whisker", x1: x.map(q3.value), x2: x.map(five.max), y1: mid, y2: mid }, svg);
  for (const [name, v] of [["min", five.min], ["max", five.max]]) {
    const end = el("line", { class: "box-end", x1: x.map(v), x2: x.map(v), y1: mid - half / 2, y2: mid + half / 2, "data-figure": name, "data-value": v }, svg);
    title(name + " " + formatNumber(v) + " (exact)", end);
  }
  el("rect", { class: "box-body", x: x.map(q1.value), y: mid - half, width: Math.max(1, x.map(q3.value) - x.map(q1.value)), height: 2 * half }, svg);
  for (const [name, q] of [["lower quartile", q1], ["median", q2], ["upper quartile", q3]]) {
    const g = el("g", { class: "box-quantile", "data-figure": name, "data-value": q.value, "data-low": q.low, "data-high": q.high }, svg);
    el("rect", { class: "box-interval", x: x.map(q.low), y: mid - half - 6, width: Math.max(1, x.map(q.high) - x.map(q.low)), height: 2 * half + 12 }, g);
    el("line", { class: name === "median" ? "box-median" : "box-edge", x1: x.map(q.value), x2: x.map(q.value), y1: mid - half, y2: mid + half }, g);
    title(name + ": " + quantileLine(q), g);
  }
  text("min " + formatNumber(five.min), { class: "tick", x: x.map(five.min), y: area.top - 4, "text-anchor": "start" }, svg);
  text("max " + formatNumber(five.max), { class: "tick", x: x.map(five.max), y: area.top - 4, "text-anchor": "end" }, svg);
  return svg;
}
