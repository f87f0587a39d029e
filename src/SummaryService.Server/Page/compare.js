// Compare two sides: the same selection before and after an instant, or two label sets over the
// same window. Quantile shifts with their intervals and verdicts, the Kolmogorov–Smirnov distance,
// and both cumulative distributions overlaid with their bands.
import { compare, summarize, selectorOf, windowOf, PageError } from "./api.js";
import { instant, parseInstant, durationText } from "./clock.js";
import { formatNumber, percentileName, intervalText, labelsText, confidenceText } from "./format.js";
import { labelChoosers } from "./selection.js";
import { quantilesOf } from "./state.js";
import { thresholds, drawCdfs } from "./cdf.js";

const CDF_POINTS = 80;

/** The verdict a shift earns: a move only where the two sides' intervals do not overlap. */
export function verdictOf(shift) {
  if (!shift.significant) return "inconclusive: intervals overlap";
  return shift.delta > 0 ? "moved up" : "moved down";
}

/** The two sides as { a, b } of { name, selector, window } for the chosen mode. */
function sidesOf(state, span, now) {
  if (state.cmp === "labels") {
    const window = windowOf(span);
    const a = { ...state.filters, ...state.a }, b = { ...state.filters, ...state.b };
    return { a: { name: "a: " + labelsText(a), selector: selectorOf(state.metric, a), window }, b: { name: "b: " + labelsText(b), selector: selectorOf(state.metric, b), window } };
  }
  const at = state.at ? parseInstant(state.at, now) : Math.round((span.from + span.to) / 2);
  if (Number.isNaN(at)) throw new PageError("input", `Instant is "${state.at}"; write an instant such as 2026-12-03T12:00Z or now-30m.`);
  if (!(at > span.from && at < span.to)) throw new PageError("input", `Instant is ${instant(at)}; it must lie inside the window, between ${instant(span.from)} and ${instant(span.to)}.`);
  const selector = selectorOf(state.metric, state.filters);
  return {
    at,
    a: { name: "a: before " + instant(at), selector, window: { range: { fromUnixMs: String(span.from), toUnixMs: String(at) } } },
    b: { name: "b: from " + instant(at), selector, window: { range: { fromUnixMs: String(at), toUnixMs: String(span.to) } } },
  };
}

function cell(tr, textValue, cls) {
  const td = document.createElement("td");
  td.textContent = textValue;
  if (cls) td.className = cls;
  tr.appendChild(td);
}

/** The shifts table: one row per percentile with both sides, the shift and its interval, the ratio and the verdict. */
function fillShifts(tbody, shifts) {
  tbody.replaceChildren(...shifts.map((s) => {
    const tr = document.createElement("tr");
    const verdict = verdictOf(s);
    Object.assign(tr.dataset, { q: s.q, delta: s.delta, low: s.low, high: s.high, significant: String(s.significant === true), verdict });
    const head = document.createElement("th");
    head.scope = "row";
    head.textContent = percentileName(s.q);
    tr.appendChild(head);
    cell(tr, formatNumber(s.a) + " " + intervalText(s.aLow, s.aHigh));
    cell(tr, formatNumber(s.b) + " " + intervalText(s.bLow, s.bHigh));
    cell(tr, (s.delta > 0 ? "+" : "") + formatNumber(s.delta) + " " + intervalText(s.low, s.high));
    cell(tr, s.a !== 0 ? "×" + formatNumber(s.b / s.a) : "—");
    cell(tr, verdict, s.significant ? (s.delta > 0 ? "verdict up" : "verdict down") : "verdict none");
    return tr;
  }));
}

export const compareView = {
  id: "compare",
  title: "Compare",
  settings: { cmp: "time", at: "" },
  mount(root, ctx) {
    root.innerHTML = `
      <fieldset class="compare-choice"><legend>Compare</legend>
        <label class="inline"><input type="radio" name="cmp" value="time" id="cmp-time"> before and after an instant</label>
        <label class="inline"><input type="radio" name="cmp" value="labels" id="cmp-labels"> two label sets over the window</label>
        <label id="at-field">Instant <input id="at" size="24" placeholder="middle of the window" aria-describedby="at-hint"></label>
        <span class="hint" id="at-hint">ISO 8601 (2026-12-03T12:00Z) or now-30m; empty for the middle of the window.</span>
        <div id="sets"><div><strong>Side a</strong><div id="set-a" class="choosers"></div></div><div><strong>Side b</strong><div id="set-b" class="choosers"></div></div></div>
      </fieldset>
      <p id="ks" class="ks"></p>
      <table id="shifts"><caption class="hint">Each side's interval holds its quantile at the stated confidence; a verdict needs the two intervals apart.</caption>
        <thead><tr><th scope="col">percentile</th><th scope="col">a</th><th scope="col">b</th><th scope="col">shift b − a</th><th scope="col">b / a</th><th scope="col">verdict</th></tr></thead><tbody></tbody></table>
      <h3>Cumulative distributions</h3>
      <div class="legend" id="cdf-legend"></div>
      <div id="cdfs"></div>`;
    for (const radio of root.querySelectorAll('input[name="cmp"]')) radio.addEventListener("change", () => ctx.set({ cmp: radio.value }));
    root.querySelector("#at").addEventListener("change", (e) => ctx.set({ at: e.target.value.trim() }));
  },
  async draw(root, ctx) {
    const { state, span, signal, labels } = ctx;
    root.querySelector("#cmp-" + (state.cmp === "labels" ? "labels" : "time")).checked = true;
    root.querySelector("#at").value = state.at;
    root.querySelector("#at-field").hidden = root.querySelector("#at-hint").hidden = state.cmp === "labels";
    root.querySelector("#sets").hidden = state.cmp !== "labels";
    for (const side of ["a", "b"]) labelChoosers(root.querySelector("#set-" + side), side, labels, state[side], (name, value) => ctx.set((current) => ({ [side]: { ...current[side], [name]: value } })));

    const sides = sidesOf(state, span, Date.now());
    const reply = await compare({ a: { selector: sides.a.selector, window: sides.a.window }, b: { selector: sides.b.selector, window: sides.b.window }, quantiles: quantilesOf(state) }, signal);
    const na = Number(reply.a?.count || 0), nb = Number(reply.b?.count || 0);
    if (na === 0 || nb === 0) throw new PageError("nodata", `Side ${na === 0 ? "a" : "b"} holds no values (${na === 0 ? sides.a.name : sides.b.name}); choose another instant, window or label set.`);

    fillShifts(root.querySelector("#shifts tbody"), reply.shifts || []);
    const ks = root.querySelector("#ks");
    ks.dataset.distance = reply.ksDistance ?? 0;
    ks.textContent = "Kolmogorov–Smirnov distance " + formatNumber(reply.ksDistance ?? 0) + " in " + intervalText(reply.ksLow ?? 0, reply.ksHigh ?? 0) + " at " + confidenceText(reply.a.confidence) +
      " (the largest gap between the two cumulative distributions; 0 for the same shape, 1 for no overlap).";

    // Both CDFs on the same thresholds, spread over both sides' values on the chosen axis.
    const lo = Math.min(reply.a.min, reply.b.min), hi = Math.max(reply.a.max, reply.b.max);
    const grid = thresholds(state.axis, lo, hi, CDF_POINTS);
    const [ra, rb] = await Promise.all([sides.a, sides.b].map((s) => summarize({ selector: s.selector, window: s.window, quantiles: [0.5], rankOf: grid }, signal)));
    const ranksOf = (r) => r.groups?.[0]?.summary?.ranks || [];
    const cdf = drawCdfs([{ name: sides.a.name, cls: "side-a", ranks: ranksOf(ra) }, { name: sides.b.name, cls: "side-b", ranks: ranksOf(rb) }], state.axis, lo, hi, "cumulative distributions of both sides with their bands");
    root.querySelector("#cdfs").replaceChildren(cdf.svg);
    const legend = root.querySelector("#cdf-legend");
    legend.replaceChildren(...[["side-a", sides.a.name + " · " + na + " values"], ["side-b", sides.b.name + " · " + nb + " values"]].map(([cls, t]) => {
      const span = document.createElement("span");
      span.className = cls;
      span.textContent = t;
      return span;
    }));
    const moved = (reply.shifts || []).filter((s) => s.significant).length;
    const when = state.cmp === "labels" ? "over the window" : "around " + instant(sides.at) + " (" + durationText((sides.at - span.from) / 1000) + " before, " + durationText((span.to - sides.at) / 1000) + " after)";
    return state.metric + ": compared " + when + "; " + moved + " of " + (reply.shifts || []).length + " percentile(s) moved.";
  },
};
