import request from "supertest";
import { afterEach, describe, expect, it } from "vitest";
import type { AnyRoute } from "../../server/lib/route";
import { createAuth } from "../../server/auth";
import { createSignInGuard, LOCK_MS, MAX_FAILURES, WINDOW_MS } from "../../server/lib/sign-in-guard";
import { createTestApp, TEST_PASSWORD, type TestApp } from "../helpers/test-app";

let t: TestApp | undefined;
afterEach(async () => {
  await t?.close();
  t = undefined;
});
const signIn = (app: TestApp["app"], origin: string, email: string, password: string) =>
  request(app).post("/api/auth/sign-in/email").set("Origin", origin).send({ email, password });
/** Behind one trusted proxy (TRUST_PROXY=1): the client address is the one the proxy forwards. */
const signInFrom = (app: TestApp, address: string, email: string, password: string) =>
  request(app.app).post("/api/auth/sign-in/email").set("Origin", app.env.BETTER_AUTH_URL).set("X-Forwarded-For", address).send({ email, password });

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
    expect(last!.body.error).toMatchObject({
      code: "too_many_requests",
      message: "Too many sign-in attempts from this address. Wait 15 minutes and try again.",
    });
    expect(last!.headers["retry-after"]).toBeDefined();
    expect(last!.headers["ratelimit-policy"]).toBe("4;w=900");
    // The same budget covers the password-reset request.
    const reset = await request(t.app)
      .post("/api/auth/request-password-reset")
      .set("Origin", t.env.BETTER_AUTH_URL)
      .send({ email: "quality@demo.test", redirectTo: "/reset-password" });
    expect(reset.status).toBe(429);
  });

  it(`when one address gets ${MAX_FAILURES} wrong passwords for the sole administrator, then sign-in from that address is locked (audited with the address), while the administrator signs in from their own and other accounts are untouched`, async () => {
    t = await createTestApp({ scale: 0.01, env: { TRUST_PROXY: "1" } });
    const attacker = "203.0.113.66";
    const desk = "198.51.100.10";
    for (let i = 0; i < MAX_FAILURES; i++) expect((await signInFrom(t, attacker, "admin@demo.test", `guess-number-${i}`)).status).toBe(401);
    const locked = await signInFrom(t, attacker, "admin@demo.test", TEST_PASSWORD);
    expect(locked.status).toBe(429);
    expect(locked.body.error.code).toBe("account_locked");
    expect(locked.body.error.message).toBe(
      "Too many wrong passwords for this account from your computer's address: signing in from here is locked for 15 more minutes. Wait, choose a new password with “Forgot your password?”, or ask an administrator to unlock the account.",
    );
    // The real administrator, at another address, is not locked out.
    expect((await signInFrom(t, desk, "admin@demo.test", TEST_PASSWORD)).status).toBe(200);
    expect((await signInFrom(t, attacker, "process@demo.test", TEST_PASSWORD)).status).toBe(200);
    const audit = t.db.$client.prepare("select entity_id, after from audit_log where action = 'user.sign_in.locked'").all() as {
      entity_id: string;
      after: string;
    }[];
    expect(audit.map((a) => [a.entity_id, JSON.parse(a.after)])).toEqual([["admin@demo.test", { minutes: 15, failures: MAX_FAILURES, address: attacker }]]);
  });

  it("when a locked user completes a password reset, then the locks of every address are lifted and the new password works from there", async () => {
    t = await createTestApp({ scale: 0.01, env: { TRUST_PROXY: "1" } });
    for (const address of ["203.0.113.1", "203.0.113.2"]) {
      for (let i = 0; i < MAX_FAILURES; i++) await signInFrom(t, address, "quality@demo.test", `guess-${i}`);
      expect((await signInFrom(t, address, "quality@demo.test", TEST_PASSWORD)).status).toBe(429);
    }
    const id = t.db.$client.prepare("select id from user where email = 'quality@demo.test'").pluck().get() as string;
    expect(
      (
        await request(t.app)
          .post("/api/auth/request-password-reset")
          .set("Origin", t.env.BETTER_AUTH_URL)
          .send({ email: "quality@demo.test", redirectTo: "/reset-password" })
      ).status,
    ).toBe(200);
    const token = (t.db.$client.prepare("select identifier from verification where value = ?").pluck().get(id) as string).slice("reset-password:".length);
    expect(
      (await request(t.app).post("/api/auth/reset-password").set("Origin", t.env.BETTER_AUTH_URL).send({ token, newPassword: "quality-after-reset" })).status,
    ).toBe(200);
    for (const address of ["203.0.113.1", "203.0.113.2"]) expect((await signInFrom(t, address, "quality@demo.test", "quality-after-reset")).status).toBe(200);
    const after = JSON.parse(
      t.db.$client.prepare("select after from audit_log where action = 'user.password.changed' and entity_id = ?").pluck().get(id) as string,
    );
    expect(after).toMatchObject({ how: "reset", locksLifted: 2 });
  });

  it("when an administrator unlocks a locked account, then the Users list shows the lock until then, the unlock is audited, and the user signs in from that address again", async () => {
    t = await createTestApp({ scale: 0.01, env: { TRUST_PROXY: "1" } });
    const address = "203.0.113.77";
    for (let i = 0; i < MAX_FAILURES; i++) await signInFrom(t, address, "claims@demo.test", `guess-${i}`);
    expect((await signInFrom(t, address, "claims@demo.test", TEST_PASSWORD)).status).toBe(429);
    const admin = await t.agentFor("admin");
    const listed = (await admin.get("/api/admin/users")).body.users as { id: string; email: string; lockedFrom: { address: string; until: string }[] }[];
    const claims = listed.find((u) => u.email === "claims@demo.test")!;
    expect(claims.lockedFrom.map((l) => l.address)).toEqual([address]);
    expect(Date.parse(claims.lockedFrom[0]!.until) - Date.now()).toBeGreaterThan(14 * 60_000);
    expect(listed.filter((u) => u.email !== "claims@demo.test").every((u) => u.lockedFrom.length === 0)).toBe(true);

    const unlocked = await admin.post(`/api/admin/users/${claims.id}/unlock`).set("Origin", t.env.BETTER_AUTH_URL);
    expect(unlocked.status).toBe(200);
    expect(unlocked.body).toMatchObject({ email: "claims@demo.test", lockedFrom: [] });
    const audit = t.db.$client.prepare("select user_name, before, after from audit_log where action = 'user.unlock' and entity_id = ?").get(claims.id) as {
      user_name: string;
      before: string;
      after: string;
    };
    expect(audit.user_name).toBe("Adam Novak (demo administrator)");
    expect(JSON.parse(audit.before).lockedFrom.map((l: { address: string }) => l.address)).toEqual([address]);
    expect(JSON.parse(audit.after)).toEqual({ lockedFrom: [] });
    expect((await signInFrom(t, address, "claims@demo.test", TEST_PASSWORD)).status).toBe(200);

    const again = await admin.post(`/api/admin/users/${claims.id}/unlock`).set("Origin", t.env.BETTER_AUTH_URL);
    expect(again.status).toBe(409);
    expect(again.body.error.code).toBe("not_locked");
    expect(t.db.$client.prepare("select count(*) from audit_log where action = 'user.unlock'").pluck().get()).toBe(1);
    // Only an administrator may lift a lock.
    const quality = await t.agentFor("quality");
    expect((await quality.post(`/api/admin/users/${claims.id}/unlock`).set("Origin", t.env.BETTER_AUTH_URL)).status).toBe(403);
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
    const res = await admin
      .post("/api/admin/users")
      .set("Origin", t.env.BETTER_AUTH_URL)
      .send({ name: "Short Pw (demo)", email: "short@demo.test", roles: ["inspector"], password: "123456789" });
    expect(res.status).toBe(400);
    expect(JSON.stringify(res.body.error)).toMatch(/10 characters/);
    expect(t.db.$client.prepare("select count(*) from user where email = 'short@demo.test'").pluck().get()).toBe(0);
  });
});

describe("the sign-in guard's memory", () => {
  it("when wrong passwords arrive for many made-up e-mails, then the guard remembers at most its bound, and forgets them once the window has passed", () => {
    let clock = 1_000_000;
    const guard = createSignInGuard({ now: () => clock, maxEntries: 500 });
    for (let i = 0; i < 20_000; i++) {
      guard.failed(`nobody-${i}@example.test`, `10.0.${i % 256}.1`);
      if (i % 1000 === 0) clock += 1_000;
    }
    expect(guard.size().failures).toBe(500);
    clock += WINDOW_MS + 1;
    expect(guard.size()).toEqual({ failures: 0, locks: 0 });
  });

  it("when an account is locked from one address, then the lock ends after its time on its own, and a flood of other failures does not push it out early", () => {
    let clock = 5_000_000;
    const guard = createSignInGuard({ now: () => clock, maxEntries: 100 });
    for (let i = 0; i < MAX_FAILURES - 1; i++) expect(guard.failed("Admin@Demo.test", "203.0.113.5")).toBe(false);
    expect(guard.failed("admin@demo.test", "203.0.113.5")).toBe(true);
    expect(guard.lockedFor("admin@demo.test", "203.0.113.5")).toBe(15);
    expect(guard.lockedFor("admin@demo.test", "198.51.100.1")).toBe(0);
    for (let i = 0; i < 5_000; i++) guard.failed(`flood-${i}@example.test`, "203.0.113.5");
    clock += 10 * 60_000;
    expect(guard.lockedFor("admin@demo.test", "203.0.113.5")).toBe(5);
    clock += LOCK_MS - 10 * 60_000 + 1;
    expect(guard.lockedFor("admin@demo.test", "203.0.113.5")).toBe(0);
    expect(guard.locksOf("admin@demo.test")).toEqual([]);
  });

  it("when failures are older than the window, then they no longer count towards a lock", () => {
    let clock = 0;
    const guard = createSignInGuard({ now: () => clock });
    for (let i = 0; i < MAX_FAILURES - 1; i++) guard.failed("claims@demo.test", "10.1.1.1");
    clock += WINDOW_MS + 1;
    expect(guard.failed("claims@demo.test", "10.1.1.1")).toBe(false);
  });

  it("when an account is cleared (a reset, an administrator), then its locks from every address go, and other accounts keep theirs", () => {
    const guard = createSignInGuard();
    for (const [email, address] of [
      ["quality@demo.test", "10.0.0.1"],
      ["quality@demo.test", "10.0.0.2"],
      ["process@demo.test", "10.0.0.1"],
    ] as const) {
      for (let i = 0; i < MAX_FAILURES; i++) guard.failed(email, address);
    }
    expect(guard.locksOf("quality@demo.test").map((l) => l.address)).toEqual(["10.0.0.1", "10.0.0.2"]);
    expect(guard.clear("QUALITY@demo.test")).toBe(2);
    expect(guard.lockedFor("quality@demo.test", "10.0.0.1")).toBe(0);
    expect(guard.lockedFor("process@demo.test", "10.0.0.1")).toBe(15);
  });
});

describe("bodies are read only after access is checked", () => {
  it("when someone signed out sends a malformed or oversized JSON body to a write route, then 401: the body was never parsed", async () => {
    t = await createTestApp({ scale: 0.01 });
    const malformed = await request(t.app).post("/api/defects").set("Content-Type", "application/json").send('{"slab_id":');
    expect(malformed.status).toBe(401);
    expect(malformed.body.error.code).toBe("unauthenticated");
    const oversized = await request(t.app)
      .post("/api/investigations")
      .set("Content-Type", "application/json")
      .send(JSON.stringify({ pad: "x".repeat(2_100_000) }));
    expect(oversized.status).toBe(401);
    // A role without the route's capability gets 403, not a parse error, for the same bodies.
    const inspector = await t.agentFor("inspector");
    const forbidden = await inspector
      .post("/api/investigations")
      .set("Origin", t.env.BETTER_AUTH_URL)
      .set("Content-Type", "application/json")
      .send('{"title":');
    expect(forbidden.status).toBe(403);
    // Once allowed, the same malformed body is refused as such.
    const processEngineer = await t.agentFor("process");
    const malformedAllowed = await processEngineer
      .post("/api/investigations")
      .set("Origin", t.env.BETTER_AUTH_URL)
      .set("Content-Type", "application/json")
      .send('{"title":');
    expect(malformedAllowed.status).toBe(400);
    expect(malformedAllowed.body.error.code).toBe("invalid_json");
  });
});
