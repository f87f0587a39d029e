// Tiny helpers for drawing SVG by hand: no framework, nothing fetched from elsewhere.
const NS = "http://www.w3.org/2000/svg";

/** Creates an SVG element with its attributes and appends it to parent when one is given. */
export function el(name, attrs, parent) {
  const node = document.createElementNS(NS, name);
  for (const [k, v] of Object.entries(attrs || {})) node.setAttribute(k, String(v));
  if (parent) parent.appendChild(node);
  return node;
}

/** A text element holding content (set as text, never parsed as markup). */
export function text(content, attrs, parent) {
  const node = el("text", attrs, parent);
  node.textContent = content;
  return node;
}

/** A hover title (the browser's own tooltip, also read by screen readers) on an element. */
export function title(content, parent) {
  return text(content, {}, el("title", {}, parent));
}

/** A fresh drawing of the given size, with a role and an accessible name. */
export function drawing(width, height, label, className) {
  return el("svg", { viewBox: `0 0 ${width} ${height}`, role: "img", "aria-label": label, class: className || "" });
}

/** Axis labels at the two ends align inwards so they stay inside the drawing. */
export function edgeAnchor(i, last) {
  return i === 0 ? "start" : i === last ? "end" : "middle";
}
