// Headless Chromium for the page scripts: a throw-away profile, bounded start-up, and a page that may
// talk only to the server under test (every other request is aborted and recorded).
import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { chromium } from "playwright-core";

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
