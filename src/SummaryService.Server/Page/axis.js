// Value and time scales with their ticks. A log scale lets a latency's body and its tail both be
// seen; it needs a positive domain, so callers fall back to linear (and say so) when values reach 0.
import { el, text } from "./svg.js";
import { formatNumber } from "./format.js";

/** Round tick values for [lo, hi]: steps of 1, 2 or 5 times a power of ten, at least `count` of them. */
function linearTicks(lo, hi, count) {
  if (!(hi > lo)) return [lo];
  const raw = (hi - lo) / count, power = Math.pow(10, Math.floor(Math.log10(raw)));
  const step = [10, 5, 2, 1].map((m) => m * power).find((s) => s <= raw);
  const ticks = [];
  for (let v = Math.ceil(lo / step) * step; v <= hi + step * 1e-9; v += step) ticks.push(Number(v.toPrecision(12)));
  return ticks;
}

/** Powers of ten inside [lo, hi]; across fewer than two decades also their 2× and 5× neighbours. */
function logTicks(lo, hi) {
  const first = Math.floor(Math.log10(lo)), last = Math.ceil(Math.log10(hi));
  const multiples = Math.log10(hi / lo) < 2 ? [1, 2, 5] : [1];
  const ticks = [];
  for (let e = first; e <= last; e++) for (const m of multiples) {
    const v = Number((m * Math.pow(10, e)).toPrecision(12));
    if (v >= lo && v <= hi) ticks.push(v);
  }
  return ticks.length ? ticks : [lo, hi];
}

/**
 * A scale from the domain [lo, hi] onto the range [r0, r1]: `kind` is "log" or "linear"; a log
 * scale asked for a domain that is not positive turns linear, and `kind` then says so.
 */
export function valueScale(kind, lo, hi, r0, r1) {
  const log = kind === "log" && lo > 0 && hi > 0;
  if (log) {
    const l0 = Math.log10(lo), l1 = Math.log10(hi), span = l1 - l0;
    const map = span === 0 ? () => (r0 + r1) / 2 : (v) => r0 + ((Math.log10(Math.max(v, lo / 1e6)) - l0) / span) * (r1 - r0);
    return { kind: "log", lo, hi, map, ticks: () => logTicks(lo, hi) };
  }
  const span = hi - lo;
  const map = span === 0 ? () => (r0 + r1) / 2 : (v) => r0 + ((v - lo) / span) * (r1 - r0);
  return { kind: "linear", lo, hi, map, ticks: () => linearTicks(lo, hi, 4) };
}

/** A domain with a little room: for a log scale a factor on each side, for a linear one a share of the span. */
export function padded(kind, lo, hi) {
  if (!Number.isFinite(lo) || !Number.isFinite(hi)) return [0, 1];
  if (kind === "log" && lo > 0) return lo === hi ? [lo / 2, hi * 2] : [lo / 1.15, hi * 1.15];
  if (lo === hi) return [lo - 1, hi + 1];
  const room = (hi - lo) * 0.04;
  return [lo >= 0 && lo - room < 0 ? 0 : lo - room, hi + room];
}

/** The left (value) axis of a plot area: a rule, and a labelled tick with a faint grid line at each tick value. */
export function drawValueAxis(svg, scale, area) {
  el("line", { class: "axis", x1: area.left, y1: area.top, x2: area.left, y2: area.bottom }, svg);
  for (const v of scale.ticks()) {
    const y = scale.map(v);
    el("line", { class: "grid", x1: area.left, x2: area.right, y1: y, y2: y }, svg);
    text(formatNumber(v), { class: "tick value-tick", x: area.left - 6, y: y + 4, "text-anchor": "end", "data-axis": "y", "data-tick": v, "data-scale": scale.kind }, svg);
  }
}

/** The bottom axis of a value scale laid out horizontally (histograms, CDFs). */
export function drawBottomValueAxis(svg, scale, area) {
  el("line", { class: "axis", x1: area.left, y1: area.bottom, x2: area.right, y2: area.bottom }, svg);
  for (const v of scale.ticks()) {
    const x = scale.map(v);
    el("line", { class: "grid", x1: x, x2: x, y1: area.top, y2: area.bottom }, svg);
    text(formatNumber(v), { class: "tick value-tick", x, y: area.bottom + 16, "text-anchor": "middle", "data-axis": "x", "data-tick": v, "data-scale": scale.kind }, svg);
  }
}
