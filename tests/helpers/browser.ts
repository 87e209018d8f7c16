import { afterAll, beforeAll } from "vitest";
import { startTestServer } from "./test-app";
import fs from "node:fs";
import path from "node:path";
import { chromium, type Browser, type Locator, type Page } from "playwright-core";

export const TABLET = { width: 820, height: 1180 };
export const DESKTOP = { width: 1440, height: 900 };

/** Debian's Chromium, headless, with the flags this closed network needs (see STACK.md). */
export async function launchBrowser(extraArgs: string[] = []): Promise<Browser> {
  const executablePath = process.env.CHROMIUM_PATH ?? "/usr/bin/chromium";
  if (!fs.existsSync(executablePath)) {
    throw new Error(`Chromium not found at ${executablePath}. Install it with: apt-get install -y chromium`);
  }
  return chromium.launch({
    executablePath,
    headless: true,
    args: [
      "--no-sandbox",
      "--disable-gpu",
      "--disable-background-networking",
      "--disable-component-update",
      "--disable-sync",
      "--no-first-run",
      "--disable-quic",
      // A new frame host per document (RenderDocument) loses Playwright's network emulation at each
      // navigation: from Debian's Chromium 150 on, a page reloaded or navigated after
      // context.setOffline(true) said navigator.onLine true while its requests failed, which no real
      // tablet does (measured with playwright-core 1.65: false before the navigation, true after;
      // false throughout with this flag). The offline tests reload and navigate offline.
      "--disable-features=RenderDocument",
      ...extraArgs,
    ],
  });
}

export const ARTIFACTS = path.resolve("tests/.artifacts");

/** Saves a screenshot under tests/.artifacts/ (ignored by git) for a person to look at. */
export async function snap(page: Page, name: string) {
  fs.mkdirSync(ARTIFACTS, { recursive: true });
  await page.screenshot({ path: path.join(ARTIFACTS, `${name}.png`), fullPage: true });
}

/**
 * Collects every error the page throws or logs, for the test to assert none. By default a logged
 * 401 is let through: a session ended while working is answered 401 by the screen's data request
 * (the app then goes to sign-in). A signed-out start logs none (/api/session answers 200): the
 * sign-in tests pass [] and hold the console to that.
 */
export function collectPageErrors(page: Page, allowedStatuses: number[] = [401]): string[] {
  const errors: string[] = [];
  page.on("pageerror", (e) => errors.push(String(e)));
  page.on("console", (m) => {
    if (m.type() !== "error") return;
    const text = m.text();
    if (allowedStatuses.some((s) => text.includes(`status of ${s}`))) return;
    errors.push(text);
  });
  return errors;
}

/**
 * A page's errors less those of a request the network failed while the test had the browser offline
 * (Chromium logs "Failed to load resource: net::ERR_INTERNET_DISCONNECTED"): the test's doing, not the
 * page's. A status the server answered (a 500, a 404) is still an error.
 */
export const apartFromOffline = (errors: string[]) => errors.filter((e) => !e.includes("net::ERR_INTERNET_DISCONNECTED"));

/**
 * The room to spare, px, inside a form field for what it shows: a list's chosen words, or `text` for
 * another field (a date's "00/00/0000"), measured in the field's own font; below 0 the field cuts it.
 * A list's arrow takes about 1.25 em beside its words; a date field keeps room for its calendar button in its padding.
 */
export function roomInside(field: Locator, text = "00/00/0000"): Promise<number> {
  return field.evaluate((el: HTMLInputElement | HTMLSelectElement, other: string) => {
    const cs = getComputedStyle(el);
    const ctx = document.createElement("canvas").getContext("2d")!;
    ctx.font = `${cs.fontWeight} ${cs.fontSize} ${cs.fontFamily}`;
    const words = el instanceof HTMLSelectElement ? (el.selectedOptions[0]?.text ?? "") : other;
    const arrow = el instanceof HTMLSelectElement ? 1.25 * parseFloat(cs.fontSize) : 0;
    const inside = el.clientWidth - parseFloat(cs.paddingLeft) - parseFloat(cs.paddingRight) - arrow;
    return Math.round(inside - ctx.measureText(words).width);
  }, text);
}

/** Signs a demo user in through the real sign-in page and waits until the app has left it. */
export async function signInAs(page: Page, baseUrl: string, role: string, password: string) {
  await page.goto(baseUrl + "/sign-in");
  await page.getByLabel("E-mail").fill(`${role}@demo.test`);
  await page.getByLabel("Password").fill(password);
  await page.getByRole("button", { name: "Sign in" }).click();
  await page.waitForURL((u) => !u.pathname.startsWith("/sign-in"));
}

/** The text of every cell in the rows matched by `rowSelector`, keyed by each cell's data-field. */
export async function readRows(page: Page, rowSelector: string): Promise<Record<string, string>[]> {
  return page
    .locator(rowSelector)
    .evaluateAll((rows) =>
      rows.map((r) => Object.fromEntries([...r.querySelectorAll("[data-field]")].map((c) => [c.getAttribute("data-field")!, (c.textContent ?? "").trim()]))),
    );
}

/**
 * The real app on a real port and one Chromium for a browser test file: started before the
 * file's tests, stopped after them. Read `env.server` and `env.browser` inside tests.
 */
export function useAppAndBrowser(opts: Parameters<typeof startTestServer>[0] = {}) {
  const env = {} as { server: Awaited<ReturnType<typeof startTestServer>>; browser: Browser };
  beforeAll(async () => {
    env.server = await startTestServer(opts);
    env.browser = await launchBrowser();
  });
  afterAll(async () => {
    await env.browser?.close();
    await env.server?.stop();
  });
  return env;
}

/** A real JPEG for a photo upload: a grey surface with a dark mark, built by sharp. */
export async function makeJpeg(width = 800, height = 600): Promise<Buffer> {
  const { default: sharp } = await import("sharp");
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}">
    <rect width="${width}" height="${height}" fill="#80868c"/>
    <ellipse cx="${width / 2}" cy="${height / 2}" rx="${width / 8}" ry="${height / 10}" fill="#2c241b"/></svg>`;
  return sharp(Buffer.from(svg)).jpeg({ quality: 85 }).toBuffer();
}

/** The gzip size of every script the page loaded so far, from the browser's own list of requests. */
export async function scriptBytesGzip(page: Page): Promise<{ total: number; files: { url: string; gzip: number }[] }> {
  const { gzipSync } = await import("node:zlib");
  const urls = await page.evaluate(() =>
    performance
      .getEntriesByType("resource")
      .map((e) => e.name)
      .filter((n) => /\.js(\?|$)/.test(n)),
  );
  const files: { url: string; gzip: number }[] = [];
  for (const url of [...new Set(urls)]) {
    const body = await page.context().request.get(url);
    files.push({ url, gzip: gzipSync(await body.body(), { level: 9 }).length });
  }
  return { total: files.reduce((n, f) => n + f.gzip, 0), files };
}
