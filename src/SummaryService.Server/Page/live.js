// Live refresh through the streaming watch route: the server pushes the selection's trailing-window
// summary every chosen interval, and each push redraws the view. The stream is closed while the tab
// is hidden (nobody is looking) and opened again when it shows.
import { stream, selectorOf } from "./api.js";

export class LiveRefresh {
  /** `onPush(reply)` runs for every push after the first; `onNote(text, isError)` reports the stream's state. */
  constructor(onPush, onNote) {
    this.onPush = onPush;
    this.onNote = onNote;
    this.wanted = null;
    this.controller = null;
    document.addEventListener("visibilitychange", () => this.apply());
  }

  /** Follows the state: live needs a preset (trailing) window and an interval; anything else stops it. */
  follow(state) {
    const seconds = Number(state.live);
    const wanted = seconds > 0 && state.window !== "custom" && state.metric
      ? { query: { selector: selectorOf(state.metric, state.filters), window: { last: state.window + "s" }, quantiles: [0.5] }, interval: seconds + "s" }
      : null;
    if (JSON.stringify(wanted) === JSON.stringify(this.wanted)) return;
    this.wanted = wanted;
    if (seconds > 0 && state.window === "custom") this.onNote("Live refresh follows a trailing window: choose a preset window to use it.", false);
    else if (!wanted) this.onNote("", false);
    this.apply();
  }

  apply() {
    this.controller?.abort();
    this.controller = null;
    if (!this.wanted) return;
    if (document.hidden) {
      this.onNote("Live refresh paused while the tab is hidden.", false);
      return;
    }
    const controller = new AbortController();
    this.controller = controller;
    const body = this.wanted;
    let pushes = 0;
    this.onNote("Live: waiting for the first push every " + body.interval + ".", false);
    stream("/v1/watch", body, (reply) => {
      const count = Number(reply.groups?.[0]?.summary?.count || 0);
      document.body.dataset.livePushes = String(++pushes);
      this.onNote("Live: pushed at " + new Date().toISOString().slice(11, 19) + " UTC, " + count + " values in the trailing window.", false);
      if (pushes > 1) this.onPush(reply);
    }, controller.signal).then(() => {
      // The server ends a watch only when it stops; try again after one interval.
      if (this.controller === controller) setTimeout(() => this.controller === controller && this.apply(), Number.parseFloat(body.interval) * 1000);
    }, (e) => {
      if (this.controller !== controller) return;
      this.onNote(e.message + " Retrying after one interval.", true);
      setTimeout(() => this.controller === controller && this.apply(), Number.parseFloat(body.interval) * 1000);
    });
  }
}
