import { beforeAll, describe, expect, it } from "vitest";
import type { Page } from "playwright-core";
import { snap, TABLET, useAppAndBrowser } from "../helpers/browser";
import { TEST_PASSWORD } from "../helpers/test-app";

// The real app with the local fake identity provider (oidc-provider, server/sso/fake-idp.ts) on a
// free port; its authorization codes live 2 s, so the expired-code case needs only a short wait.
const env = useAppAndBrowser({ scale: 0, fakeIdp: { codeTtlSeconds: 2 } });

const MAPPING = [
  { group: "yard-inspection", roles: ["inspector"] },
  { group: "quality-lab", roles: ["quality"] },
  { group: "process-engineering", roles: ["process"] },
  { group: "customer-service", roles: ["claims"] },
];

async function adminAgent() {
  const { default: request } = await import("supertest");
  const agent = request.agent(env.server.app);
  const res = await agent
    .post("/api/auth/sign-in/email")
    .set("Origin", env.server.env.BETTER_AUTH_URL)
    .send({ email: "admin@demo.test", password: TEST_PASSWORD });
  expect(res.status).toBe(200);
  return agent;
}

async function putSettings(body: object) {
  const agent = await adminAgent();
  return agent.put("/api/admin/sign-in").set("Origin", env.server.env.BETTER_AUTH_URL).send(body);
}

/** At the identity provider's own sign-in page: the person's login and any password. */
async function signInAtProvider(page: Page, login: string) {
  await page.waitForURL((u) => u.origin === env.server.fakeIdp!.issuer);
  await page.locator('input[name="login"]').fill(login);
  await page.locator('input[name="password"]').fill("any password");
  await page.locator('button[type="submit"]').click();
}

/** From Strandsight's sign-in page through the provider and back, in a new browser at tablet size. */
async function ssoSignIn(login: string) {
  const context = await env.browser.newContext({ viewport: TABLET });
  const page = await context.newPage();
  // The app's own console stays clean; the fake provider's development pages (oidc-provider's) ask
  // for a web font and a favicon this closed network does not have, which are not ours.
  const errors: string[] = [];
  page.on("pageerror", (e) => errors.push(String(e)));
  page.on("console", (m) => {
    if (m.type() === "error" && page.url().startsWith(env.server.baseUrl)) errors.push(m.text());
  });
  await page.goto(env.server.baseUrl + "/sign-in");
  await page.getByRole("button", { name: "Sign in with your plant account" }).click();
  await signInAtProvider(page, login);
  await page.waitForURL((u) => u.origin === env.server.baseUrl && !u.pathname.startsWith("/api/"));
  await page.waitForLoadState("networkidle");
  const me = await page.evaluate(async () => {
    const r = await fetch("/api/me");
    return { status: r.status, body: (await r.json()) as { id: string; roles?: string[]; name?: string; email?: string } };
  });
  return { context, page, me, errors };
}

/**
 * The browser starts a sign-in (its state and PKCE verifier land in its cookie); the person's part at
 * the provider is done here over HTTP with its own cookies, and the provider's answer — the address
 * it sends the browser back to — is returned unopened, for a test to change before the browser opens it.
 */
async function startAndStopBeforeReturn(login: string) {
  const context = await env.browser.newContext({ viewport: TABLET });
  const page = await context.newPage();
  await page.goto(env.server.baseUrl + "/sign-in");
  const start = await page.evaluate(async () => {
    const r = await fetch("/api/auth/sign-in/social", {
      method: "POST",
      headers: { "content-type": "application/json" },
      body: JSON.stringify({ provider: "plant", callbackURL: "/", errorCallbackURL: "/sign-in" }),
    });
    return (await r.json()) as { url: string };
  });
  const jar = new Map<string, string>();
  const keep = (r: Response) => {
    for (const c of r.headers.getSetCookie()) {
      const kv = c.split(";")[0]!;
      jar.set(kv.slice(0, kv.indexOf("=")), kv.slice(kv.indexOf("=") + 1));
    }
  };
  const cookie = () => [...jar].map(([k, v]) => `${k}=${v}`).join("; ");
  const idp = env.server.fakeIdp!.issuer;
  let res = await fetch(start.url, { redirect: "manual" });
  keep(res);
  const interaction = new URL(res.headers.get("location")!, idp).toString();
  res = await fetch(interaction, {
    method: "POST",
    redirect: "manual",
    headers: { cookie: cookie(), "content-type": "application/x-www-form-urlencoded" },
    body: new URLSearchParams({ prompt: "login", login, password: "any password" }),
  });
  keep(res);
  // Back to the authorization endpoint (the grant is given at once), which answers with the return address.
  for (let hop = 0; hop < 5; hop++) {
    const next = new URL(res.headers.get("location")!, idp);
    if (next.origin !== idp) return { context, page, back: next };
    res = await fetch(next, { redirect: "manual", headers: { cookie: cookie() } });
    keep(res);
  }
  throw new Error("the provider never sent the browser back");
}

async function refusedWith(page: Page, back: URL) {
  await page.goto(back.toString());
  await page.waitForURL((u) => u.pathname === "/sign-in");
  const alert = page.getByRole("alert");
  await alert.waitFor();
  const status = await page.evaluate(async () => (await fetch("/api/me")).status);
  return { text: (await alert.textContent()) ?? "", status, error: new URL(page.url()).searchParams.get("error") };
}

describe("single sign-on through the plant's identity provider (local fake provider)", () => {
  beforeAll(async () => {
    const res = await putSettings({ groupRoles: MAPPING, localPasswords: "everyone" });
    expect(res.status).toBe(200);
  });

  it("when Inga of the yard-inspection group signs in, then she lands in the slab yard as an inspector, and the roles are audited", async () => {
    const { context, page, me, errors } = await ssoSignIn("inga");
    expect(me.status).toBe(200);
    expect(me.body).toMatchObject({ name: "Inga Brenner", email: "inga.brenner@plant.invalid", roles: ["inspector"] });
    expect(new URL(page.url()).pathname).toBe("/yard");
    await snap(page, "sso-inspector-yard-tablet");
    const audit = env.server.db.$client
      .prepare("select before, after, actor from audit_log where action = 'user.roles.from_directory' and entity_id = ?")
      .all(me.body.id) as { before: string; after: string; actor: string }[];
    expect(audit).toHaveLength(1);
    expect(JSON.parse(audit[0]!.before)).toEqual({ roles: [] });
    expect(JSON.parse(audit[0]!.after)).toEqual({ roles: ["inspector"], groups: ["yard-inspection"] });
    expect(audit[0]!.actor).toBe("identity provider");
    expect(errors).toEqual([]);
    await context.close();
  });

  it("when Otto of quality-lab and process-engineering signs in, then he holds both roles and lands on the quality home", async () => {
    const { context, page, me, errors } = await ssoSignIn("otto");
    expect(me.body.roles).toEqual(["quality", "process"]);
    expect(new URL(page.url()).pathname).toBe("/quality");
    expect(errors).toEqual([]);
    await context.close();
  });

  it("when Mara, whose only group is not mapped, signs in, then she gets no role and the no-role screen; a mapping change applies at her next sign-in", async () => {
    const first = await ssoSignIn("mara");
    expect(first.me.body.roles).toEqual([]);
    expect(new URL(first.page.url()).pathname).toBe("/no-role");
    await first.page.getByRole("heading", { name: "No role assigned" }).waitFor();
    await snap(first.page, "sso-no-role-tablet");
    await first.context.close();

    const res = await putSettings({ groupRoles: [...MAPPING, { group: "visitors", roles: ["claims"] }], localPasswords: "everyone" });
    expect(res.status).toBe(200);
    const changed = env.server.db.$client
      .prepare("select after from audit_log where action = 'settings.sign_in.changed' order by id desc limit 1")
      .pluck()
      .get() as string;
    expect(JSON.parse(changed).groupRoles).toContainEqual({ group: "visitors", roles: ["claims"] });

    const again = await ssoSignIn("mara");
    expect(again.me.body.roles).toEqual(["claims"]);
    expect(new URL(again.page.url()).pathname).toBe("/claims");
    await again.context.close();
    await putSettings({ groupRoles: MAPPING, localPasswords: "everyone" });
  });

  it("when the state is changed on the way back, then nobody is signed in and the sign-in page says why in words", async () => {
    const { context, page, back } = await startAndStopBeforeReturn("inga");
    back.searchParams.set("state", back.searchParams.get("state")!.slice(0, -4) + "AAAA");
    const r = await refusedWith(page, back);
    expect(r.status).toBe(401);
    expect(r.text).toContain("could not be matched to the one this browser started");
    await snap(page, "sso-refused-state-tablet");
    await context.close();
  });

  it("when the answer names another issuer, then nobody is signed in and the page says it did not come from the provider", async () => {
    const { context, page, back } = await startAndStopBeforeReturn("inga");
    expect(back.searchParams.get("iss")).toBe(env.server.fakeIdp!.issuer);
    back.searchParams.set("iss", "http://localhost:9/another-provider");
    const r = await refusedWith(page, back);
    expect(r.status).toBe(401);
    expect(r.error).toBe("issuer_mismatch");
    expect(r.text).toContain("did not come from the identity provider");
    await context.close();
  });

  it("when the provider's code has expired before it is used, then nobody is signed in and the page says it had expired", async () => {
    const { context, page, back } = await startAndStopBeforeReturn("otto");
    await new Promise((resolve) => setTimeout(resolve, 3000));
    const r = await refusedWith(page, back);
    expect(r.status).toBe(401);
    expect(r.text).toContain("had expired");
    await context.close();
  });

  it("when passwords are kept for administrators, then a quality engineer's password is refused in words and the administrator's still works", async () => {
    expect((await putSettings({ groupRoles: MAPPING, localPasswords: "administrators" })).status).toBe(200);
    try {
      const context = await env.browser.newContext({ viewport: TABLET });
      const page = await context.newPage();
      await page.goto(env.server.baseUrl + "/sign-in");
      await page.getByRole("button", { name: "Sign in with your plant account" }).waitFor();
      expect(await page.getByLabel("E-mail").count()).toBe(0);
      await snap(page, "sso-sign-in-admins-only-tablet");
      await page.getByRole("button", { name: "Administrator sign-in with a password" }).click();
      await page.getByLabel("E-mail").fill("quality@demo.test");
      await page.getByLabel("Password").fill(TEST_PASSWORD);
      await page.getByRole("button", { name: "Sign in", exact: true }).click();
      await expect.poll(async () => (await page.getByRole("alert").textContent()) ?? "").toContain("Passwords are kept for administrators only");
      await page.getByLabel("E-mail").fill("admin@demo.test");
      await page.getByRole("button", { name: "Sign in", exact: true }).click();
      await page.waitForURL((u) => u.pathname === "/admin/users");
      await page.goto(env.server.baseUrl + "/admin/sign-in");
      await page.getByRole("heading", { name: "Sign-in" }).first().waitFor();
      await page.getByText("Redirect address to register at the provider").waitFor();
      await snap(page, "sso-admin-sign-in-tablet");
      // With a provider, passwords for administrators alone can be chosen (and are, here).
      expect(await page.getByRole("radio", { name: /Administrators only/ }).isDisabled()).toBe(false);
      await context.close();
    } finally {
      await putSettings({ groupRoles: MAPPING, localPasswords: "everyone" });
    }
  });
});
