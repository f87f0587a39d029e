// Calls the server's JSON routes (the google.api.http annotations of the .proto files).
"use strict";
const Api = {
  headers() {
    const h = { "content-type": "application/json" };
    const key = document.getElementById("key").value.trim();
    if (key) h.authorization = "Bearer " + key;
    return h;
  },
  async call(method, path, body) {
    const response = await fetch(path, { method, headers: Api.headers(), body: body === undefined ? undefined : JSON.stringify(body) });
    const json = await response.json().catch(() => ({}));
    // A refusal is a JSON status whose message names the field and the value at fault.
    if (!response.ok) {
      const message = json.message || ("HTTP " + response.status);
      throw new Error(response.status === 401 ? message + " Enter an API key with the read scope above." : message);
    }
    return json;
  },
  catalogue() { return Api.call("GET", "/v1/catalogue"); },
  timeline(metric, windowSeconds, stepSeconds, quantiles) {
    return Api.call("POST", "/v1/timeline", { selector: { metric }, window: { last: windowSeconds + "s" }, step: stepSeconds + "s", quantiles });
  },
  summarize(metric, windowSeconds, quantiles, bins) {
    return Api.call("POST", "/v1/summarize", { selector: { metric }, window: { last: windowSeconds + "s" }, quantiles, histogram: { binCount: bins } });
  },
};
