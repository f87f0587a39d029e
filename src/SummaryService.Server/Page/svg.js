// Tiny helpers for drawing SVG by hand: no framework, nothing fetched from elsewhere.
"use strict";
const Svg = {
  ns: "http://www.w3.org/2000/svg",
  el(name, attrs, parent) {
    const node = document.createElementNS(Svg.ns, name);
    for (const [k, v] of Object.entries(attrs || {})) node.setAttribute(k, String(v));
    if (parent) parent.appendChild(node);
    return node;
  },
  text(content, attrs, parent) {
    const node = Svg.el("text", attrs, parent);
    node.textContent = content;
    return node;
  },
  clear(svg) { while (svg.firstChild) svg.removeChild(svg.firstChild); },
  // Maps [d0, d1] onto [r0, r1]; a zero-width domain maps to the middle so a single value still shows.
  scale(d0, d1, r0, r1) {
    const span = d1 - d0;
    return span === 0 ? () => (r0 + r1) / 2 : (v) => r0 + ((v - d0) / span) * (r1 - r0);
  },
};

// Numbers as a person reads them: four significant digits, no exponent for everyday magnitudes.
function formatNumber(v) {
  if (v === undefined || v === null || Number.isNaN(v)) return "—";
  const a = Math.abs(v);
  if (a !== 0 && (a >= 1e6 || a < 1e-3)) return v.toExponential(3);
  return Number(v.toPrecision(4)).toString();
}

// A percentile's name from its probability: p50, p99, p99.9, p99.99 (never rounded up to p100).
function percentileName(q) {
  if (q === 0) return "min";
  if (q === 1) return "max";
  return "p" + Number((q * 100).toFixed(6)).toString();
}

// Axis labels at the two ends align inwards so they stay inside the drawing.
function edgeAnchor(i, last) {
  return i === 0 ? "start" : i === last ? "end" : "middle";
}
