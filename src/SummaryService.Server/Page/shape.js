// The shape of one window: the log buckets' histogram (exact counts, log value axis) with mean,
// median and density modes marked; the user's own bins on a linear axis with count intervals; and
// the five-number summary as a box.
import { drawHistogram } from "./histogram.js";
import { drawBox } from "./box.js";
import { summarize, selectorOf, windowOf, PageError } from "./api.js";
import { instant, durationText } from "./clock.js";
import { formatNumber, intervalText, confidenceText } from "./format.js";
import { selectionText } from "./selection.js";

/** How many bins the log buckets are folded into at most (neighbours combined; counts stay exact). */
const LOG_BINS = 60;

/** The user's bins: a count of equal-width bins, or ascending edges separated by commas. */
export function histogramSpec(text) {
  const t = text.trim();
  if (/^\d+$/.test(t) && Number(t) >= 1 && Number(t) <= 10000) return { binCount: Number(t) };
  const edges = t.split(",").map((v) => v.trim()).filter((v) => v !== "").map(Number);
  if (edges.length >= 2 && edges.every(Number.isFinite) && edges.every((v, i) => i === 0 || v > edges[i - 1])) return { edges };
  throw new PageError("input", `Bins is "${text}"; write a number of equal-width bins (1 to 10000) or ascending edges such as 0, 5, 10, 50, 100.`);
}

/** The centre figures as histogram markers: mean (its t-interval), median (its interval) and each density mode (where it lies). */
function markersOf(summary) {
  const median = (summary.quantiles || []).find((q) => q.q === 0.5);
  const markers = [{ name: "mean", cls: "m-mean", value: summary.mean, low: summary.meanLow, high: summary.meanHigh }];
  if (median) markers.push({ name: "median", cls: "m-median", value: median.value, low: median.low, high: median.high });
  (summary.modes || []).forEach((m, i) => markers.push({ name: "mode " + (i + 1), cls: "m-mode", value: m.value, low: m.low, high: m.high, share: m.share }));
  return markers;
}

/** A sentence per marker under the drawing, so the figures can be read without the picture. */
function markerList(list, markers, summary) {
  const at = confidenceText(summary.confidence);
  list.replaceChildren(...markers.filter((m) => m.value !== undefined).map((m) => {
    const li = document.createElement("li");
    li.dataset.marker = m.name;
    li.className = m.cls;
    const where = m.share !== undefined ? "lies in " + intervalText(m.low, m.high) + ", holding " + formatNumber(m.share * 100) + "% of the values" : m.low !== undefined ? "in " + intervalText(m.low, m.high) + " at " + at : "";
    li.textContent = m.name + " " + formatNumber(m.value) + " " + where;
    return li;
  }));
}

export const shapeView = {
  id: "shape",
  title: "Shape of the window",
  settings: { bins: "16" },
  mount(root, ctx) {
    root.innerHTML = `
      <h3>Log buckets</h3>
      <p class="hint">Bars are the exact counts of the log buckets (neighbours combined), on a log value axis so the body and the tail both show. Lines mark the mean, the median and each density mode; the shading is where each lies.</p>
      <div id="log-histogram"></div>
      <ul id="markers" class="markers"></ul>
      <h3>Your bins</h3>
      <label class="inline">Bins <input id="bins" size="28" aria-describedby="bins-hint"></label>
      <p class="hint" id="bins-hint">A number of equal-width bins, or edges such as 0, 5, 10, 50, 100. Whiskers show each estimated count's interval.</p>
      <div id="user-histogram"></div>
      <h3>Five-number summary</h3>
      <p class="hint">Whiskers reach the exact min and max; the box spans the quartiles, the thick line is the median, and the shading around each is its interval.</p>
      <div id="box"></div>`;
    const bins = root.querySelector("#bins");
    bins.value = ctx.state.bins;
    bins.addEventListener("change", () => ctx.set({ bins: bins.value }));
  },
  async draw(root, ctx) {
    const { state, span, signal } = ctx;
    root.querySelector("#bins").value = state.bins;
    const user = histogramSpec(state.bins);
    const selector = selectorOf(state.metric, state.filters);
    const window = windowOf(span);
    const [logReply, userReply] = await Promise.all([
      summarize({ selector, window, quantiles: [0.25, 0.5, 0.75], maxModes: 4, histogram: { logBuckets: true, binCount: LOG_BINS } }, signal),
      summarize({ selector, window, quantiles: [0.5], histogram: user }, signal),
    ]);
    const summary = logReply.groups && logReply.groups[0] ? logReply.groups[0].summary : { count: 0 };
    if (Number(summary.count || 0) === 0) throw new PageError("nodata", "No values of " + selectionText(state.metric, state.filters, span, instant, durationText) + ". Widen the window or loosen the filters.");
    const userSummary = userReply.groups[0].summary;

    const markers = markersOf(summary);
    const logBins = summary.histogram?.bins || [];
    const log = drawHistogram(logBins, "log", markers, "log-bucket histogram with mean, median and modes");
    log.svg.id = "log-bars";
    root.querySelector("#log-histogram").replaceChildren(log.svg);
    markerList(root.querySelector("#markers"), markers, summary);

    const userBins = userSummary.histogram?.bins || [];
    const linear = drawHistogram(userBins, "linear", [], "histogram of the chosen bins with count intervals");
    linear.svg.id = "user-bars";
    root.querySelector("#user-histogram").replaceChildren(linear.svg);

    root.querySelector("#box").replaceChildren(summary.fiveNumber ? drawBox(summary.fiveNumber, state.axis, "five-number summary with quartile intervals") : document.createTextNode("—"));
    const scaleNote = log.scale.kind === "log" ? "" : " (values reach 0 or below: linear axis)";
    return state.metric + ": " + Number(summary.count) + " values in " + logBins.length + " log-bucket bin(s)" + scaleNote + " and " + userBins.length + " chosen bin(s); " +
      (summary.modes || []).length + " density mode(s)" + (state.group ? "; every group merged (group-by splits the percentile view)." : ".");
  },
};
