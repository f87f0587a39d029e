// A histogram drawing: one bar per bin for its count, a whisker for the count's interval where the
// count is estimated, and markers for the centre figures (mean, median, density modes).
import { el, text, title, drawing } from "./svg.js";
import { valueScale, padded, drawValueAxis, drawBottomValueAxis } from "./axis.js";
import { formatNumber, intervalText, boundName } from "./format.js";

const SIZE = { width: 900, height: 300, area: { left: 60, right: 884, top: 28, bottom: 266 } };

/**
 * Draws bins on a value axis of `kind` ("log" or "linear"; log turns linear when a bin reaches 0 or
 * below). `markers` are `{ name, value, low, high, cls }`: a line at the value, its interval shaded.
 * Returns `{ svg, scale }`.
 */
export function drawHistogram(bins, kind, markers, label) {
  const { width, height, area } = SIZE;
  const svg = drawing(width, height, label, "histogram");
  const lo = bins.length ? bins[0].lower : 0, hi = bins.length ? bins[bins.length - 1].upper : 1;
  const x = valueScale(kind, lo, hi, area.left, area.right);
  const cMax = Math.max(1, ...bins.map((b) => Number(b.countHigh ?? b.count ?? 0)));
  const [, top] = padded("linear", 0, cMax);
  const y = valueScale("linear", 0, top, area.bottom, area.top);
  drawValueAxis(svg, y, area);
  drawBottomValueAxis(svg, x, area);

  for (const b of bins) {
    const count = Number(b.count || 0), low = Number(b.countLow || 0), high = Number(b.countHigh || 0);
    const x0 = x.map(b.lower), x1 = Math.max(x0 + 0.5, x.map(b.upper));
    const bar = el("rect", { class: "bar", x: x0, y: y.map(count), width: x1 - x0, height: y.map(0) - y.map(count), "data-count": count, "data-lower": b.lower, "data-upper": b.upper }, svg);
    const exact = low === count && high === count;
    const bound = boundName(b.lowSource, b.highSource);
    title("[" + formatNumber(b.lower) + ", " + formatNumber(b.upper) + "): " + formatNumber(count) + (exact ? " (exact)" : " in " + intervalText(low, high) + (bound ? " · " + bound : "")), bar);
    if (!exact) {
      const mid = (x0 + x1) / 2;
      el("line", { class: "whisker", x1: mid, x2: mid, y1: y.map(low), y2: y.map(high), "data-low": low, "data-high": high }, svg);
    }
  }

  markers.forEach((m, i) => {
    if (m.value === undefined || m.value < lo || m.value > hi) return;
    const g = el("g", { class: "marker " + m.cls, "data-marker": m.name, "data-value": m.value }, svg);
    if (m.low !== undefined && m.high > m.low) {
      const a = x.map(Math.max(lo, m.low)), b = x.map(Math.min(hi, m.high));
      el("rect", { class: "marker-span", x: a, y: area.top, width: Math.max(1, b - a), height: area.bottom - area.top }, g);
    }
    const at = x.map(m.value);
    el("line", { class: "marker-line", x1: at, x2: at, y1: area.top - 4, y2: area.bottom }, g);
    text(m.name, { class: "marker-name", x: at, y: 10 + (i % 2) * 11, "text-anchor": "middle" }, g);
    title(m.name + " " + formatNumber(m.value) + (m.low !== undefined ? " in " + intervalText(m.low, m.high) : ""), g);
  });
  return { svg, scale: x };
}
