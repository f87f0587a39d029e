// Times on the page: UTC by default, so a time read off the page means the same to everyone on a
// call and matches the server's logs; the zone control shows the browser's local time instead.

let zone = "utc";

/** Chooses "utc" or "local" for every time the page writes from now on. */
export function setZone(value) { zone = value === "local" ? "local" : "utc"; }

/** The zone's name as written beside times. */
export function zoneName() { return zone === "local" ? "local" : "UTC"; }

/** Hours and minutes of a Unix-millisecond instant in the chosen zone. */
export function hoursMinutes(ms) {
  const options = { hour: "2-digit", minute: "2-digit", hourCycle: "h23" };
  if (zone === "utc") options.timeZone = "UTC";
  return new Date(ms).toLocaleTimeString([], options);
}

/** A full instant for hover figures and the status line: ISO 8601 in UTC, or local date and time with its offset. */
export function instant(ms) {
  if (zone === "utc") return new Date(ms).toISOString().replace(/\.000Z$/, "Z");
  const d = new Date(ms), offset = -d.getTimezoneOffset(), sign = offset < 0 ? "-" : "+";
  const pad = (n) => String(Math.abs(n)).padStart(2, "0");
  return d.getFullYear() + "-" + pad(d.getMonth() + 1) + "-" + pad(d.getDate()) + " " + pad(d.getHours()) + ":" + pad(d.getMinutes()) +
    ":" + pad(d.getSeconds()) + " " + sign + pad(Math.trunc(offset / 60)) + ":" + pad(offset % 60);
}

/**
 * Reads an instant typed by a person: ISO 8601 with a zone (`2026-12-03T12:00Z`), or without one in
 * the chosen zone; `now` and `now-90m` style offsets (s, m, h, d) from the browser's clock.
 * Returns Unix ms, or NaN when the text is none of these.
 */
export function parseInstant(textValue, now) {
  const t = textValue.trim();
  const relative = /^now(?:\s*-\s*(\d+(?:\.\d+)?)\s*([smhd]))?$/.exec(t);
  if (relative) {
    const unit = { s: 1e3, m: 6e4, h: 36e5, d: 864e5 }[relative[2] || "s"];
    return now - (relative[1] ? Number(relative[1]) * unit : 0);
  }
  if (!/^\d{4}-\d\d-\d\d([T ]\d\d:\d\d(:\d\d(\.\d+)?)?)?(Z|[+-]\d\d:?\d\d)?$/.test(t)) return NaN;
  const hasZone = /(Z|[+-]\d\d:?\d\d)$/.test(t) && t.length > 10;
  const iso = t.replace(" ", "T") + (t.length === 10 ? "T00:00" : "");
  return Date.parse(hasZone || zone === "local" ? iso : iso + "Z");
}

/** A length in seconds as the page writes it: 90s, 15m, 1h30m, 7d. */
export function durationText(seconds) {
  const units = [["d", 86400], ["h", 3600], ["m", 60], ["s", 1]];
  let rest = Math.round(seconds), out = "";
  for (const [name, size] of units) if (rest >= size) { out += Math.floor(rest / size) + name; rest %= size; }
  return out || "0s";
}
