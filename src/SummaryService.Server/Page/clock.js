// Times on the page: UTC by default, so a time read off the page means the same to everyone on a
// call and matches the server's logs; the switch beside the controls shows the browser's local time.
"use strict";
const Clock = {
  zone() { return document.getElementById("zone").value === "local" ? "local" : "UTC"; },
  // Hours and minutes of a Unix-millisecond instant in the chosen zone.
  hoursMinutes(ms) {
    const options = { hour: "2-digit", minute: "2-digit", hourCycle: "h23" };
    if (Clock.zone() === "UTC") options.timeZone = "UTC";
    return new Date(ms).toLocaleTimeString([], options);
  },
  // A full instant for tooltips and the status line: ISO 8601 in UTC, or the local date and time with its offset.
  instant(ms) {
    if (Clock.zone() === "UTC") return new Date(ms).toISOString().replace(/\.000Z$/, "Z");
    const d = new Date(ms), offset = -d.getTimezoneOffset(), sign = offset < 0 ? "-" : "+";
    const pad = (n) => String(Math.abs(n)).padStart(2, "0");
    return d.getFullYear() + "-" + pad(d.getMonth() + 1) + "-" + pad(d.getDate()) + " " + pad(d.getHours()) + ":" + pad(d.getMinutes()) +
      ":" + pad(d.getSeconds()) + " " + sign + pad(Math.trunc(offset / 60)) + ":" + pad(offset % 60);
  },
};
