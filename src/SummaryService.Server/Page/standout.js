// "Which group stands out": every value of one label against all the others, strongest first.
// A module of its own: it builds its section, its controls and its table, and asks the server
// through its own calls, so the page it sits in needs one hook only — the script tag — and,
// optionally, an element with id "standout-slot" to say where the section goes (else the end of
// the page). It shares the API key field (#key) and the metric list when the page has them.
"use strict";
(function () {
  const sheet = document.createElement("link");
  sheet.rel = "stylesheet";
  sheet.href = "/page/standout.css";
  document.head.appendChild(sheet);
  const view = document.createElement("section");
  view.id = "standout-view";
  view.innerHTML = `
    <h2>Which group stands out</h2>
    <p class="hint">Each value of a label against all the other values together. "Stands out" only where the intervals say so; the rest is an ordering, not a finding.</p>
    <form id="standout-controls" autocomplete="off">
      <label>Metric <select id="standout-metric" required></select></label>
      <label>Split by <select id="standout-label" required></select></label>
      <label>Window
        <select id="standout-window">
          <option value="900">last 15 minutes</option>
          <option value="3600" selected>last hour</option>
          <option value="21600">last 6 hours</option>
          <option value="86400">last day</option>
        </select>
      </label>
      <label>Rank by
        <select id="standout-measure">
          <option value="STANDOUT_MEASURE_DISTANCE" selected>distribution distance</option>
          <option value="STANDOUT_MEASURE_QUANTILE_RATIO">p99 ratio</option>
          <option value="STANDOUT_MEASURE_QUANTILE_SHIFT">p99 shift</option>
        </select>
      </label>
      <button type="submit" id="standout-rank">Rank</button>
    </form>
    <p id="standout-status" role="status"></p>
    <table id="standout-table">
      <thead><tr><th>#</th><th class="standout-group">group</th><th>values (series)</th><th>p99 group [interval]</th><th>p99 rest [interval]</th><th>group / rest</th><th>distance to the rest</th><th>verdict</th></tr></thead>
      <tbody></tbody>
    </table>
    <p id="standout-unranked" class="hint"></p>`;
  (document.getElementById("standout-slot") || document.body).appendChild(view);

  const $ = (id) => document.getElementById(id);
  const status = (text, isError) => { $("standout-status").textContent = text; $("standout-status").className = isError ? "error" : ""; };
  // Four significant digits, as everywhere on the page.
  const fmt = (v) => (v === undefined || v === null || Number.isNaN(v) ? "—" : Number(Number(v).toPrecision(4)).toString());
  const svgEl = (name, attrs, parent) => {
    const node = document.createElementNS("http://www.w3.org/2000/svg", name);
    for (const [k, v] of Object.entries(attrs)) node.setAttribute(k, String(v));
    if (parent) parent.appendChild(node);
    return node;
  };

  async function call(method, path, body) {
    const headers = { "content-type": "application/json" };
    const key = $("key") ? $("key").value.trim() : "";
    if (key) headers.authorization = "Bearer " + key;
    const response = await fetch(path, { method, headers, body: body === undefined ? undefined : JSON.stringify(body) });
    const json = await response.json().catch(() => ({}));
    if (!response.ok) throw new Error(json.message || "HTTP " + response.status);
    return json;
  }

  // Metrics and, per metric, the label names its series carry, from the catalogue.
  let labelsByMetric = new Map();
  async function loadCatalogue() {
    const reply = await call("GET", "/v1/catalogue");
    labelsByMetric = new Map();
    for (const s of reply.series || []) {
      const names = labelsByMetric.get(s.metric) || new Set();
      Object.keys(s.labels || {}).forEach((n) => names.add(n));
      labelsByMetric.set(s.metric, names);
    }
    const metrics = [...labelsByMetric.keys()].filter((m) => labelsByMetric.get(m).size > 0).sort();
    $("standout-metric").replaceChildren(...metrics.map((m) => new Option(m, m)));
    const shared = $("metric") && $("metric").value;
    if (shared && metrics.includes(shared)) $("standout-metric").value = shared;
    fillLabels();
  }

  function fillLabels() {
    const names = [...(labelsByMetric.get($("standout-metric").value) || [])].sort();
    $("standout-label").replaceChildren(...names.map((n) => new Option(n, n)));
  }

  // A bar for the distance with a tick where two samples of one distribution could still reach;
  // every row on one scale, the largest bound or limit shown filling the bar.
  function distanceCell(d, scale) {
    const td = document.createElement("td");
    if (!d) { td.textContent = "—"; return td; }
    const svg = svgEl("svg", { class: "standout-bar", viewBox: "0 0 100 10", role: "img", "aria-label": "distance " + fmt(d.distance) });
    svgEl("rect", { x: 0, y: 2, width: Math.max(0.5, 100 * (d.distance || 0) / scale), height: 6, class: d.significant ? "standout-far" : "standout-near" }, svg);
    svgEl("line", { x1: 100 * d.limit / scale, x2: 100 * d.limit / scale, y1: 0, y2: 10, class: "standout-limit" }, svg);
    td.append(svg, " " + fmt(d.distance || 0) + " [" + fmt(d.low || 0) + ", " + fmt(d.high || 0) + "]");
    return td;
  }

  function cell(text) { const td = document.createElement("td"); td.textContent = text; return td; }

  function row(group, rank, q, scale) {
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
      cell(s ? fmt(s.b) + " [" + fmt(s.bLow) + ", " + fmt(s.bHigh) + "]" : "—"),
      cell(s ? fmt(s.a) + " [" + fmt(s.aLow) + ", " + fmt(s.aHigh) + "]" : "—"),
      cell(shown && shown.ratio !== undefined ? "×" + Number(shown.ratio).toFixed(2) : "—"),
      distanceCell(group.distance, scale),
      cell(group.significant ? (higher ? "stands out: higher" : "stands out: lower") : "inconclusive"));
    if (group.significant) tr.className = "standout-called";
    return tr;
  }

  let generation = 0;
  async function rank() {
    const mine = ++generation;
    const metric = $("standout-metric").value;
    const splitBy = $("standout-label").value;
    if (!metric || !splitBy) { status("No metric with labels to split by yet."); return; }
    view.dataset.state = "loading";
    status("Ranking " + metric + " by " + splitBy + "…");
    try {
      const reply = await call("POST", "/v1/standout", {
        selector: { metric }, splitBy, window: { last: $("standout-window").value + "s" }, measure: $("standout-measure").value,
      });
      if (mine !== generation) return;
      const q = reply.measureQuantile || 0.99;
      const body = $("standout-table").querySelector("tbody");
      const scale = Math.max(1e-9, ...(reply.ranked || []).map((g) => (g.distance ? Math.max(g.distance.high || 0, g.distance.limit || 0) : 0)));
      body.replaceChildren(...(reply.ranked || []).map((g, i) => row(g, i + 1, q, scale)));
      $("standout-table").querySelector("th.standout-group").textContent = splitBy;
      const unranked = reply.unranked || [];
      $("standout-unranked").textContent = unranked.length
        ? "Not ranked (too few values to judge, or no ratio): " + unranked.map((g) => g.value + " (" + Number(g.count || 0) + " values)").join(", ")
        : "";
      const called = (reply.ranked || []).filter((g) => g.significant).length;
      const unsplit = reply.unsplitSeries ? "; " + reply.unsplitSeries + " series without " + splitBy + " join every rest" : "";
      status((reply.ranked || []).length + " group(s) ranked, " + called + " standing out at " + Number(((reply.confidence || 0) * 100).toFixed(4)) + "% confidence" + unsplit + ".");
      view.dataset.state = "ranked";
    } catch (e) {
      if (mine !== generation) return;
      status(e.message, true);
      view.dataset.state = "error";
    }
  }

  $("standout-controls").addEventListener("submit", (e) => { e.preventDefault(); rank(); });
  $("standout-metric").addEventListener("change", () => { fillLabels(); rank(); });
  for (const id of ["standout-label", "standout-window", "standout-measure"]) $(id).addEventListener("change", rank);
  const start = () => loadCatalogue().catch((e) => { status(e.message, true); view.dataset.state = "error"; });
  if ($("key")) $("key").addEventListener("change", start);
  start();
})();
