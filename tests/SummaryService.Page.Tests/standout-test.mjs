// Opens the built-in page in headless Chromium against a server holding one metric split by a
// label with one planted group, ranks it in the "stands out" tab, and checks the view against the
// server's own JSON answer: the same groups in the same order, the planted one first and the only
// one standing out, its figures as the server gave them; and that the address keeps the choice.
// Input (environment): PAGE_URL, METRIC, LABEL, EXPECT_FIRST, SCREENSHOT.
// Output: one JSON line of what was seen; exit code 0 only when every check held.
import { openPage, afterDraw, settled } from "./browser.mjs";

const env = (name) => {
  const value = process.env[name];
  if (!value) throw new Error(`${name} is not set`);
  return value;
};
const pageUrl = new URL(env("PAGE_URL"));
if (pageUrl.hostname !== "127.0.0.1") throw new Error(`PAGE_URL must be on loopback, not ${pageUrl.hostname}`);
const metric = env("METRIC");
const label = env("LABEL");
const expectFirst = env("EXPECT_FIRST");
const screenshot = env("SCREENSHOT");

// Everything here is bounded: a hung browser must fail the run, not stall it.
const watchdog = setTimeout(() => { console.error("standout page test took longer than 90 s"); process.exit(3); }, 90_000);

const failures = [];
const check = (ok, what) => { if (!ok) failures.push(what); };
let browser;
try {
  browser = await openPage(pageUrl, { viewport: { width: 1200, height: 1400 } });
  const { page, foreign, pageErrors } = browser;

  await page.goto(new URL("/?metric=" + encodeURIComponent(metric), pageUrl).href);
  check(await settled(page) === "drawn", "the page did not draw its first view");
  check(await afterDraw(page, () => page.click("#tab-standout")) === "drawn", `the stands-out tab did not draw: ${await page.textContent("#status")}`);
  await afterDraw(page, () => page.selectOption("#standout-label", label));
  check(await afterDraw(page, () => page.selectOption("#standout-measure", "ratio")) === "drawn", `ranking by ratio did not draw: ${await page.textContent("#status")}`);
  const address = new URL(page.url()).searchParams;
  check(address.get("view") === "standout" && address.get("split") === label && address.get("rank") === "ratio", `the address reads ${page.url()}`);

  const seen = await page.evaluate(() => {
    const rows = [...document.querySelectorAll("#standout-table tbody tr")];
    return {
      order: rows.map((r) => r.dataset.value),
      called: rows.filter((r) => r.dataset.significant === "true").map((r) => r.dataset.value),
      firstCells: rows.length ? [...rows[0].querySelectorAll("td")].map((td) => td.textContent.trim()) : [],
      bars: document.querySelectorAll("#standout-table svg.standout-bar").length,
      header: document.querySelector("#standout-table th.standout-group").textContent,
      quantileHeader: document.querySelector("#standout-table th.standout-q").textContent,
      status: document.getElementById("status").textContent,
    };
  });

  // The server's own answer, asked directly over JSON.
  const response = await fetch(new URL("/v1/standout", pageUrl), {
    method: "POST",
    headers: { "content-type": "application/json" },
    body: JSON.stringify({ selector: { metric }, splitBy: label, window: { last: "3600s" }, quantiles: [0.5, 0.9, 0.99], measure: "STANDOUT_MEASURE_QUANTILE_RATIO" }),
  });
  const server = await response.json();
  const first = server.ranked[0];
  const p99 = first.quantiles.find((q) => q.shift.q === 0.99);
  const fmt = (v) => Number(Number(v).toPrecision(4)).toString();

  check(JSON.stringify(seen.order) === JSON.stringify(server.ranked.map((g) => g.value)), `rows ${seen.order.join(",")} differ from the server's ranking ${server.ranked.map((g) => g.value).join(",")}`);
  check(seen.order[0] === expectFirst, `first row is ${seen.order[0]}, expected ${expectFirst}`);
  check(seen.called.length >= 1 && seen.called[0] === expectFirst, `standing out: ${seen.called.join(",")}`);
  check(seen.called.every((v) => server.ranked.find((g) => g.value === v).significant), "a row stands out that the server did not call");
  check(seen.bars === server.ranked.length, `${seen.bars} distance bars for ${server.ranked.length} groups`);
  check(seen.header === label, `the group column reads "${seen.header}"`);
  check(seen.quantileHeader === "p99 group [interval]", `the percentile column reads "${seen.quantileHeader}"`);
  check(seen.firstCells[2] === `${Number(first.count)} (${first.seriesMerged})`, `first row's count reads "${seen.firstCells[2]}"`);
  check(seen.firstCells[3] === `${fmt(p99.shift.b)} [${fmt(p99.shift.bLow)}, ${fmt(p99.shift.bHigh)}]`, `first row's p99 reads "${seen.firstCells[3]}"`);
  check(seen.firstCells[7] === "stands out: higher", `first row's verdict reads "${seen.firstCells[7]}"`);
  check(/standing out at 99% confidence/.test(seen.status), `status reads "${seen.status}"`);
  check(foreign.length === 0, `requests left the server: ${foreign.join(", ")}`);
  check(pageErrors.length === 0, `script errors: ${pageErrors.join("; ")}`);

  await page.locator("#view-standout").screenshot({ path: screenshot });
  console.log(JSON.stringify({ seen, failures }));
} catch (e) {
  failures.push(String(e && e.stack ? e.stack : e));
  console.log(JSON.stringify({ failures }));
} finally {
  if (browser) await browser.close();
  clearTimeout(watchdog);
}
process.exit(failures.length === 0 ? 0 : 1);
