// The view as data, kept in the page's address so a view can be shared: opening the address again
// draws the same view. The API key never goes into the address.

/** What the page shows when the address says nothing. */
export const DEFAULTS = Object.freeze({
  view: "bands",
  metric: "",
  filters: {},
  group: "",
  window: "3600",
  from: "",
  to: "",
  step: "60",
  q: "0.5,0.9,0.99",
  axis: "log",
  zone: "utc",
  live: "0",
  a: {},
  b: {},
});

// Plain settings and their address parameters; label sets go in as `f.label`, `a.label`, `b.label`.
const PLAIN = ["view", "metric", "group", "window", "from", "to", "step", "q", "axis", "zone", "live"];
const LABEL_SETS = { filters: "f.", a: "a.", b: "b." };

/**
 * The state an address describes, defaults filling what it leaves out. `extra` holds the plain
 * settings views declare for themselves (`settings` on a view: name → default text).
 */
export function readState(search, extra = {}) {
  const params = new URLSearchParams(search);
  const state = { ...extra, ...DEFAULTS, filters: {}, a: {}, b: {} };
  for (const name of [...PLAIN, ...Object.keys(extra)]) if (params.has(name)) state[name] = params.get(name);
  for (const [key, value] of params) {
    for (const [set, prefix] of Object.entries(LABEL_SETS)) if (key.startsWith(prefix) && key.length > prefix.length) state[set][key.slice(prefix.length)] = value;
  }
  return state;
}

/** The address query for a state: only what differs from the defaults, in a stable order. */
export function writeState(state, extra = {}) {
  const params = new URLSearchParams();
  const defaults = { ...extra, ...DEFAULTS };
  for (const name of [...PLAIN, ...Object.keys(extra)]) if (state[name] !== defaults[name] && state[name] !== "" && state[name] !== undefined) params.set(name, state[name]);
  for (const [set, prefix] of Object.entries(LABEL_SETS)) {
    for (const key of Object.keys(state[set]).sort()) if (state[set][key] !== "") params.set(prefix + key, state[set][key]);
  }
  const query = params.toString();
  return query ? "?" + query : "";
}

/** The percentiles asked for, as numbers. */
export function quantilesOf(state) {
  return state.q.split(",").map(Number).filter((q) => q >= 0 && q <= 1);
}
