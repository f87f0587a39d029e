// Wires the controls to the JSON routes and the three drawings.
"use strict";
const PERCENTILES = [0.5, 0.9, 0.99];
const HISTOGRAM_BINS = 16;

function setStatus(text, isError) {
  const s = document.getElementById("status");
  s.textContent = text;
  s.className = isError ? "error" : "";
}

function drawLegend() {
  const legend = document.getElementById("legend");
  legend.replaceChildren();
  for (const q of PERCENTILES) {
    const span = document.createElement("span");
    span.className = "q-" + Math.round(q * 100);
    span.style.color = getComputedStyle(document.documentElement).getPropertyValue("--p" + Math.round(q * 100));
    span.textContent = "p" + Math.round(q * 100);
    legend.appendChild(span);
  }
}

async function loadMetrics() {
  const reply = await Api.listSeries();
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
  setStatus("Loading " + metric + "…");
  document.body.dataset.state = "loading";
  try {
    const [series, summary] = await Promise.all([
      Api.series(metric, windowSeconds, stepSeconds, PERCENTILES),
      Api.summarize(metric, windowSeconds, PERCENTILES, HISTOGRAM_BINS),
    ]);
    if (generation !== drawGeneration) return;
    const whole = summary.groups && summary.groups[0] ? summary.groups[0].summary : { count: 0 };
    const points = drawBands(document.getElementById("bands"), series, PERCENTILES);
    const bars = drawHistogram(document.getElementById("histogram"), whole);
    fillFigures(document.querySelector("#figures tbody"), whole);
    setStatus(metric + ": " + Number(whole.count || 0) + " values, " + points + " step(s) with data, " + bars + " bin(s)" + (whole.exact ? "; every figure exact." : "; figures are estimates with intervals."));
    document.body.dataset.state = "drawn";
  } catch (e) {
    if (generation !== drawGeneration) return;
    setStatus(e.message, true);
    document.body.dataset.state = "error";
  }
}

document.getElementById("controls").addEventListener("submit", (e) => { e.preventDefault(); draw(); });
for (const id of ["metric", "window", "step"]) document.getElementById(id).addEventListener("change", draw);
// With authentication on, nothing can be listed before a key is given: each new key reads the
// catalogue again, since what a key may see depends on its metric prefixes.
function start() {
  loadMetrics().then(draw).catch((e) => {
    setStatus(e.message, true);
    document.body.dataset.state = "error";
  });
}
document.getElementById("key").addEventListener("change", start);
drawLegend();
start();
