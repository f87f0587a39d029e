// Which group stands out: every value of one label against the merge of all the others, over the
// page's metric, filters and window, strongest first. A group is called only where the intervals
// say so; the rest of the ordering is an ordering, not a finding.
import { call, selectorOf, windowOf, PageError } from "./api.js";
import { formatNumber, percentileName, intervalText, confidenceText } from "./format.js";
import { fillSelect } from "./selection.js";
import { quantilesOf } from "./state.js";
import { el as svgEl } from "./svg.js";

/** The page's words for what ranks the groups, and the server's. */
const MEASURES = {
  distance: { text: "distribution distance", wire: "STANDOUT_MEASURE_DISTANCE" },
  ratio: { text: "ratio of the top percentile", wire: "STANDOUT_MEASURE_QUANTILE_RATIO" },
  shift: { text: "shift of the top percentile", wire: "STANDOUT_MEASURE_QUANTILE_SHIFT" },
};

/** The percentiles compared: the page's choice strictly inside (0, 1), the server's default when none is. */
function comparedQuantiles(state) {
  const inside = quantilesOf(state).filter((q) => q > 0 && q < 1);
  return inside.length ? inside : [0.5, 0.9, 0.99];
}

function cell(textValue) {
  const td = document.createElement("td");
  td.textContent = textValue;
  return td;
}

/**
 * The distance as a bar, with a tick where two samples of one distribution could still reach; every
 * row on one scale, the largest bound or limit filling the bar.
 */
function distanceCell(d, scale) {
  const td = document.createElement("td");
  if (!d) {
    td.textContent = "—";
    return td;
  }
  const svg = svgEl("svg", { class: "standout-bar", viewBox: "0 0 100 10", role: "img", "aria-label": "distance " + formatNumber(d.distance || 0) });
  svgEl("rect", { x: 0, y: 2, width: Math.max(0.5, (100 * (d.distance || 0)) / scale), height: 6, class: d.significant ? "standout-far" : "standout-near" }, svg);
  svgEl("line", { x1: (100 * (d.limit || 0)) / scale, x2: (100 * (d.limit || 0)) / scale, y1: 0, y2: 10, class: "standout-limit" }, svg);
  td.append(svg, " " + formatNumber(d.distance || 0) + " " + intervalText(d.low || 0, d.high || 0));
  return td;
}

/** One ranked group: its size, the ranked percentile on both sides with intervals, the ratio, the distance and the verdict. */
function rowOf(group, rank, q, scale) {
  const tr = document.createElement("tr");
  tr.dataset.value = group.value;
  tr.dataset.significant = String(Boolean(group.significant));
  const shown = (group.quantiles || []).find((x) => x.shift.q === q);
  const s = shown && shown.shift;
  const higher = s ? (s.delta || 0) >= 0 : true;
  tr.append(
    cell(String(rank)),
    cell(group.value),
    cell(Number(group.count || 0) + " (" + (group.seriesMerged || 0) + ")"),
    cell(s ? formatNumber(s.b) + " " + intervalText(s.bLow, s.bHigh) : "—"),
    cell(s ? formatNumber(s.a) + " " + intervalText(s.aLow, s.aHigh) : "—"),
    cell(shown && shown.ratio !== undefined ? "×" + Number(shown.ratio).toFixed(2) : "—"),
    distanceCell(group.distance, scale),
    cell(group.significant ? (higher ? "stands out: higher" : "stands out: lower") : "inconclusive"),
  );
  if (group.significant) tr.className = "standout-called";
  return tr;
}

export const standoutView = {
  id: "standout",
  title: "Stands out",
  settings: { split: "", rank: "distance" },
  mount(root, ctx) {
    root.innerHTML = `
      <fieldset class="standout-choice"><legend>Rank the values of a label</legend>
        <label>Split by <select id="standout-label"></select></label>
        <label>Rank by <select id="standout-measure"></select></label>
        <span class="hint">Each value against all the other values together, over the chosen window and filters.</span>
      </fieldset>
      <table id="standout-table">
        <thead><tr><th scope="col">#</th><th scope="col" class="standout-group">group</th><th scope="col">values (series)</th><th scope="col" class="standout-q">group</th><th scope="col" class="standout-q-rest">rest</th><th scope="col">group / rest</th><th scope="col">distance to the rest</th><th scope="col">verdict</th></tr></thead>
        <tbody></tbody>
      </table>
      <p id="standout-unranked" class="hint"></p>`;
    const measure = root.querySelector("#standout-measure");
    measure.replaceChildren(...Object.entries(MEASURES).map(([value, m]) => new Option(m.text, value)));
    measure.addEventListener("change", () => ctx.set({ rank: measure.value }));
    root.querySelector("#standout-label").addEventListener("change", (e) => ctx.set({ split: e.target.value }));
  },
  async draw(root, ctx) {
    const { state, span, signal, labels } = ctx;
    const names = [...labels.keys()];
    if (names.length === 0) throw new PageError("input", `${state.metric} carries no labels; there is nothing to split it by.`);
    const split = names.includes(state.split) ? state.split : names.includes(state.group) ? state.group : names[0];
    fillSelect(root.querySelector("#standout-label"), names, split);
    const rank = MEASURES[state.rank] ? state.rank : "distance";
    root.querySelector("#standout-measure").value = rank;

    const reply = await call("POST", "/v1/standout", {
      selector: selectorOf(state.metric, state.filters),
      splitBy: split,
      window: windowOf(span),
      quantiles: comparedQuantiles(state),
      measure: MEASURES[rank].wire,
    }, signal);
    const ranked = reply.ranked || [];
    const q = reply.measureQuantile || Math.max(...comparedQuantiles(state));
    const scale = Math.max(1e-9, ...ranked.map((g) => (g.distance ? Math.max(g.distance.high || 0, g.distance.limit || 0) : 0)));
    root.querySelector("#standout-table tbody").replaceChildren(...ranked.map((g, i) => rowOf(g, i + 1, q, scale)));
    root.querySelector("th.standout-group").textContent = split;
    root.querySelector("th.standout-q").textContent = percentileName(q) + " group [interval]";
    root.querySelector("th.standout-q-rest").textContent = percentileName(q) + " rest [interval]";
    const unranked = reply.unranked || [];
    root.querySelector("#standout-unranked").textContent = unranked.length
      ? "Not ranked (too few values to judge, or no ratio): " + unranked.map((g) => g.value + " (" + Number(g.count || 0) + " values)").join(", ")
      : "";
    if (ranked.length === 0 && unranked.length === 0) throw new PageError("nodata", `No series of ${state.metric} carries ${split} in the window.`);
    const called = ranked.filter((g) => g.significant).length;
    const unsplit = reply.unsplitSeries ? "; " + reply.unsplitSeries + " series without " + split + " join every rest" : "";
    return state.metric + " split by " + split + ": " + ranked.length + " group(s) ranked by " + MEASURES[rank].text + ", " + called + " standing out at " + confidenceText(reply.confidence) + " confidence" + unsplit + ".";
  },
};
