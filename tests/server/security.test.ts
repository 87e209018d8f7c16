import request from "supertest";
import { afterEach, describe, expect, it } from "vitest";
import type { AnyRoute } from "../../server/lib/route";
import { createAuth } from "../../server/auth";
import { MAX_FAILURES } from "../../server/lib/sign-in-guard";
import { createTestApp, TEST_PASSWORD, type TestApp } from "../helpers/test-app";

let t: TestApp | undefined;
afterEach(async () => {
  await t?.close();
  t = undefined;
});
const signIn = (app: TestApp["app"], origin: string, email: string, password: string) =>
  request(app).post("/api/auth/sign-in/email").set("Origin", origin).send({ email, password });

describe("rate limits and lock-out", () => {
  it("when one address keeps trying to sign in, then past its budget it gets 429 in the error envelope with the standard headers", async () => {
    t = await createTestApp({ scale: 0.01, env: { RATE_LIMIT_SIGNIN: "4" } });
    const statuses: number[] = [];
    let last: request.Response | undefined;
    // Four different accounts, so the per-account lock (5 wrong passwords) is not what answers.
    for (const who of ["inspector", "quality", "process", "claims", "admin"]) {
      last = await signIn(t.app, t.env.BETTER_AUTH_URL, `${who}@demo.test`, "wrong-password-1");
      statuses.push(last.status);
    }
    expect(statuses).toEqual([401, 401, 401, 401, 429]);
    expect(last!.body.error).toMatchObject({ code: "too_many_requests", message: "Too many sign-in attempts from this address. Wait 15 minutes and try again." });
    expect(last!.headers["retry-after"]).toBeDefined();
    expect(last!.headers["ratelimit-policy"]).toBe("4;w=900");
    // The same budget covers the password-reset request.
    const reset = await request(t.app).post("/api/auth/request-password-reset").set("Origin", t.env.BETTER_AUTH_URL).send({ email: "quality@demo.test", redirectTo: "/reset-password" });
    expect(reset.status).toBe(429);
  });

  it(`when one account gets ${MAX_FAILURES} wrong passwords, then even the right one is refused for a while, other accounts are not, and the lock is audited`, async () => {
    t = await createTestApp({ scale: 0.01 });
    for (let i = 0; i < MAX_FAILURES; i++) expect((await signIn(t.app, t.env.BETTER_AUTH_URL, "quality@demo.test", `guess-number-${i}`)).status).toBe(401);
    const locked = await signIn(t.app, t.env.BETTER_AUTH_URL, "quality@demo.test", TEST_PASSWORD);
    expect(locked.status).toBe(429);
    expect(locked.body.error.code).toBe("account_locked");
    expect(locked.body.error.message).toBe("Too many wrong passwords for this account: sign-in is locked for 15 more minutes. Wait, or ask an administrator to reset the password.");
    expect((await signIn(t.app, t.env.BETTER_AUTH_URL, "process@demo.test", TEST_PASSWORD)).status).toBe(200);
    const audit = t.db.$client.prepare("select * from audit_log where action = 'user.sign_in.locked'").all() as { entity_id: string }[];
    expect(audit.map((a) => a.entity_id)).toEqual(["quality@demo.test"]);
  });

  it("when a correct password comes before the fifth wrong one, then the count starts again", async () => {
    t = await createTestApp({ scale: 0.01 });
    for (let i = 0; i < MAX_FAILURES - 1; i++) await signIn(t.app, t.env.BETTER_AUTH_URL, "claims@demo.test", `guess-${i}`);
    expect((await signIn(t.app, t.env.BETTER_AUTH_URL, "claims@demo.test", TEST_PASSWORD)).status).toBe(200);
    for (let i = 0; i < MAX_FAILURES - 1; i++) await signIn(t.app, t.env.BETTER_AUTH_URL, "claims@demo.test", `guess-again-${i}`);
    expect((await signIn(t.app, t.env.BETTER_AUTH_URL, "claims@demo.test", TEST_PASSWORD)).status).toBe(200);
  });

  it("when the feed calls past its per-minute budget, then 429", async () => {
    t = await createTestApp({ scale: 0.01, env: { RATE_LIMIT_TOKENS: "3" } });
    const admin = await t.agentFor("admin");
    const created = await admin.post("/api/admin/tokens").set("Origin", t.env.BETTER_AUTH_URL).send({ name: "Feed under test" });
    expect(created.status).toBe(201);
    const token = created.body.token as string;
    const feed = () => request(t!.app).post("/api/ingest/heats?dryRun=true").set("Authorization", `Bearer ${token}`).send([]);
    // The token-management call above used one of the three.
    expect([(await feed()).status, (await feed()).status]).toEqual([400, 400]);
    const over = await feed();
    expect(over.status).toBe(429);
    expect(over.body.error.code).toBe("too_many_requests");
  });

  it("when an API token is used anywhere but the feed, then 401", async () => {
    t = await createTestApp({ scale: 0.01 });
    const admin = await t.agentFor("admin");
    const token = (await admin.post("/api/admin/tokens").set("Origin", t.env.BETTER_AUTH_URL).send({ name: "Feed scope" })).body.token as string;
    expect((await request(t.app).post("/api/ingest/heats?dryRun=true").set("Authorization", `Bearer ${token}`).send([])).status).toBe(400);
    // A token opens nothing but the feed: every other route answers 401 to it.
    const routes = (t.app.locals.routes as AnyRoute[]).filter((r) => r.access !== "public" && r.access !== "ingest.token");
    for (const r of routes.filter((x) => x.method === "get" && !x.path.includes(":"))) {
      const res = await request(t.app).get(`/api${r.path}`).set("Authorization", `Bearer ${token}`);
      expect(res.status, r.path).toBe(401);
    }
  });
});

describe("sessions and passwords", () => {
  it("when someone signs in, then the session cookie is httpOnly and SameSite=Lax (and not Secure over plain http)", async () => {
    t = await createTestApp({ scale: 0.01 });
    const res = await signIn(t.app, t.env.BETTER_AUTH_URL, "inspector@demo.test", TEST_PASSWORD);
    const cookie = (res.headers["set-cookie"] as unknown as string[]).find((c) => c.startsWith("better-auth.session_token="))!;
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toMatch(/SameSite=Lax/i);
    expect(cookie).not.toMatch(/Secure/i);
  });

  it("when the app runs in production behind https, then the session cookie is Secure and __Secure- prefixed", async () => {
    t = await createTestApp({ scale: 0.01 });
    const prodAuth = createAuth({ db: t.db, secret: "p".repeat(40), baseURL: "https://strandsight.plant.example", secureCookies: true });
    const res = await prodAuth.handler(
      new Request("https://strandsight.plant.example/api/auth/sign-in/email", {
        method: "POST",
        headers: { "content-type": "application/json", origin: "https://strandsight.plant.example" },
        body: JSON.stringify({ email: "inspector@demo.test", password: TEST_PASSWORD }),
      }),
    );
    expect(res.status).toBe(200);
    const cookie = res.headers.getSetCookie().find((c) => c.includes("session_token="))!;
    expect(cookie.startsWith("__Secure-better-auth.session_token=")).toBe(true);
    expect(cookie).toMatch(/; Secure/i);
    expect(cookie).toMatch(/HttpOnly/i);
    expect(cookie).toMatch(/SameSite=Lax/i);
  });

  it("when an admin sets a password under 10 characters, then 400 names the rule and no user is written", async () => {
    t = await createTestApp({ scale: 0.01 });
    const admin = await t.agentFor("admin");
    const res = await admin.post("/api/admin/users").set("Origin", t.env.BETTER_AUTH_URL).send({ name: "Short Pw (demo)", email: "short@demo.test", roles: ["inspector"], password: "123456789" });
    expect(res.status).toBe(400);
    expect(JSON.stringify(res.body.error)).toMatch(/10 characters/);
    expect(t.db.$client.prepare("select count(*) from user where email = 'short@demo.test'").pluck().get()).toBe(0);
  });
});
