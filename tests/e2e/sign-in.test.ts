import { describe, expect, it } from "vitest";
import { collectPageErrors, DESKTOP, snap, TABLET, useAppAndBrowser } from "../helpers/browser";
import { TEST_PASSWORD } from "../helpers/test-app";

const env = useAppAndBrowser({ scale: 0.02 });

// What each role should see in the menu, written out by hand.
const homes = [
  { role: "inspector", path: "/yard", heading: "Find a slab", menu: ["Slab yard"] },
  {
    role: "quality",
    path: "/quality",
    heading: "Quality",
    menu: [
      "Slab yard",
      "Quality",
      "Review",
      "Catalogue",
      "Claims",
      "Trace",
      "Heats",
      "Reports",
      "Risk models",
      "Operating windows",
      "Investigations",
      "Cause tags",
    ],
  },
  {
    role: "process",
    path: "/process",
    heading: "Process",
    menu: ["Process", "Heats", "Reports", "Risk models", "Operating windows", "Investigations", "Cause tags", "Import", "Plant setup"],
  },
  { role: "claims", path: "/claims", heading: "Claims", menu: ["Claims", "Trace", "Heats", "Reports", "Investigations", "Cause tags"] },
  {
    role: "admin",
    path: "/admin/users",
    heading: "Users and roles",
    menu: [
      "Slab yard",
      "Quality",
      "Review",
      "Catalogue",
      "Process",
      "Claims",
      "Trace",
      "Heats",
      "Reports",
      "Risk models",
      "Operating windows",
      "Investigations",
      "Cause tags",
      "Import",
      "Plant setup",
      "Users",
      "Sign-in",
      "API tokens",
      "Mail outbox",
    ],
  },
] as const;

async function signIn(page: import("playwright-core").Page, role: string) {
  await page.getByLabel("E-mail").fill(`${role}@demo.test`);
  await page.getByLabel("Password").fill(TEST_PASSWORD);
  await page.getByRole("button", { name: "Sign in" }).click();
}

describe.each([
  ["tablet", TABLET],
  ["desktop", DESKTOP],
] as const)("sign-in at %s size", (size, viewport) => {
  it.each(homes)("when $role signs in, then they land on $path, see only their menu, and can sign out", async ({ role, path, heading, menu }) => {
    const context = await env.browser.newContext({ viewport });
    const page = await context.newPage();
    // No status is let through: a signed-out start asks /api/session (200), so the console stays clean.
    const errors = collectPageErrors(page, []);
    const warnings: string[] = [];
    page.on("console", (m) => void (m.type() === "warning" && warnings.push(m.text())));
    await page.goto(env.server.baseUrl + "/");
    await page.waitForURL(/\/sign-in/);
    if (role === "inspector") await snap(page, `sign-in-${size}`);
    await signIn(page, role);
    await page.waitForURL(env.server.baseUrl + path);
    // The address changes as the next screen's code loads; wait for that screen's heading itself.
    const h1 = page.getByRole("heading", { level: 1, name: heading, exact: true });
    await h1.waitFor();
    expect(await h1.textContent()).toBe(heading);
    // The navigation offers only what the role may open (on the row, or in a named group of it: src/app/main-menu.tsx).
    const nav = page.getByRole("navigation", { name: "Main" });
    expect((await nav.getByRole("link", { includeHidden: true }).allTextContents()).sort()).toEqual([...menu].sort());
    if (role === "admin") {
      await page.getByTestId("user-row-inspector@demo.test").waitFor();
    }
    await page.waitForLoadState("networkidle");
    await snap(page, `home-${role}-${size}`);
    await page.getByRole("button", { name: "Sign out" }).click();
    await page.waitForURL(/\/sign-in/);
    // Signed out for real: the home redirects to sign-in again.
    await page.goto(env.server.baseUrl + path);
    await page.waitForURL(/\/sign-in/);
    expect(errors).toEqual([]);
    expect(warnings.filter((w) => w.includes("HydrateFallback"))).toEqual([]);
    await context.close();
  });
});

describe("sessions in one tab", () => {
  it("when one user signs out and another signs in, then nothing of the first user's screens remains", async () => {
    const context = await env.browser.newContext({ viewport: TABLET });
    const page = await context.newPage();
    const errors = collectPageErrors(page);
    await page.goto(env.server.baseUrl + "/admin/users");
    await page.waitForURL(/\/sign-in/);
    await signIn(page, "admin");
    await page.waitForURL(env.server.baseUrl + "/admin/users");
    await page.getByTestId("user-row-inspector@demo.test").waitFor();
    await page.getByRole("button", { name: "Sign out" }).click();
    await page.waitForURL(/\/sign-in/);
    await signIn(page, "inspector");
    await page.waitForURL(env.server.baseUrl + "/yard");
    expect(await page.getByTestId("user-name").textContent()).toContain("demo inspector");
    // The admin's screen is not open to the inspector, cached or not.
    await page.goto(env.server.baseUrl + "/admin/users");
    await page.getByRole("heading", { name: "Not open to your role" }).waitFor();
    expect(await page.getByTestId("user-row-inspector@demo.test").count()).toBe(0);
    expect(errors).toEqual([]);
    await context.close();
  });

  it("when the password is wrong, then the form says so and the page throws nothing", async () => {
    const context = await env.browser.newContext({ viewport: TABLET });
    const page = await context.newPage();
    // The refused sign-in is answered 401, which the browser logs; nothing else may be.
    const errors = collectPageErrors(page, [401]);
    await page.goto(env.server.baseUrl + "/sign-in");
    await page.getByLabel("E-mail").fill("claims@demo.test");
    await page.getByLabel("Password").fill("not-the-password-1");
    await page.getByRole("button", { name: "Sign in" }).click();
    await page.getByText("Invalid email or password").waitFor();
    expect(page.url()).toContain("/sign-in");
    // Before, the refusal was also thrown out of the form's submit: an uncaught error on every wrong password.
    expect(errors).toEqual([]);
    await context.close();
  });

  it("when a user is deactivated while working, then their next request sends them to sign-in", async () => {
    const context = await env.browser.newContext({ viewport: TABLET });
    const page = await context.newPage();
    await page.goto(env.server.baseUrl + "/");
    await page.waitForURL(/\/sign-in/);
    await signIn(page, "quality");
    await page.waitForURL(env.server.baseUrl + "/quality");
    const admin = await env.server.agentFor("admin");
    const id = env.server.db.$client.prepare("select id from user where email = 'quality@demo.test'").pluck().get() as string;
    expect((await admin.patch(`/api/admin/users/${id}`).set("Origin", env.server.baseUrl).send({ active: false })).status).toBe(200);
    await page.getByRole("link", { name: "Slab yard" }).click();
    // The yard's own first requests (catalogue, today's entries) meet the ended session.
    await page.waitForURL(/\/sign-in\?next=.*expired=1/);
    await page.getByText("Your session ended. Please sign in again.").waitFor();
    await admin.patch(`/api/admin/users/${id}`).set("Origin", env.server.baseUrl).send({ active: true });
    await context.close();
  });
});
