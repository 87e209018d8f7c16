import { afterAll, beforeAll } from "vitest";
import { startTestServer } from "./test-app";
import fs from "node:fs";
import path from "node:path";
import { chromium, type Browser, type Page } from "playwright-core";

export const TABLET = { width: 820, height: 1180 };
export const DESKTOP = { width: 1440, height: 900 };

/** Debian's Chromium, headless, with the flags this closed network needs (see STACK.md). */
export async function launchBrowser(): Promise<Browser> {
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
 * Collects every error the page throws or logs, for the test to assert none. A 401 from /api/me is
 * how the app learns it is signed out; the browser logs it, and it is not an error of the page.
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
  return page.locator(rowSelector).evaluateAll((rows) =>
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
