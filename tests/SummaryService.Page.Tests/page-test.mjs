// Opens the built-in page in headless Chromium against a server that already holds known data,
// picks the metric, window and step, and checks what the page drew against the server's own JSON:
// the bands and the figures, the confidence stated beside the bands, times in UTC (and local time
// after the switch), percentile names that stay right for p99.9 and p99.99, and the chosen bins.
// Input (environment): PAGE_URL, METRIC, EXPECT_POINTS, EXPECT_BARS, SCREENSHOT; API_KEY when the
// server has authentication on (the page must first refuse politely, then work once the key is typed).
// Output: one JSON line of what was seen; exit code 0 only when every check held.
import { env, pageUrlFromEnv, runPageTest, afterDraw, postJson } from "./browser.mjs";

const pageUrl = pageUrlFromEnv();
const metric = env("METRIC");
const expectPoints = Number(env("EXPECT_POINTS"));
const expectBars = Number(env("EXPECT_BARS"));
const screenshot = env("SCREENSHOT");
const apiKey = process.env.API_KEY || "";
const minutesOf = (hhmm) => Number(hhmm.slice(0, 2)) * 60 + Number(hhmm.slice(3, 5));

await runPageTest("page test", 90_000, async ({ open, check, seen }) => {
  const page = await open(pageUrl.href);
  if (apiKey) {
    // Without a key nothing can be listed: the page must say so and ask for one, not fail silently.
    await page.waitForFunction(() => document.body.dataset.state === "error");
    const refusal = await page.textContent("#status");
    check(/^Key needed: .*API key/.test(refusal ?? ""), `without a key the status reads "${refusal}"`);
    check((await page.getAttribute("#status", "data-kind")) === "auth", "the refusal is not shown as an auth problem");
    await page.fill("#key", apiKey);
    await page.dispatchEvent("#key", "change");
  }
  await page.waitForSelector(`#metric option[value="${metric}"]`, { state: "attached" });
  await page.selectOption("#window", "3600");
  await page.selectOption("#step", "900");
  await page.selectOption("#metric", metric);
  await page.selectOption("#axis", "linear");
  await afterDraw(page, () => page.click("#draw"));

  Object.assign(seen, await page.evaluate(() => {
    const count = (sel) => document.querySelectorAll(sel).length;
    const row = (name) => document.querySelector(`#figures tr[data-figure="${name}"]`);
    return {
      points: { p50: count('circle.point[data-q="0.5"]'), p90: count('circle.point[data-q="0.9"]'), p99: count('circle.point[data-q="0.99"]') },
      bands: count("polygon.band"),
      mean: Number(row("mean")?.dataset.value),
      meanInterval: row("mean")?.children[2].textContent,
      count: Number(row("count")?.dataset.value),
      countExact: row("count")?.querySelector(".exact") !== null,
      p99: Number(row("p99")?.dataset.value),
      p99Interval: row("p99")?.children[2].textContent,
      legend: [...document.querySelectorAll("#legend span")].map((e) => e.textContent),
      confidence: document.getElementById("confidence").textContent,
      lastTimeTick: [...document.querySelectorAll("#panels text.time")].map((e) => e.textContent).pop(),
      status: document.getElementById("status").textContent,
    };
  }));

  // The far end of the time axis is "now" in UTC, written HH:MM and marked UTC; the status gives the covered span in ISO 8601 UTC.
  const utcNow = new Date().toISOString().slice(11, 16);
  check(/^\d\d:\d\d UTC$/.test(seen.lastTimeTick ?? ""), `last time tick reads "${seen.lastTimeTick}"`);
  check(Math.abs(minutesOf(seen.lastTimeTick) - minutesOf(utcNow)) <= 2 || Math.abs(minutesOf(seen.lastTimeTick) - minutesOf(utcNow)) >= 1438, `last time tick ${seen.lastTimeTick} is not UTC now ${utcNow}`);
  check(/covering \d{4}-\d\d-\d\dT\d\d:\d\d:\d\d(\.\d{3})?Z → /.test(seen.status ?? ""), `status reads "${seen.status}"`);
  check(seen.confidence === "Shaded bands: each estimate's value interval at 99% confidence.", `confidence note reads "${seen.confidence}"`);
  check(JSON.stringify(seen.legend) === JSON.stringify(["p50", "p90", "p99"]), `legend reads ${JSON.stringify(seen.legend)}`);

  // Local time on request: the browser runs in Asia/Kathmandu (see browser.mjs), so the tick must move.
  await afterDraw(page, () => page.selectOption("#zone", "local"));
  const localTick = await page.evaluate(() => [...document.querySelectorAll("#panels text.time")].pop().textContent);
  check(localTick.endsWith(" local") && localTick !== seen.lastTimeTick.replace("UTC", "local"), `local tick ${localTick} against UTC ${seen.lastTimeTick}`);
  await afterDraw(page, () => page.selectOption("#zone", "utc"));

  // Deep tails keep their names: p99.9 and p99.99, never a rounded "p100".
  await afterDraw(page, () => page.selectOption("#percentiles", "0.9,0.999,0.9999"));
  const tails = await page.evaluate(() => ({
    legend: [...document.querySelectorAll("#legend span")].map((e) => e.textContent),
    rows: [...document.querySelectorAll("#figures tr")].map((r) => r.dataset.figure),
    bands: document.querySelectorAll("polygon.band").length,
  }));
  check(JSON.stringify(tails.legend) === JSON.stringify(["p90", "p99.9", "p99.99"]), `deep-tail legend reads ${JSON.stringify(tails.legend)}`);
  check(tails.rows.includes("p99.9") && tails.rows.includes("p99.99") && !tails.rows.includes("p100"), `deep-tail rows ${JSON.stringify(tails.rows)}`);
  check(tails.bands === 3, `${tails.bands} shaded bands for the deep tails, expected 3`);
  await afterDraw(page, () => page.selectOption("#percentiles", "0.5,0.9,0.99"));

  // The server's own answer for the same window, asked directly over JSON.
  const server = (await postJson(pageUrl, "/v1/summarize", { selector: { metric }, window: { last: "3600s" }, quantiles: [0.99] }, apiKey)).groups[0].summary;
  const p99 = server.quantiles[0];
  seen.server = { count: server.count, mean: server.mean, p99 };
  for (const [name, n] of Object.entries(seen.points)) check(n === expectPoints, `${name}: ${n} points drawn, expected ${expectPoints}`);
  check(seen.bands === 3, `${seen.bands} shaded bands, expected 3`);
  check(seen.count === Number(server.count), `count shown ${seen.count}, server ${server.count}`);
  check(seen.countExact, "count is not marked exact");
  // The mean comes from exact moments, so the page must show the server's figure to the last bit.
  check(seen.mean === server.mean, `mean shown ${seen.mean}, server ${server.mean}`);
  check(/^\[.*\] at \d+%$/.test(seen.meanInterval ?? ""), `mean interval reads "${seen.meanInterval}"`);
  // Quantiles of a compacted sketch come from random coins, so two answers need only agree within the interval.
  check(seen.p99 >= p99.low && seen.p99 <= p99.high, `p99 shown ${seen.p99} outside the server's [${p99.low}, ${p99.high}]`);
  // Each interval says which bound held it (log buckets, rank bound or min/max), as the server named it.
  check(server.exact || /· (log buckets|rank bound|min\/max)/.test(seen.p99Interval ?? ""), `p99 interval "${seen.p99Interval}" names no bound (server: ${p99.lowSource} / ${p99.highSource})`);

  // The shape view draws the chosen number of equal-width bins, each count's interval as a whisker where it is estimated.
  await afterDraw(page, () => page.click("#tab-shape"));
  const bins = await page.evaluate(() => ({ bars: document.querySelectorAll("#user-bars rect.bar").length, whiskers: document.querySelectorAll("#user-bars line.whisker").length }));
  check(bins.bars === expectBars, `${bins.bars} bars, expected ${expectBars}`);
  check(bins.whiskers <= bins.bars, `${bins.whiskers} whiskers for ${bins.bars} bars`);
  await afterDraw(page, () => page.click("#tab-bands"));
  await page.screenshot({ path: screenshot, fullPage: true });
});
