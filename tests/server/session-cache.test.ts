import { afterAll, beforeAll, describe, expect, it } from "vitest";
import request from "supertest";
import { createSessionCache } from "../../server/lib/session-cache";
import { createTestApp, type TestApp } from "../helpers/test-app";

/**
 * The session cache (server/lib/session-cache.ts) answers a Cookie header better-auth accepted a
 * moment ago without asking better-auth again. Each test first shows that the cookie IS in the
 * cache (so better-auth alone could not be what refuses it afterwards), then makes the change, then
 * sends the old cookie at once: no waiting for the 30 s the entries live.
 */
let t: TestApp;
let admin: request.Agent;
let n = 0;
beforeAll(async () => {
  t = await createTestApp({ scale: 0.005 });
  admin = await t.agentFor("admin");
});
afterAll(() => t?.close());

const O = () => t.env.BETTER_AUTH_URL;
const PASSWORD = "cache-test-password-1";
const FIRST_PASSWORD = "cache-first-password-0";

async function signIn(email: string, password = PASSWORD): Promise<string> {
  const res = await request(t.app).post("/api/auth/sign-in/email").set("Origin", O()).send({ email, password });
  expect(res.status).toBe(200);
  return (res.headers["set-cookie"] as unknown as string[]).map((c) => c.split(";")[0]).join("; ");
}

/** A user of the test's own (so no test changes another's), signed in, with the cookie already cached. */
async function cachedUser(roles: string[]) {
  const email = `cache-${++n}@example.test`;
  const name = `Cache Tester ${n}`;
  const created = await admin.post("/api/admin/users").set("Origin", O()).send({ name, email, roles, password: FIRST_PASSWORD });
  expect(created.status).toBe(201);
  // A first password set by an administrator opens nothing until the person has chosen their own.
  const first = await signIn(email, FIRST_PASSWORD);
  expect(
    (await request(t.app).post("/api/me/password").set("Origin", O()).set("Cookie", first).send({ currentPassword: FIRST_PASSWORD, newPassword: PASSWORD }))
      .status,
  ).toBe(200);
  const cookie = await signIn(email);
  const me = await request(t.app).get("/api/me").set("Cookie", cookie);
  expect(me.status).toBe(200);
  expect(t.auth.sessions.lookup(cookie)).toMatchObject({ id: created.body.id, email, roles });
  return { id: created.body.id as string, name, email, cookie };
}

const me = (cookie: string) => request(t.app).get("/api/me").set("Cookie", cookie);

function defectBody(key: string) {
  const slab = t.db.$client.prepare("select slab_id from slabs order by id limit 1").pluck().get() as string;
  return {
    slab_id: slab,
    type_code: "SLG",
    face: "inner",
    position_along_mm: 100,
    position_across_mm: 100,
    severity: 1,
    disposition: "accept",
    client_key: key,
  };
}

describe("session cache", () => {
  it("when the same cookie comes again, then it is answered from the cache with the user's current name, e-mail and roles", async () => {
    const u = await cachedUser(["inspector"]);
    const res = await me(u.cookie);
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ id: u.id, name: u.name, email: u.email, roles: ["inspector"] });
  });

  it("when the user signs out, then the very next request with the old cookie is refused", async () => {
    const u = await cachedUser(["inspector"]);
    const out = await request(t.app).post("/api/auth/sign-out").set("Origin", O()).set("Cookie", u.cookie).send({});
    expect(out.status).toBe(200);
    expect(t.auth.sessions.lookup(u.cookie)).toBeNull();
    const res = await me(u.cookie);
    expect(res.status).toBe(401);
    expect(res.body.error.code).toBe("unauthenticated");
  });

  it("when an administrator deactivates the user, then the very next request with the old cookie is refused, reads and writes alike", async () => {
    const u = await cachedUser(["inspector"]);
    const off = await admin.patch(`/api/admin/users/${u.id}`).set("Origin", O()).send({ active: false });
    expect(off.status).toBe(200);
    expect(off.body.active).toBe(false);
    expect((await me(u.cookie)).status).toBe(401);
    const post = await request(t.app).post("/api/defects").set("Origin", O()).set("Cookie", u.cookie).send(defectBody("cache-deactivated-1"));
    expect(post.status).toBe(401);
    expect(t.db.$client.prepare("select count(*) from defects where client_key = 'cache-deactivated-1'").pluck().get()).toBe(0);
    // Reactivated, the old session stays ended (deactivation deleted it): a new sign-in is needed.
    expect((await admin.patch(`/api/admin/users/${u.id}`).set("Origin", O()).send({ active: true })).status).toBe(200);
    expect((await me(u.cookie)).status).toBe(401);
    expect((await me(await signIn(u.email))).status).toBe(200);
  });

  it("when an administrator changes the user's roles, then the very next request with the old cookie has the new roles", async () => {
    const u = await cachedUser(["inspector"]);
    const ok = await request(t.app).post("/api/defects").set("Origin", O()).set("Cookie", u.cookie).send(defectBody("cache-role-1"));
    expect(ok.status).toBe(201);
    expect(
      (
        await admin
          .patch(`/api/admin/users/${u.id}`)
          .set("Origin", O())
          .send({ roles: ["claims"] })
      ).status,
    ).toBe(200);
    expect((await me(u.cookie)).body.roles).toEqual(["claims"]);
    const refused = await request(t.app).post("/api/defects").set("Origin", O()).set("Cookie", u.cookie).send(defectBody("cache-role-2"));
    expect(refused.status).toBe(403);
    expect(refused.body.error.code).toBe("forbidden");
    expect(t.db.$client.prepare("select count(*) from defects where client_key = 'cache-role-2'").pluck().get()).toBe(0);
  });

  it("when an administrator renames the user, then the very next entry they log carries the new name", async () => {
    const u = await cachedUser(["inspector"]);
    expect((await admin.patch(`/api/admin/users/${u.id}`).set("Origin", O()).send({ name: "Renamed Tester" })).status).toBe(200);
    const post = await request(t.app).post("/api/defects").set("Origin", O()).set("Cookie", u.cookie).send(defectBody("cache-rename-1"));
    expect(post.status).toBe(201);
    expect(post.body.defect.createdByName).toBe("Renamed Tester");
    expect((await me(u.cookie)).body.name).toBe("Renamed Tester");
  });

  it("when the user resets their password with a mailed link, then the very next request with the old cookie is refused", async () => {
    const u = await cachedUser(["process"]);
    expect(
      (await request(t.app).post("/api/auth/request-password-reset").set("Origin", O()).send({ email: u.email, redirectTo: "/reset-password" })).status,
    ).toBe(200);
    const tokens = t.db.$client
      .prepare("select identifier from verification where value = ? and identifier like 'reset-password:%' order by rowid desc")
      .pluck()
      .all(u.id) as string[];
    const reset = await request(t.app)
      .post("/api/auth/reset-password")
      .set("Origin", O())
      .send({ token: tokens[0]!.slice("reset-password:".length), newPassword: "cache-after-reset-2" });
    expect(reset.status).toBe(200);
    expect(t.auth.sessions.lookup(u.cookie)).toBeNull();
    expect((await me(u.cookie)).status).toBe(401);
    expect((await me(await signIn(u.email, "cache-after-reset-2"))).status).toBe(200);
  });

  it("when the password is changed with the other sessions ended, then the very next request with another device's old cookie is refused", async () => {
    const u = await cachedUser(["quality"]);
    const other = await signIn(u.email);
    expect((await me(other)).status).toBe(200);
    expect(t.auth.sessions.lookup(other)).not.toBeNull();
    await t.auth.api.changePassword({
      body: { currentPassword: PASSWORD, newPassword: "cache-changed-pw-3", revokeOtherSessions: true },
      headers: new Headers({ cookie: u.cookie }),
    });
    expect((await me(other)).status).toBe(401);
    expect((await me(u.cookie)).status).toBe(401);
  });

  it("when the session ends some other way (expired, or its row deleted), then the cached cookie is refused at once", async () => {
    const a = await cachedUser(["inspector"]);
    t.db.$client.prepare("update session set expires_at = ? where user_id = ?").run(Date.now() - 1000, a.id);
    expect((await me(a.cookie)).status).toBe(401);
    const b = await cachedUser(["inspector"]);
    t.db.$client.prepare("delete from session where user_id = ?").run(b.id);
    expect((await me(b.cookie)).status).toBe(401);
  });

  it("when a cookie is made up or tampered with, then it is refused and never enters the cache", async () => {
    const u = await cachedUser(["inspector"]);
    const before = t.auth.sessions.size;
    expect(u.cookie).not.toContain(";"); // one cookie: the session token
    const name = u.cookie.slice(0, u.cookie.indexOf("="));
    const value = u.cookie.slice(name.length + 1);
    const tampered = `${name}=${value.slice(0, 10)}${value[10] === "A" ? "B" : "A"}${value.slice(11)}`;
    for (const cookie of [tampered, `${name}=made-up-token.${"x".repeat(43)}=`, `${name}=${"y".repeat(5000)}`]) {
      expect((await me(cookie)).status).toBe(401);
      expect(t.auth.sessions.lookup(cookie)).toBeNull();
    }
    expect(t.auth.sessions.size).toBe(before);
  });

  it("when more sessions come than the cache holds, or a Cookie header is overlong, then it stays within its bounds and the rest go to better-auth", () => {
    const cache = createSessionCache(t.db.$client);
    for (let i = 0; i < 5_100; i++) cache.remember(`better-auth.session_token=k${i}`, { sessionId: `s${i}`, userId: "u" });
    expect(cache.size).toBe(5_000);
    cache.remember(`better-auth.session_token=${"z".repeat(4_100)}`, { sessionId: "long", userId: "u" });
    expect(cache.size).toBe(5_000);
    // None of these sessions exists in the database: a look-up finds no live session and drops the entry.
    expect(cache.lookup("better-auth.session_token=k5099")).toBeNull();
    expect(cache.size).toBe(4_999);
    expect(cache.forgetUser("u")).toBe(4_999);
    expect(cache.size).toBe(0);
  });
});
