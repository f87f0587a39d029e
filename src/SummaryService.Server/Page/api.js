// Calls the server's JSON routes (the google.api.http annotations of the .proto files) and turns
// every failure into a PageError whose kind the page shows as its own state.
import { parseInstant } from "./clock.js";

/** A failure the page shows: kind is "unreachable", "auth", "input", "nodata" or "server". */
export class PageError extends Error {
  constructor(kind, message) {
    super(message);
    this.kind = kind;
  }
}

let apiKey = "";

/** The key sent as a bearer token from now on (empty for none). */
export function setKey(key) { apiKey = key.trim(); }

function headers() {
  const h = { "content-type": "application/json" };
  if (apiKey) h.authorization = "Bearer " + apiKey;
  return h;
}

/** Refusals as the server words them (the message names the field and the value), with a way out for missing keys. */
async function failure(response) {
  const json = await response.json().catch(() => ({}));
  const message = json.message || "the server answered HTTP " + response.status;
  if (response.status === 401) return new PageError("auth", message + " Enter an API key with the read scope in the key field.");
  if (response.status === 403) return new PageError("auth", message + " This key may not read the chosen metric.");
  if (response.status === 400) return new PageError("input", message);
  return new PageError("server", message);
}

/** One call; `signal` aborts it when a newer draw replaces the one that asked. */
export async function call(method, path, body, signal) {
  let response;
  try {
    response = await fetch(path, { method, headers: headers(), body: body === undefined ? undefined : JSON.stringify(body), signal });
  } catch (e) {
    if (e.name === "AbortError") throw e;
    throw new PageError("unreachable", "The server cannot be reached (" + e.message + "). Is it running? The page retries on the next change or refresh.");
  }
  if (!response.ok) throw await failure(response);
  return response.json();
}

/** A streaming call: each line of the reply is one JSON message handed to onMessage until the stream ends or is aborted. */
export async function stream(path, body, onMessage, signal) {
  let response;
  try {
    response = await fetch(path, { method: "POST", headers: headers(), body: JSON.stringify(body), signal });
  } catch (e) {
    if (e.name === "AbortError") return;
    throw new PageError("unreachable", "The live stream cannot reach the server (" + e.message + ").");
  }
  if (!response.ok) throw await failure(response);
  const reader = response.body.pipeThrough(new TextDecoderStream()).getReader();
  let buffered = "";
  for (;;) {
    let chunk;
    try {
      chunk = await reader.read();
    } catch (e) {
      if (e.name === "AbortError") return;
      throw new PageError("unreachable", "The live stream broke off (" + e.message + ").");
    }
    if (chunk.done) return;
    buffered += chunk.value;
    let end;
    while ((end = buffered.indexOf("\n")) >= 0) {
      const line = buffered.slice(0, end).trim();
      buffered = buffered.slice(end + 1);
      if (line) onMessage(JSON.parse(line));
    }
  }
}

export const catalogue = (signal) => call("GET", "/v1/catalogue", undefined, signal);
export const summarize = (body, signal) => call("POST", "/v1/summarize", body, signal);
export const timeline = (body, signal) => call("POST", "/v1/timeline", body, signal);
export const compare = (body, signal) => call("POST", "/v1/compare", body, signal);

/** The selector for the chosen metric and label set (labels left at "any" are not sent). */
export function selectorOf(metric, labels) {
  const labelEquals = Object.fromEntries(Object.entries(labels || {}).filter(([, v]) => v !== ""));
  return Object.keys(labelEquals).length ? { metric, labelEquals } : { metric };
}

/**
 * The chosen span as Unix ms [from, to): a preset ends at `now`; a custom range is read from the
 * typed instants, and text that is no instant is refused here, naming the field and the text.
 */
export function spanOf(state, now) {
  if (state.window !== "custom") return { from: now - Number(state.window) * 1000, to: now, last: Number(state.window) };
  const from = parseInstant(state.from, now), to = parseInstant(state.to, now);
  for (const [name, text, value] of [["From", state.from, from], ["To", state.to, to]]) {
    if (Number.isNaN(value)) throw new PageError("input", `${name} is "${text}"; write an instant such as 2026-12-03T12:00Z, 2026-12-03 12:00 (in the chosen zone) or now-2h.`);
  }
  return { from, to, last: 0 };
}

/** The window of a request: `last` for a preset (the server's own now), a range for a custom span. */
export function windowOf(span) {
  return span.last ? { last: span.last + "s" } : { range: { fromUnixMs: String(span.from), toUnixMs: String(span.to) } };
}
