// Wires the controls to the JSON routes and the three drawings.
"use strict";
const HISTOGRAM_BINS = 16;

// The percentiles drawn, from the control: "0.5,0.9,0.99" and the like.
function percentiles() {
  return document.getElementById("percentiles").value.split(",").map(Number);
}

function setStatus(text, isError) {
  const s = document.getElementById("status");
  s.textContent = text;
  s.className = isError ? "error" : "";
}

// One entry per percentile, and the confidence the bands are drawn at, stated beside them.
function drawLegend(quantiles, confidence) {
  const legend = document.getElementById("legend");
  legend.replaceChildren();
  quantiles.forEach((q, qi) => {
    const span = document.createElement("span");
    span.className = "q-" + qi;
    span.dataset.q = q;
    span.textContent = percentileName(q);
    legend.appendChild(span);
  });
  const note = document.getElementById("confidence");
  note.textContent = confidence ? "Shaded bands: each estimate's value interval at " + Number((confidence * 100).toFixed(4)) + "% confidence." : "";
}

async function loadMetrics() {
  const reply = await Api.catalogue();
  const names = [...new Set((reply.series || []).map((s) => s.metric))].sort();
  const select = document.getElementById("metric");
  select.replaceChildren(...names.map((n) => new Option(n, n)));
  setStatus(names.length ? names.length + " metric(s) stored." : "No metrics stored yet: push some values first.");
}

// Changing several controls quickly starts several draws; only the latest one may paint.
let drawGeneration = 0;

async function draw() {
  const generation = ++drawGeneration;
  const metric = document.getElementById("metric").value;
  if (!metric) return;
  const windowSeconds = Number(document.getElementById("window").value);
  const stepSeconds = Number(document.getElementById("step").value);
  const quantiles = percentiles();
  setStatus("Loading " + metric + "…");
  document.body.dataset.state = "loading";
  try {
    const [timeline, summary] = await Promise.all([
      Api.timeline(metric, windowSeconds, stepSeconds, quantiles),
      Api.summarize(metric, windowSeconds, quantiles, HISTOGRAM_BINS),
    ]);
    if (generation !== drawGeneration) return;
    const whole = summary.groups && summary.groups[0] ? summary.groups[0].summary : { count: 0 };
    drawLegend(quantiles, whole.confidence);
    const points = drawBands(document.getElementById("bands"), timeline, quantiles);
    const bars = drawHistogram(document.getElementById("histogram"), whole);
    fillFigures(document.querySelector("#figures tbody"), whole);
    const covered = summary.covered ? " covering " + Clock.instant(Number(summary.covered.fromUnixMs)) + " → " + Clock.instant(Number(summary.covered.toUnixMs)) : "";
    setStatus(metric + ": " + Number(whole.count || 0) + " values" + covered + ", " + points + " step(s) with data, " + bars + " bin(s)" + (whole.exact ? "; every figure exact." : "; figures are estimates with intervals."));
    document.body.dataset.state = "drawn";
  } catch (e) {
    if (generation !== drawGeneration) return;
    setStatus(e.message, true);
    document.body.dataset.state = "error";
  }
}

document.getElementById("controls").addEventListener("submit", (e) => { e.preventDefault(); draw(); });
for (const id of ["metric", "window", "step", "percentiles", "zone"]) document.getElementById(id).addEventListener("change", draw);
// With authentication on, nothing can be listed before a key is given: each new key reads the
// catalogue again, since what a key may see depends on its metric prefixes.
function start() {
  loadMetrics().then(draw).catch((e) => {
    setStatus(e.message, true);
    document.body.dataset.state = "error";
  });
}
document.getElementById("key").addEventListener("change", start);
drawLegend(percentiles(), 0);
start();
