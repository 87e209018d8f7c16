import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Browser } from "playwright-core";
import { collectPageErrors, DESKTOP, launchBrowser, snap, TABLET } from "../helpers/browser";
import { startTestServer, TEST_PASSWORD } from "../helpers/test-app";

type Server = Awaited<ReturnType<typeof startTestServer>>;
let server: Server;
let browser: Browser;

beforeAll(async () => {
  server = await startTestServer({ scale: 0.02 });
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
  await server?.stop();
});

const homes = [
  { role: "inspector", path: "/yard", heading: "Find a slab" },
  { role: "quality", path: "/quality", heading: "Quality" },
  { role: "process", path: "/process", heading: "Process" },
  { role: "claims", path: "/claims", heading: "Claims" },
  { role: "admin", path: "/admin/users", heading: "Users and roles" },
] as const;

describe.each([
  ["tablet", TABLET],
  ["desktop", DESKTOP],
] as const)("sign-in at %s size", (size, viewport) => {
  it.each(homes)("when $role signs in, then they land on $path and can sign out", async ({ role, path, heading }) => {
    const context = await browser.newContext({ viewport });
    const page = await context.newPage();
    const errors = collectPageErrors(page);
    await page.goto(server.baseUrl + "/");
    await page.waitForURL(/\/sign-in/);
    if (role === "inspector") await snap(page, `sign-in-${size}`);
    await page.getByLabel("E-mail").fill(`${role}@demo.test`);
    await page.getByLabel("Password").fill(TEST_PASSWORD);
    await page.getByRole("button", { name: "Sign in" }).click();
    await page.waitForURL(server.baseUrl + path);
    const h1 = page.getByRole("heading", { level: 1 });
    await h1.waitFor();
    expect(await h1.textContent()).toBe(heading);
    // The navigation offers only what the role may open.
    const nav = page.getByRole("navigation", { name: "Main" });
    if (role === "inspector") {
      expect(await nav.getByRole("link").allTextContents()).toEqual(["Slab yard"]);
    }
    if (role === "admin") {
      await page.getByTestId("user-row-inspector@demo.test").waitFor();
    }
    await page.waitForLoadState("networkidle");
    await snap(page, `home-${role}-${size}`);
    await page.getByRole("button", { name: "Sign out" }).click();
    await page.waitForURL(/\/sign-in/);
    // Signed out for real: the home redirects to sign-in again.
    await page.goto(server.baseUrl + path);
    await page.waitForURL(/\/sign-in/);
    expect(errors).toEqual([]);
    await context.close();
  });
});
