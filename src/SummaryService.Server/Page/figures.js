// The window's headline figures, each beside its interval; exact figures say so.
import { formatNumber, percentileName, intervalText, confidenceText, boundName } from "./format.js";

/** One table row: name, value (with an "exact" tag when it is) and interval with its bound. */
function row(tbody, name, value, interval, isExact) {
  const tr = document.createElement("tr");
  tr.dataset.figure = name;
  tr.dataset.value = value === undefined ? "" : String(value);
  const head = document.createElement("th");
  head.scope = "row";
  tr.append(head, document.createElement("td"), document.createElement("td"));
  tr.children[0].textContent = name;
  tr.children[1].textContent = formatNumber(value);
  if (isExact) {
    const tag = document.createElement("span");
    tag.className = "exact";
    tag.textContent = "exact";
    tr.children[1].appendChild(tag);
  }
  tr.children[2].textContent = isExact ? "exact: no interval needed" : interval;
  tbody.appendChild(tr);
}

/** Fills a figures table body from one summary. */
export function fillFigures(tbody, summary) {
  tbody.replaceChildren();
  const exact = summary.exact === true;
  const at = summary.confidence ? " at " + confidenceText(summary.confidence) : "";
  const withInterval = (low, high, bound) => (low === undefined ? "—" : intervalText(low, high) + at + (bound ? " · " + bound : ""));
  row(tbody, "count", Number(summary.count || 0), "", true);
  // Mean, min and max come from exact moments; only the mean has a sampling interval.
  row(tbody, "mean", summary.mean, withInterval(summary.meanLow, summary.meanHigh), false);
  row(tbody, "standard deviation", summary.stddev, "—", false);
  for (const q of summary.quantiles || []) row(tbody, percentileName(q.q), q.value, withInterval(q.low, q.high, boundName(q.lowSource, q.highSource)), exact);
  // Differences of cumulative histograms may know their extremes only as outer bounds; the reply says so.
  const bounded = summary.extremesBounded === true;
  row(tbody, "min", summary.min, bounded ? "a bound: at or below the smallest value" : "", !bounded);
  row(tbody, "max", summary.max, bounded ? "a bound: at or above the largest value" : "", !bounded);
}

/** A quantile's figures in one line, for hover read-outs: "p99 212.4 in [210.1, 215] · log buckets". */
export function quantileLine(q) {
  const bound = boundName(q.lowSource, q.highSource);
  return percentileName(q.q) + " " + formatNumber(q.value) + " in " + intervalText(q.low, q.high) + (bound ? " · " + bound : "");
}
