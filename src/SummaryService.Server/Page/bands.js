// Percentile bands over time: per step one estimate per percentile, with its value interval as a shaded band.
"use strict";
function drawBands(svg, reply, quantiles) {
  Svg.clear(svg);
  const W = 900, H = 320, left = 56, right = 16, top = 14, bottom = 34;
  // Only steps that hold data; empty steps leave a gap in time rather than a fake zero.
  const steps = reply.steps || [];
  const points = steps
    .filter((p) => p.groups && p.groups.length > 0)
    .map((p) => ({ t: (Number(p.step.fromUnixMs) + Number(p.step.toUnixMs)) / 2, s: p.groups[0].summary }));
  if (steps.length === 0) return 0;
  const t0 = Number(steps[0].step.fromUnixMs), t1 = Number(steps[steps.length - 1].step.toUnixMs);
  let lo = Infinity, hi = -Infinity;
  for (const p of points) for (const q of p.s.quantiles) { lo = Math.min(lo, q.low); hi = Math.max(hi, q.high); }
  if (points.length === 0) { lo = 0; hi = 1; }
  const x = Svg.scale(t0, t1, left, W - right), y = Svg.scale(lo, hi, H - bottom, top);

  Svg.el("line", { class: "axis", x1: left, y1: H - bottom, x2: W - right, y2: H - bottom }, svg);
  Svg.el("line", { class: "axis", x1: left, y1: top, x2: left, y2: H - bottom }, svg);
  for (let i = 0; i <= 4; i++) {
    const v = lo + ((hi - lo) * i) / 4;
    Svg.text(formatNumber(v), { class: "tick", x: left - 6, y: y(v) + 4, "text-anchor": "end" }, svg);
    const t = t0 + ((t1 - t0) * i) / 4;
    Svg.text(Clock.hoursMinutes(t) + (i === 4 ? " " + Clock.zone() : ""), { class: "tick time", x: x(t), y: H - bottom + 18, "text-anchor": edgeAnchor(i, 4) }, svg);
  }

  quantiles.forEach((q, qi) => {
    // Colours follow the position in the list, so any percentile (p99.9, p99.99) gets one.
    const cls = "q-" + qi;
    const est = points.map((p) => ({ t: p.t, e: p.s.quantiles[qi] }));
    if (est.length === 0) return;
    const upper = est.map((p) => x(p.t) + "," + y(p.e.high));
    const lower = est.slice().reverse().map((p) => x(p.t) + "," + y(p.e.low));
    Svg.el("polygon", { class: "band " + cls, points: upper.concat(lower).join(" "), "data-q": q }, svg);
    Svg.el("polyline", { class: "line " + cls, points: est.map((p) => x(p.t) + "," + y(p.e.value)).join(" "), "data-q": q }, svg);
    for (const p of est) {
      const dot = Svg.el("circle", { class: "point " + cls, cx: x(p.t), cy: y(p.e.value), r: 2.6, "data-q": q, "data-value": p.e.value }, svg);
      Svg.text(percentileName(q) + " " + formatNumber(p.e.value) + " in [" + formatNumber(p.e.low) + ", " + formatNumber(p.e.high) + "] at " + Clock.instant(p.t), {}, Svg.el("title", {}, dot));
    }
  });
  return points.length;
}
