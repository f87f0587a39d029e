// Wires the controls, the address and the views together: every change becomes a new state, the
// state goes into the address, and the chosen view draws it.
import { readState, writeState } from "./state.js";
import { setZone } from "./clock.js";
import { catalogue, setKey, spanOf, PageError } from "./api.js";
import { metricsOf, labelsOf, fillSelect, labelChoosers } from "./selection.js";
import { LiveRefresh } from "./live.js";
import { VIEWS } from "./views.js";

const $ = (id) => document.getElementById(id);
// Settings views declare for themselves go into the address like the shared ones.
const VIEW_SETTINGS = Object.assign({}, ...VIEWS.map((v) => v.settings || {}));
let state = readState(location.search, VIEW_SETTINGS);
let held = { series: [] }; // the catalogue as last read
let labels = new Map();
let controller = null;
const mounted = new Set();

// What each kind of failure is called on the status line.
const PROBLEMS = { unreachable: "Server unreachable", auth: "Key needed", input: "Bad input", nodata: "No data", server: "Server error" };

function setStatus(textValue, kind) {
  const s = $("status");
  s.textContent = kind ? PROBLEMS[kind] + ": " + textValue : textValue;
  s.className = kind ? (kind === "nodata" ? "empty" : "error") : "";
  s.dataset.kind = kind || "";
}

/** Puts the state into every shared control (the views put it into their own). */
function showState() {
  setZone(state.zone);
  const metrics = metricsOf(held);
  fillSelect($("metric"), state.metric && !metrics.includes(state.metric) ? [...metrics, state.metric] : metrics, state.metric);
  labels = labelsOf(held, state.metric);
  fillSelect($("group"), [...labels.keys()], state.group, { value: "", text: "nothing" });
  labelChoosers($("filters"), "filter", labels, state.filters, (name, value) => change((current) => ({ filters: { ...current.filters, [name]: value } })));
  for (const [id, key] of [["window", "window"], ["from", "from"], ["to", "to"], ["step", "step"], ["percentiles", "q"], ["axis", "axis"], ["zone", "zone"], ["live", "live"]]) {
    const control = $(id);
    if (control.tagName === "SELECT" && ![...control.options].some((o) => o.value === state[key])) control.add(new Option(state[key], state[key]));
    control.value = state[key];
  }
  $("from-field").hidden = $("to-field").hidden = state.window !== "custom";
  for (const view of VIEWS) {
    const tab = $("tab-" + view.id), selected = view.id === state.view;
    tab.setAttribute("aria-selected", String(selected));
    tab.tabIndex = selected ? 0 : -1;
    $("view-" + view.id).hidden = !selected;
  }
}

/**
 * A new state from a change (an object of new settings, or a function of the current state giving
 * one): the address follows, then the drawing. A new metric starts its label choices afresh.
 */
function change(update) {
  const patch = typeof update === "function" ? update(state) : update;
  const next = { ...state, ...patch };
  if (patch.metric !== undefined && patch.metric !== state.metric) Object.assign(next, { filters: {}, group: "", a: {}, b: {} });
  state = next;
  history.replaceState(null, "", location.pathname + writeState(state, VIEW_SETTINGS));
  showState();
  live.follow(state);
  draw();
}

/** Draws the chosen view; a newer draw cancels an older one, so only the latest state paints. */
async function draw() {
  controller?.abort();
  const mine = new AbortController();
  controller = mine;
  const view = VIEWS.find((v) => v.id === state.view) || VIEWS[0];
  const root = $("view-" + view.id);
  const ctx = { state, labels, set: change, signal: mine.signal };
  if (!mounted.has(view.id)) {
    view.mount(root, ctx);
    mounted.add(view.id);
  }
  if (!state.metric) {
    setStatus("No metrics stored yet: push some values first, then press Draw.", "nodata");
    finished("empty");
    return;
  }
  document.body.dataset.state = "loading";
  setStatus("Loading " + state.metric + "…");
  try {
    ctx.span = spanOf(state, Date.now());
    const status = await view.draw(root, ctx);
    if (mine.signal.aborted) return;
    setStatus(status);
    finished("drawn");
  } catch (e) {
    if (mine.signal.aborted || e.name === "AbortError") return;
    const problem = e instanceof PageError ? e : new PageError("server", "the page failed: " + e.message);
    setStatus(problem.message, problem.kind);
    finished(problem.kind === "nodata" ? "empty" : "error");
  }
}

/** Marks the end of a draw on the page (a state and a running count), so scripts and tests can wait for it. */
function finished(outcome) {
  document.body.dataset.state = outcome;
  document.body.dataset.draws = String(Number(document.body.dataset.draws || 0) + 1);
}

/** Reads the catalogue (what this key may see), then draws. */
async function start() {
  try {
    held = await catalogue();
    if (!state.metric) state.metric = metricsOf(held)[0] || "";
    showState();
    live.follow(state);
    await draw();
  } catch (e) {
    const problem = e instanceof PageError ? e : new PageError("server", e.message);
    setStatus(problem.message, problem.kind);
    finished("error");
  }
}

/** One tab per view; ← and → move between tabs, as in any tab list. */
function buildTabs() {
  for (const [i, view] of VIEWS.entries()) {
    const tab = document.createElement("button");
    Object.assign(tab, { id: "tab-" + view.id, type: "button", textContent: view.title });
    tab.setAttribute("role", "tab");
    tab.setAttribute("aria-controls", "view-" + view.id);
    tab.addEventListener("click", () => change({ view: view.id }));
    tab.addEventListener("keydown", (e) => {
      if (e.key !== "ArrowLeft" && e.key !== "ArrowRight") return;
      const next = VIEWS[(i + (e.key === "ArrowRight" ? 1 : VIEWS.length - 1)) % VIEWS.length];
      change({ view: next.id });
      $("tab-" + next.id).focus();
    });
    $("tabs").appendChild(tab);
    const panel = document.createElement("section");
    Object.assign(panel, { id: "view-" + view.id, hidden: true });
    panel.setAttribute("role", "tabpanel");
    panel.setAttribute("aria-labelledby", "tab-" + view.id);
    $("views").appendChild(panel);
  }
}

const live = new LiveRefresh(() => { if (document.body.dataset.state !== "loading") draw(); }, (textValue, isError) => {
  $("live-status").textContent = textValue;
  $("live-status").className = isError ? "hint error" : "hint";
});

buildTabs();
$("controls").addEventListener("submit", (e) => { e.preventDefault(); start(); });
for (const [id, key] of [["metric", "metric"], ["group", "group"], ["window", "window"], ["from", "from"], ["to", "to"], ["step", "step"], ["percentiles", "q"], ["axis", "axis"], ["zone", "zone"], ["live", "live"]]) {
  $(id).addEventListener("change", () => change({ [key]: $(id).value.trim() }));
}
// With authentication on nothing can be listed before a key is given: each new key reads the
// catalogue again, since what a key may see depends on its metric prefixes.
$("key").addEventListener("change", () => { setKey($("key").value); start(); });
showState();
start();
