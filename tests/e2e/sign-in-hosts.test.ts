import os from "node:os";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Browser } from "playwright-core";
import { collectPageErrors, launchBrowser, snap, TABLET } from "../helpers/browser";
import { startTestServer, TEST_PASSWORD } from "../helpers/test-app";

/*
 * A tablet reaches the server by whatever name or address the plant gives it. One server, signed
 * into through localhost, 127.0.0.1 and the machine's own host name (and a plant-style name), with
 * better-auth's origin check on as in production. Chromium resolves the names to this machine
 * itself (--host-resolver-rules), so the test does not depend on the network's DNS.
 */
let server: Awaited<ReturnType<typeof startTestServer>>;
let browser: Browser;
const port = () => new URL(server.baseUrl).port;
const HOST_NAMES = [os.hostname().toLowerCase(), "caster-office.plant.test"];

beforeAll(async () => {
  server = await startTestServer({ scale: 0.01, enforceOriginCheck: true });
  browser = await launchBrowser([`--host-resolver-rules=${HOST_NAMES.map((h) => `MAP ${h} 127.0.0.1`).join(", ")}`]);
});
afterAll(async () => {
  await browser?.close();
  await server?.stop();
});

describe("signing in from the addresses a plant uses", () => {
  it.each(["localhost", "127.0.0.1", ...HOST_NAMES])(
    "when the inspector opens the server as %s and signs in, then the yard opens with no page error and the session works",
    async (host) => {
      const base = `http://${host}:${port()}`;
      const context = await browser.newContext({ viewport: TABLET });
      const page = await context.newPage();
      const errors = collectPageErrors(page);
      // The router's own complaints (no fallback drawn while the first screen loads) are a defect too.
      const warnings: string[] = [];
      page.on("console", (m) => {
        if (m.type() === "warning") warnings.push(m.text());
      });
      const answers: number[] = [];
      page.on("response", (r) => {
        if (r.url().endsWith("/api/auth/sign-in/email")) answers.push(r.status());
      });
      await page.goto(base + "/sign-in");
      await page.getByLabel("E-mail").fill("inspector@demo.test");
      await page.getByLabel("Password").fill(TEST_PASSWORD);
      await page.getByRole("button", { name: "Sign in" }).click();
      await page.waitForURL(base + "/yard");
      await page.getByRole("heading", { level: 1, name: "Find a slab" }).waitFor();
      expect(answers).toEqual([200]);
      const me = await page.evaluate(async () => (await fetch("/api/me")).json());
      expect(me.email).toBe("inspector@demo.test");
      if (host === HOST_NAMES[1]) await snap(page, "sign-in-by-host-name-tablet");
      expect(errors).toEqual([]);
      expect(warnings.filter((w) => /HydrateFallback/.test(w))).toEqual([]);
      // The demo's sign-in page named the password itself (the test plant's own is not the published one).
      await page.goto(base + "/sign-in");
      expect(await page.getByTestId("demo-password").textContent()).toMatch(
        /^The password of every demo sign-in is strandsight-demo\.$|^The password is the one set in DEMO_PASSWORD when the demo was seeded\.$/,
      );
      await context.close();
    },
  );

  it("when a page of another site sends the sign-in form to the server with the right password, then no session is made", async () => {
    const sessions = () => server.db.$client.prepare("select count(*) from session").pluck().get() as number;
    const before = sessions();
    const context = await browser.newContext();
    const page = await context.newPage();
    // A page of another origin (the same machine under another name counts as another site) tries
    // a "simple" request, which needs no preflight; our own page's CSP (connect-src 'self') already
    // stops it in the browser — the request a hostile page would make is the one sent below.
    await page.goto(`http://${HOST_NAMES[1]}:${port()}/sign-in`);
    const inBrowser = await page.evaluate(
      async ({ target, password }) => {
        try {
          await fetch(target, {
            method: "POST",
            mode: "no-cors",
            headers: { "content-type": "text/plain" },
            body: JSON.stringify({ email: "inspector@demo.test", password }),
            credentials: "include",
          });
          return "sent";
        } catch {
          return "blocked";
        }
      },
      { target: `http://127.0.0.1:${port()}/api/auth/sign-in/email`, password: TEST_PASSWORD },
    );
    expect(inBrowser).toBe("blocked");
    // And the same request as a hostile page's browser would send it, Origin and all: 403.
    const res = await fetch(`http://127.0.0.1:${port()}/api/auth/sign-in/email`, {
      method: "POST",
      headers: { "content-type": "application/json", origin: `http://${HOST_NAMES[1]}:${port()}` },
      body: JSON.stringify({ email: "inspector@demo.test", password: TEST_PASSWORD }),
    });
    expect(res.status).toBe(403);
    expect(sessions()).toBe(before);
    await context.close();
  });
});
