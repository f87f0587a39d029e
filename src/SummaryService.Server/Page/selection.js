// What the catalogue offers to choose from: the metrics, and for one metric each label with the
// values its series carry. Label choosers are built here for the filters and for compare's two sets.

/** Metric names in the catalogue, sorted. */
export function metricsOf(catalogue) {
  return [...new Set((catalogue.series || []).map((s) => s.metric))].sort();
}

/** For one metric: label name → its sorted values, label names sorted. */
export function labelsOf(catalogue, metric) {
  const labels = new Map();
  for (const s of catalogue.series || []) {
    if (s.metric !== metric) continue;
    for (const [name, value] of Object.entries(s.labels || {})) {
      if (!labels.has(name)) labels.set(name, new Set());
      labels.get(name).add(value);
    }
  }
  return new Map([...labels.keys()].sort().map((name) => [name, [...labels.get(name)].sort()]));
}

/** Replaces a select's options with `values` (value = text), keeping `chosen` when it is among them. */
export function fillSelect(select, values, chosen, first) {
  const options = values.map((v) => new Option(v, v));
  if (first) options.unshift(new Option(first.text, first.value));
  select.replaceChildren(...options);
  select.value = options.some((o) => o.value === chosen) ? chosen : options[0]?.value ?? "";
}

/**
 * One chooser per label ("any" or one of its values) into `container`, ids `${prefix}-${label}`;
 * a value chosen in the address but not (yet) in the catalogue is kept and offered, so a shared
 * address never silently widens its selection. `onChange(label, value)` reports each choice.
 */
export function labelChoosers(container, prefix, labels, chosen, onChange) {
  const names = new Set([...labels.keys(), ...Object.keys(chosen)]);
  // Rebuilt only when the choices change, so a chooser keeps keyboard focus across the redraw it starts.
  const signature = JSON.stringify([...names].sort().map((name) => [name, labels.get(name) || [], chosen[name] || ""]).map(([n, v, c]) => [n, v.includes(c) || c === "" ? v : [...v, c]]));
  if (container.dataset.signature === signature) {
    for (const select of container.querySelectorAll("select")) select.value = chosen[select.dataset.label] || "";
    return;
  }
  container.dataset.signature = signature;
  container.replaceChildren();
  for (const name of [...names].sort()) {
    const values = labels.get(name) || [];
    const wanted = chosen[name] || "";
    const label = document.createElement("label");
    label.textContent = name;
    const select = document.createElement("select");
    select.id = prefix + "-" + name;
    select.dataset.label = name;
    fillSelect(select, wanted && !values.includes(wanted) ? [...values, wanted] : values, wanted, { value: "", text: "any" });
    select.addEventListener("change", () => onChange(name, select.value));
    label.appendChild(select);
    container.appendChild(label);
  }
  if (names.size === 0) {
    const none = document.createElement("span");
    none.className = "hint";
    none.textContent = "no labels on this metric";
    container.appendChild(none);
  }
}

/** The selection in words for status lines: metric, label filters and span. */
export function selectionText(metric, labels, span, instant, durationText) {
  const filters = Object.entries(labels || {}).filter(([, v]) => v !== "");
  const where = filters.length ? " where " + filters.map(([k, v]) => k + "=" + v).join(", ") : "";
  const when = span.last ? "over the last " + durationText(span.last) : "from " + instant(span.from) + " to " + instant(span.to);
  return metric + where + " " + when;
}
