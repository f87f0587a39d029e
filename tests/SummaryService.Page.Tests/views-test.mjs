// Drives every view of the built-in page in headless Chromium against a server holding labelled
// data, and checks what the page shows against the server's own JSON answers for the same
// selection: label filters narrow the figures and the requests, group-by draws one panel per label
// value on shared axes, the value axis is log or linear, hovering reads a step's figures, the shape
// view's counts add up, the compare view's shifts, verdicts and KS distance are the Compare RPC's,
// live refresh picks up new values, the address restores the view, error states show their
// messages, the dark scheme is dark. Screenshots of the main views go to SCREENSHOT_DIR.
// Input (environment): PAGE_URL, METRIC (labels region = north|south|west, lane = a|b), FROM, TO and
// AT (ISO 8601: a span holding all the data and an instant inside it), SCREENSHOT_DIR.
import { join } from "node:path";
import { env, pageUrlFromEnv, runPageTest, afterDraw, settled, postJson } from "./browser.mjs";

const base = pageUrlFromEnv();
const metric = env("METRIC");
const [from, to, at] = [env("FROM"), env("TO"), env("AT")];
const shots = env("SCREENSHOT_DIR");
const ms = (iso) => String(Date.parse(iso));
const same = (a, b) => JSON.stringify(a) === JSON.stringify(b);
// The page's number format (Page/format.js), to find the server's figures in the page's text.
const fmt = (v) => Number(v.toPrecision(4)).toString();

/** The value-axis ticks of the first drawing under `scope`: value, position, scale. */
const ticksOf = (page, scope) => page.evaluate((sel) => [...document.querySelector(sel).querySelectorAll("text.value-tick")]
  .map((t) => ({ v: Number(t.dataset.tick), y: Number(t.getAttribute("y")), x: Number(t.getAttribute("x")), scale: t.dataset.scale })), scope);

/** True when positions are an affine function of f(value): equal steps in f give equal steps on screen. */
function evenIn(ticks, f, coordinate) {
  if (ticks.length < 3) return false;
  const rate = (i) => (ticks[i][coordinate] - ticks[0][coordinate]) / (f(ticks[i].v) - f(ticks[0].v));
  return ticks.slice(2).every((_, i) => Math.abs(rate(i + 2) - rate(1)) < 0.01 * Math.abs(rate(1)));
}

await runPageTest("views test", 150_000, async ({ open, check, seen }) => {
  const page = await open(new URL("/?metric=" + encodeURIComponent(metric) + "&step=300", base).href);
  check(await settled(page) === "drawn", "the first draw did not finish");
  const summarizeBodies = [];
  page.on("request", (r) => { if (r.url().endsWith("/v1/summarize")) summarizeBodies.push(JSON.parse(r.postData())); });

  // The catalogue offers each label with its values.
  const offered = await page.evaluate(() => Object.fromEntries([...document.querySelectorAll("#filters select")].map((s) => [s.dataset.label, [...s.options].map((o) => o.value)])));
  check(same(offered, { lane: ["", "a", "b"], region: ["", "north", "south", "west"] }), `label filters offer ${JSON.stringify(offered)}`);

  // --- A filter narrows the request and the figures to exactly what Summarize returns for it.
  await afterDraw(page, () => page.selectOption("#filter-region", "north"));
  const sent = summarizeBodies.at(-1);
  check(same(sent?.selector, { metric, labelEquals: { region: "north" } }), `summarize was asked ${JSON.stringify(sent?.selector)}`);
  const north = (await postJson(base, "/v1/summarize", { selector: { metric, labelEquals: { region: "north" } }, window: { last: "3600s" }, quantiles: [0.5] })).groups[0].summary;
  const shown = await page.evaluate(() => ({ count: Number(document.querySelector('#figures tr[data-figure="count"]').dataset.value), mean: Number(document.querySelector('#figures tr[data-figure="mean"]').dataset.value) }));
  check(shown.count === Number(north.count), `filtered count shown ${shown.count}, server ${north.count}`);
  // Means come from exact moments: the page must show the server's figure to the last bit.
  check(shown.mean === north.mean, `filtered mean shown ${shown.mean}, server ${north.mean}`);
  seen.filtered = { shown, server: { count: north.count, mean: north.mean } };

  // --- Group-by: one panel per value, all on the same value axis.
  await afterDraw(page, () => page.selectOption("#group", "lane"));
  const lanes = await page.evaluate(() => [...document.querySelectorAll("figure.panel")].map((f) => f.dataset.group));
  check(same(lanes, ["a", "b"]), `group-by lane under region=north drew panels ${JSON.stringify(lanes)}`);
  const [ta, tb] = [await ticksOf(page, 'figure.panel[data-group="a"]'), await ticksOf(page, 'figure.panel[data-group="b"]')];
  check(ta.length > 0 && same(ta, tb), "the lane panels do not share their value axis");
  await afterDraw(page, () => page.selectOption("#filter-region", ""));
  await afterDraw(page, () => page.selectOption("#group", "region"));
  const regions = await page.evaluate(() => [...document.querySelectorAll("figure.panel")].map((f) => f.dataset.group));
  check(same(regions, ["north", "south", "west"]), `group-by region drew panels ${JSON.stringify(regions)}`);
  await page.screenshot({ path: join(shots, "page-bands-by-region.png"), fullPage: true });

  // --- Log and linear value axes: ticks evenly spaced in log10(value), then in value.
  const logTicks = await ticksOf(page, "figure.panel");
  check(logTicks.every((t) => t.scale === "log") && evenIn(logTicks, Math.log10, "y"), `log axis ticks ${JSON.stringify(logTicks)}`);
  check(!evenIn(logTicks, (v) => v, "y"), "log ticks are evenly spaced in value");
  await afterDraw(page, () => page.selectOption("#axis", "linear"));
  const linTicks = await ticksOf(page, "figure.panel");
  check(linTicks.every((t) => t.scale === "linear") && evenIn(linTicks, (v) => v, "y"), `linear axis ticks ${JSON.stringify(linTicks)}`);
  await afterDraw(page, () => page.selectOption("#axis", "log"));
  await afterDraw(page, () => page.selectOption("#group", ""));

  // --- Hover (here by keyboard): a step's figures with their intervals, as the timeline answered them.
  const timelineReply = page.waitForResponse((r) => r.url().endsWith("/v1/timeline")).then((r) => r.json());
  await afterDraw(page, () => page.click("#draw"));
  const steps = (await timelineReply).steps.filter((s) => s.groups?.length);
  await page.focus("figure.panel svg");
  const readLast = await page.evaluate(() => ({ step: document.querySelector(".readout").dataset.step, text: document.querySelector(".readout").textContent }));
  const last = steps.at(-1), lastP50 = last.groups[0].summary.quantiles[0];
  check(readLast.step === String(last.step.fromUnixMs), `focus read step ${readLast.step}, the last with data starts ${last.step.fromUnixMs}`);
  check(readLast.text.includes(`: ${last.groups[0].summary.count} values`) && readLast.text.includes(`p50 ${fmt(lastP50.value)} in [${fmt(lastP50.low)}, ${fmt(lastP50.high)}]`), `read-out "${readLast.text}"`);
  await page.keyboard.press("ArrowLeft");
  const readPrev = await page.evaluate(() => document.querySelector(".readout").dataset.step);
  check(readPrev === String(steps.at(-2).step.fromUnixMs), `← read step ${readPrev}, expected ${steps.at(-2).step.fromUnixMs}`);
  await page.mouse.move(0, 0);

  // --- Shape: exact log-bucket counts add up to the count; markers at the server's figures; the user's bins.
  await afterDraw(page, () => page.click("#tab-shape"));
  const whole = (await postJson(base, "/v1/summarize", { selector: { metric }, window: { last: "3600s" }, quantiles: [0.25, 0.5, 0.75], maxModes: 4 })).groups[0].summary;
  const shape = await page.evaluate(() => ({
    sum: [...document.querySelectorAll("#log-bars rect.bar")].reduce((n, b) => n + Number(b.dataset.count), 0),
    scale: document.querySelector('#log-bars text.value-tick[data-axis="x"]')?.dataset.scale,
    mean: Number(document.querySelector('#log-bars [data-marker="mean"]')?.dataset.value),
    median: Number(document.querySelector('#log-bars [data-marker="median"]')?.dataset.value),
    modes: document.querySelectorAll('#log-bars [data-marker^="mode"]').length,
    boxMedian: Number(document.querySelector('#box [data-figure="median"]')?.dataset.value),
    boxMin: Number(document.querySelector('#box [data-figure="min"]')?.dataset.value),
  }));
  seen.shape = shape;
  check(shape.sum === Number(whole.count), `log-bucket bars hold ${shape.sum} values, the window ${whole.count}`);
  check(shape.scale === "log", `log-bucket histogram drawn on a ${shape.scale} axis`);
  check(shape.mean === whole.mean, `mean marker at ${shape.mean}, server mean ${whole.mean}`);
  check(shape.median >= whole.quantiles[1].low && shape.median <= whole.quantiles[1].high, `median marker ${shape.median} outside the server's interval`);
  check(shape.modes === (whole.modes || []).length && shape.modes > 0, `${shape.modes} mode markers, server ${(whole.modes || []).length}`);
  check(shape.boxMin === whole.min, `box min ${shape.boxMin}, server ${whole.min}`);
  check(shape.boxMedian >= whole.fiveNumber.median.low && shape.boxMedian <= whole.fiveNumber.median.high, `box median ${shape.boxMedian} outside the server's interval`);
  await page.screenshot({ path: join(shots, "page-shape.png"), fullPage: true });
  await afterDraw(page, async () => { await page.fill("#bins", "1, 10, 100, 1000"); await page.dispatchEvent("#bins", "change"); });
  const edges = await page.evaluate(() => [...document.querySelectorAll("#user-bars rect.bar")].map((b) => Number(b.dataset.lower)));
  check(same(edges, [1, 10, 100]), `edges 1, 10, 100, 1000 drew bins from ${JSON.stringify(edges)}`);
  check(await afterDraw(page, async () => { await page.fill("#bins", "ten"); await page.dispatchEvent("#bins", "change"); }) === "error", "bins 'ten' was not refused");
  check(/^Bad input: Bins is "ten"/.test(await page.textContent("#status")), `bad bins read "${await page.textContent("#status")}"`);
  await afterDraw(page, async () => { await page.fill("#bins", "16"); await page.dispatchEvent("#bins", "change"); });

  // --- Compare before/after an instant over a custom span, narrowed to one region.
  await afterDraw(page, () => page.click("#tab-compare"));
  await afterDraw(page, () => page.selectOption("#window", "custom"));
  await afterDraw(page, async () => { await page.fill("#from", from); await page.dispatchEvent("#from", "change"); });
  await afterDraw(page, async () => { await page.fill("#to", to); await page.dispatchEvent("#to", "change"); });
  await afterDraw(page, () => page.selectOption("#filter-region", "south"));
  check(await afterDraw(page, async () => { await page.fill("#at", at); await page.dispatchEvent("#at", "change"); }) === "drawn", "the comparison did not draw");
  const south = { metric, labelEquals: { region: "south" } };
  const rangeOf = (a, b) => ({ range: { fromUnixMs: ms(a), toUnixMs: ms(b) } });
  const rpc = await postJson(base, "/v1/compare", { a: { selector: south, window: rangeOf(from, at) }, b: { selector: south, window: rangeOf(at, to) }, quantiles: [0.5, 0.9, 0.99] });
  const verdictOf = (s) => (!s.significant ? "inconclusive: intervals overlap" : s.delta > 0 ? "moved up" : "moved down");
  const compared = async (on) => on.evaluate(() => ({
    rows: [...document.querySelectorAll("#shifts tbody tr")].map((r) => ({ q: Number(r.dataset.q), delta: Number(r.dataset.delta), low: Number(r.dataset.low), high: Number(r.dataset.high), verdict: r.dataset.verdict })),
    ks: Number(document.getElementById("ks").dataset.distance),
    cdfs: [...document.querySelectorAll("#cdfs polyline")].map((p) => p.dataset.side.slice(0, 2)),
    bands: document.querySelectorAll("#cdfs polygon.band").length,
  }));
  const expected = (reply) => reply.shifts.map((s) => ({ q: s.q, delta: s.delta, low: s.low, high: s.high, verdict: verdictOf(s) }));
  const byTime = await compared(page);
  seen.compareByTime = byTime;
  // Compare is deterministic for fixed spans (sketch coins are seeded from bucket identity): the page must show its figures exactly.
  check(same(byTime.rows, expected(rpc)), `shifts shown ${JSON.stringify(byTime.rows)}, Compare ${JSON.stringify(expected(rpc))}`);
  check(byTime.rows[0]?.verdict === "moved up", `south's median after the instant reads "${byTime.rows[0]?.verdict}"`);
  check(byTime.ks === rpc.ksDistance, `KS shown ${byTime.ks}, Compare ${rpc.ksDistance}`);
  check(same(byTime.cdfs, ["a:", "b:"]) && byTime.bands === 2, `CDFs drawn ${JSON.stringify(byTime.cdfs)} with ${byTime.bands} bands`);

  // --- Compare two label sets over the same span.
  await afterDraw(page, () => page.selectOption("#filter-region", ""));
  await afterDraw(page, () => page.check("#cmp-labels"));
  await afterDraw(page, () => page.selectOption("#a-region", "north"));
  await afterDraw(page, () => page.selectOption("#b-region", "south"));
  const sets = await postJson(base, "/v1/compare", {
    a: { selector: { metric, labelEquals: { region: "north" } }, window: rangeOf(from, to) },
    b: { selector: { metric, labelEquals: { region: "south" } }, window: rangeOf(from, to) },
    quantiles: [0.5, 0.9, 0.99],
  });
  const bySets = await compared(page);
  check(same(bySets.rows, expected(sets)), `label-set shifts shown ${JSON.stringify(bySets.rows)}, Compare ${JSON.stringify(expected(sets))}`);
  check(bySets.ks === sets.ksDistance, `label-set KS shown ${bySets.ks}, Compare ${sets.ksDistance}`);
  await page.screenshot({ path: join(shots, "page-compare.png"), fullPage: true });

  // --- The address holds the view: opened afresh it draws the same comparison.
  const shared = page.url();
  seen.sharedUrl = shared;
  const again = await open(shared);
  check(await settled(again) === "drawn", "the shared address did not draw");
  const restored = await again.evaluate(() => ({ labels: document.getElementById("cmp-labels").checked, a: document.getElementById("a-region").value, b: document.getElementById("b-region").value, from: document.getElementById("from").value }));
  check(same(restored, { labels: true, a: "north", b: "south", from }), `the shared address restored ${JSON.stringify(restored)}`);
  check(same(await compared(again), bySets), "the shared address shows another comparison");
  await again.close();

  // --- Error states, each with its message.
  await afterDraw(page, async () => { await page.fill("#from", "yesterday"); await page.dispatchEvent("#from", "change"); });
  check(/^Bad input: From is "yesterday"/.test(await page.textContent("#status")), `a bad instant reads "${await page.textContent("#status")}"`);
  await afterDraw(page, async () => { await page.fill("#from", to); await page.dispatchEvent("#from", "change"); });
  await afterDraw(page, async () => { await page.fill("#to", from); await page.dispatchEvent("#to", "change"); });
  const reversed = await page.textContent("#status");
  check((await page.getAttribute("#status", "data-kind")) === "input" && /^Bad input: .*range/i.test(reversed), `a reversed span reads "${reversed}"`);
  await afterDraw(page, async () => { await page.fill("#from", "2020-01-01T00:00Z"); await page.dispatchEvent("#from", "change"); });
  await afterDraw(page, async () => { await page.fill("#to", "2020-01-01T01:00Z"); await page.dispatchEvent("#to", "change"); });
  check(await afterDraw(page, () => page.click("#tab-bands")) === "empty" && /^No data: No values of /.test(await page.textContent("#status")), `an empty span reads "${await page.textContent("#status")}"`);
  await page.route("**/v1/**", (route) => route.abort("connectionrefused"));
  check(await afterDraw(page, () => page.click("#draw")) === "error" && /^Server unreachable: /.test(await page.textContent("#status")), `a refused connection reads "${await page.textContent("#status")}"`);
  await page.unroute("**/v1/**");

  // --- Keyboard: the tab list answers ← and →.
  await page.focus("#tab-bands");
  await afterDraw(page, () => page.keyboard.press("ArrowRight"));
  check(await page.getAttribute("#tab-shape", "aria-selected") === "true" && await page.isVisible("#view-shape"), "→ on the first tab did not select the shape view");
  await page.close();

  // --- Live refresh: new values pushed to the server appear without touching the page.
  const livePage = await open(new URL("/?metric=" + encodeURIComponent(metric) + "&window=900&live=2", base).href);
  check(await settled(livePage) === "drawn", "the live page did not draw");
  await livePage.waitForFunction(() => Number(document.body.dataset.livePushes || 0) >= 1);
  const countShown = () => livePage.evaluate(() => Number(document.querySelector('#figures tr[data-figure="count"]').dataset.value));
  const before = await countShown();
  const values = Array.from({ length: 500 }, (_, i) => 20 + (i % 50));
  await postJson(base, "/v1/push", { metric, labels: { region: "west", lane: "a" }, values });
  await livePage.waitForFunction((n) => Number(document.querySelector('#figures tr[data-figure="count"]').dataset.value) === n, before + 500);
  // Hidden tab: the stream is closed and the page says so.
  await livePage.evaluate(() => { Object.defineProperty(document, "hidden", { value: true, configurable: true }); document.dispatchEvent(new Event("visibilitychange")); });
  check(/paused while the tab is hidden/.test(await livePage.textContent("#live-status")), `hidden tab: live status reads "${await livePage.textContent("#live-status")}"`);
  seen.live = { before, after: await countShown() };
  await livePage.close();

  // --- The dark scheme: pale ink on a dark ground.
  const dark = await open(new URL("/?metric=" + encodeURIComponent(metric) + "&view=compare&cmp=labels&a.region=north&b.region=south", base).href, { colorScheme: "dark" });
  check(await settled(dark) === "drawn", "the dark page did not draw");
  const luminance = (rgb) => { const [r, g, b] = rgb.match(/\d+/g).map(Number); return (0.2126 * r + 0.7152 * g + 0.0722 * b) / 255; };
  const colours = await dark.evaluate(() => ({ ground: getComputedStyle(document.body).backgroundColor, ink: getComputedStyle(document.body).color }));
  seen.dark = colours;
  check(luminance(colours.ground) < 0.2 && luminance(colours.ink) > 0.7, `dark scheme draws ${colours.ink} on ${colours.ground}`);
  await dark.screenshot({ path: join(shots, "page-compare-dark.png"), fullPage: true });
});
