// The window's headline figures, each beside its interval; exact figures say so.
"use strict";
function fillFigures(tbody, summary) {
  tbody.replaceChildren();
  const exact = summary.exact === true;
  const conf = summary.confidence ? Math.round(summary.confidence * 100) + "%" : "";
  const row = (name, value, low, high, isExact, bound) => {
    const tr = document.createElement("tr");
    tr.dataset.figure = name;
    tr.dataset.value = value === undefined ? "" : String(value);
    const interval = low === undefined ? "—" : "[" + formatNumber(low) + ", " + formatNumber(high) + "]" + (conf ? " at " + conf : "") + (bound ? " · " + bound : "");
    if (bound) tr.dataset.bound = bound;
    tr.innerHTML = "<td></td><td></td><td></td>";
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
  };
  row("count", Number(summary.count || 0), undefined, undefined, true);
  // Mean, min and max come from exact moments; only the mean has a sampling interval.
  row("mean", summary.mean, summary.meanLow, summary.meanHigh, false);
  for (const q of summary.quantiles || []) {
    row(percentileName(q.q), q.value, q.low, q.high, exact, boundName(q.lowSource, q.highSource));
  }
  row("min", summary.min, undefined, undefined, true);
  row("max", summary.max, undefined, undefined, true);
}

// Which bound held an interval's ends (the server intersects the log buckets' certain bound, the
// rank bound at the confidence and the exact min/max, and names the source of each end).
const BOUND_NAMES = {
  BOUND_SOURCE_EXACT: "exact",
  BOUND_SOURCE_RANGE: "min/max",
  BOUND_SOURCE_LOG_BUCKETS: "log buckets",
  BOUND_SOURCE_RANK_ERROR: "rank bound",
};
function boundName(low, high) {
  const a = BOUND_NAMES[low], b = BOUND_NAMES[high];
  if (!a && !b) return "";
  return !b || a === b ? a || b : !a ? b : a + " / " + b;
}
