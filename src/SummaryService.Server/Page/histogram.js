// Histogram of one window: a bar per bin for the estimated count, a whisker for its count interval.
"use strict";
function drawHistogram(svg, summary) {
  Svg.clear(svg);
  const W = 560, H = 300, left = 48, right = 12, top = 12, bottom = 34;
  const bins = (summary && summary.histogram && summary.histogram.bins) || [];
  if (bins.length === 0) return 0;
  const xMin = bins[0].lower, xMax = bins[bins.length - 1].upper;
  const cMax = Math.max(1, ...bins.map((b) => b.countHigh || b.count || 0));
  const x = Svg.scale(xMin, xMax, left, W - right), y = Svg.scale(0, cMax, H - bottom, top);

  Svg.el("line", { class: "axis", x1: left, y1: H - bottom, x2: W - right, y2: H - bottom }, svg);
  Svg.el("line", { class: "axis", x1: left, y1: top, x2: left, y2: H - bottom }, svg);
  for (let i = 0; i <= 4; i++) {
    const c = (cMax * i) / 4;
    Svg.text(formatNumber(c), { class: "tick", x: left - 6, y: y(c) + 4, "text-anchor": "end" }, svg);
    const v = xMin + ((xMax - xMin) * i) / 4;
    Svg.text(formatNumber(v), { class: "tick", x: x(v), y: H - bottom + 18, "text-anchor": edgeAnchor(i, 4) }, svg);
  }

  for (const b of bins) {
    const count = b.count || 0, low = b.countLow || 0, high = b.countHigh || 0;
    const x0 = x(b.lower) + 1, x1 = Math.max(x0 + 1, x(b.upper) - 1);
    const bar = Svg.el("rect", { class: "bar", x: x0, y: y(count), width: x1 - x0, height: y(0) - y(count), "data-count": count }, svg);
    Svg.text("[" + formatNumber(b.lower) + ", " + formatNumber(b.upper) + "): " + formatNumber(count) + " in [" + formatNumber(low) + ", " + formatNumber(high) + "]", {}, Svg.el("title", {}, bar));
    const mid = (x0 + x1) / 2;
    Svg.el("line", { class: "whisker", x1: mid, x2: mid, y1: y(low), y2: y(high) }, svg);
  }
  return bins.length;
}
