// Cumulative distributions of two sides on one drawing: per side the estimated share of values at
// or below each threshold, with that share's interval shaded.
import { el, title, drawing } from "./svg.js";
import { valueScale, padded, drawValueAxis, drawBottomValueAxis } from "./axis.js";
import { formatNumber, intervalText } from "./format.js";

/** Thresholds across [lo, hi]: evenly spaced on the axis the CDF is drawn on. */
export function thresholds(kind, lo, hi, count) {
  const log = kind === "log" && lo > 0;
  const out = [];
  for (let i = 0; i < count; i++) {
    const f = i / (count - 1);
    out.push(log ? Math.pow(10, Math.log10(lo) + f * (Math.log10(hi) - Math.log10(lo))) : lo + f * (hi - lo));
  }
  return out;
}

/** Draws each side's ranks (`{ name, cls, ranks }`, ranks as the reply's RankEstimate list). Returns `{ svg, scale }`. */
export function drawCdfs(sides, kind, lo, hi, label) {
  const width = 900, height = 300, area = { left: 60, right: 884, top: 12, bottom: 266 };
  const svg = drawing(width, height, label, "cdf");
  const [d0, d1] = kind === "log" && lo > 0 ? [lo, hi] : padded("linear", lo, hi);
  const x = valueScale(kind, d0, d1, area.left, area.right);
  const y = valueScale("linear", 0, 1, area.bottom, area.top);
  drawValueAxis(svg, y, area);
  drawBottomValueAxis(svg, x, area);
  for (const side of sides) {
    const r = side.ranks;
    if (r.length === 0) continue;
    const upper = r.map((p) => x.map(p.value) + "," + y.map(p.high));
    const lower = r.slice().reverse().map((p) => x.map(p.value) + "," + y.map(p.low));
    el("polygon", { class: "band " + side.cls, points: upper.concat(lower).join(" "), "data-side": side.name }, svg);
    el("polyline", { class: "line " + side.cls, points: r.map((p) => x.map(p.value) + "," + y.map(p.fraction)).join(" "), "data-side": side.name }, svg);
    for (const p of r.filter((_, i) => i % 8 === 0)) {
      const dot = el("circle", { class: "point " + side.cls, cx: x.map(p.value), cy: y.map(p.fraction), r: 2.2 }, svg);
      title(side.name + ": share ≤ " + formatNumber(p.value) + " is " + formatNumber(p.fraction) + " in " + intervalText(p.low, p.high), dot);
    }
  }
  return { svg, scale: x };
}
