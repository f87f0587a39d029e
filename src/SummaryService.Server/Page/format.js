// How numbers, percentiles and intervals read on the page.

/** Numbers as a person reads them: four significant digits, no exponent for everyday magnitudes. */
export function formatNumber(v) {
  if (v === undefined || v === null || Number.isNaN(v)) return "—";
  const a = Math.abs(v);
  if (a !== 0 && (a >= 1e6 || a < 1e-3)) return v.toExponential(3);
  return Number(v.toPrecision(4)).toString();
}

/** A percentile's name from its probability: p50, p99, p99.9, p99.99 (never rounded up to p100). */
export function percentileName(q) {
  if (q === 0) return "min";
  if (q === 1) return "max";
  return "p" + Number((q * 100).toFixed(6)).toString();
}

/** "[low, high]" in the page's number format. */
export function intervalText(low, high) {
  return "[" + formatNumber(low) + ", " + formatNumber(high) + "]";
}

/** A confidence such as 0.99 as "99%" (more digits only when it has them). */
export function confidenceText(confidence) {
  return confidence ? Number((confidence * 100).toFixed(4)) + "%" : "";
}

// Which bound held an interval's ends (the server intersects the log buckets' certain bound, the
// rank bound at the confidence and the exact min/max, and names the source of each end).
const BOUND_NAMES = {
  BOUND_SOURCE_EXACT: "exact",
  BOUND_SOURCE_RANGE: "min/max",
  BOUND_SOURCE_LOG_BUCKETS: "log buckets",
  BOUND_SOURCE_RANK_ERROR: "rank bound",
  BOUND_SOURCE_EDGES: "histogram edges",
};

/** The names of the bounds that gave an interval's two ends, once when they agree. */
export function boundName(low, high) {
  const a = BOUND_NAMES[low], b = BOUND_NAMES[high];
  if (!a && !b) return "";
  return !b || a === b ? a || b : !a ? b : a + " / " + b;
}

/** A label set as `name=value · name=value`, or "every series" when empty. */
export function labelsText(labels) {
  const parts = Object.entries(labels || {}).sort(([a], [b]) => a.localeCompare(b)).map(([k, v]) => k + "=" + (v === "" ? "(none)" : v));
  return parts.length ? parts.join(" · ") : "every series";
}
