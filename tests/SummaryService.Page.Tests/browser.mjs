// What every page test shares: a headless Debian chromium through playwright-core, bounded in
// time; a guard that fails the run when the page talks to any other host or throws; the list of
// failed checks; and one JSON line of what was seen as the output (exit code 0 only when every check held).
import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { chromium } from "playwright-core";

/** A required environment variable. */
export const env = (name) => {
  const value = process.env[name];
  if (!value) throw new Error(`${name} is not set`);
  return value;
};

/** The page's address from PAGE_URL, which must be on loopback. */
export function pageUrlFromEnv() {
  const url = new URL(env("PAGE_URL"));
  if (url.hostname !== "127.0.0.1") throw new Error(`PAGE_URL must be on loopback, not ${url.hostname}`);
  return url;
}

/**
 * Runs `body({ context, open, check, seen })` in one browser, then reports. `open(url, options)`
 * gives a fresh page (its own context when options such as colorScheme are passed) guarded against
 * foreign hosts and script errors; `check(ok, what)` records a failure; `seen` collects what is reported.
 */
export async function runPageTest(name, limitMs, body) {
  const watchdog = setTimeout(() => { console.error(`${name} took longer than ${limitMs / 1000} s`); process.exit(3); }, limitMs);
  const failures = [];
  const seen = {};
  const check = (ok, what) => { if (!ok) failures.push(what); };
  const profile = mkdtempSync(join(tmpdir(), "summary-page-profile-"));
  const foreign = [], pageErrors = [];
  const launchOptions = {
    executablePath: process.env.CHROMIUM || "/usr/bin/chromium",
    headless: true,
    args: ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run"],
    viewport: { width: 1100, height: 1000 },
    // A zone 5 h 45 min from UTC all year: local times can never pass for UTC ones.
    timezoneId: "Asia/Kathmandu",
    timeout: 30_000,
  };
  let context, browser;
  const guard = async (page, home) => {
    page.setDefaultTimeout(20_000);
    // The page may only talk to the server it came from.
    await page.route("**/*", (route) => {
      const url = new URL(route.request().url());
      if (url.host !== home.host) { foreign.push(url.href); return route.abort(); }
      return route.continue();
    });
    page.on("pageerror", (e) => pageErrors.push(String(e)));
    return page;
  };
  try {
    context = await chromium.launchPersistentContext(profile, launchOptions);
    const open = async (url, options) => {
      const home = new URL(url);
      let page;
      if (options) {
        browser ??= await chromium.launch({ executablePath: launchOptions.executablePath, headless: true, args: launchOptions.args, timeout: launchOptions.timeout });
        const own = await browser.newContext({ viewport: launchOptions.viewport, timezoneId: launchOptions.timezoneId, ...options });
        page = await own.newPage();
      } else {
        page = await context.newPage();
      }
      await guard(page, home);
      await page.goto(home.href);
      return page;
    };
    await body({ context, open, check, seen });
    check(foreign.length === 0, `requests left the server: ${foreign.join(", ")}`);
    check(pageErrors.length === 0, `script errors: ${pageErrors.join("; ")}`);
  } catch (e) {
    failures.push(String(e && e.stack ? e.stack : e));
  } finally {
    if (browser) await browser.close().catch(() => {});
    if (context) await context.close().catch(() => {});
    rmSync(profile, { recursive: true, force: true });
    clearTimeout(watchdog);
  }
  console.log(JSON.stringify({ seen, failures }));
  process.exit(failures.length === 0 ? 0 : 1);
}

/** Waits until the page has finished a draw (drawn, empty or error) and returns that state. */
export async function settled(page) {
  await page.waitForFunction(() => ["drawn", "empty", "error"].includes(document.body.dataset.state));
  return page.evaluate(() => document.body.dataset.state);
}

/** POSTs a JSON body to the server the way any script would, and returns the parsed reply. */
export async function postJson(base, path, body, apiKey) {
  const response = await fetch(new URL(path, base), {
    method: "POST",
    headers: { "content-type": "application/json", ...(apiKey ? { authorization: "Bearer " + apiKey } : {}) },
    body: JSON.stringify(body),
  });
  if (!response.ok) throw new Error(`${path} answered ${response.status}: ${await response.text()}`);
  return response.json();
}

/** Runs `action` (a change on the page) and waits until the page has finished the draw it started. */
export async function afterDraw(page, action) {
  // A draw still running from an earlier change would otherwise be taken for this one's.
  await page.waitForFunction(() => document.body.dataset.state !== "loading");
  const before = await page.evaluate(() => Number(document.body.dataset.draws || 0));
  await action();
  await page.waitForFunction((n) => Number(document.body.dataset.draws || 0) > n && document.body.dataset.state !== "loading", before);
  return page.evaluate(() => document.body.dataset.state);
}

/** Opens a page; `close()` ends the browser and removes the profile. */
export async function openPage(pageUrl, { viewport, timezoneId } = {}) {
  const profile = mkdtempSync(join(tmpdir(), "summary-page-profile-"));
  let context;
  try {
    context = await chromium.launchPersistentContext(profile, {
      executablePath: process.env.CHROMIUM || "/usr/bin/chromium",
      headless: true,
      args: ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run"],
      viewport: viewport ?? { width: 1100, height: 1000 },
      ...(timezoneId ? { timezoneId } : {}),
      timeout: 30_000,
    });
  } catch (e) {
    rmSync(profile, { recursive: true, force: true });
    throw e;
  }
  const page = context.pages()[0] ?? (await context.newPage());
  page.setDefaultTimeout(20_000);
  const foreign = [];
  await page.route("**/*", (route) => {
    const url = new URL(route.request().url());
    if (url.host !== pageUrl.host) { foreign.push(url.href); return route.abort(); }
    return route.continue();
  });
  const pageErrors = [];
  page.on("pageerror", (e) => pageErrors.push(String(e)));
  const close = async () => {
    await context.close().catch(() => {});
    rmSync(profile, { recursive: true, force: true });
  };
  return { page, foreign, pageErrors, close };
}
