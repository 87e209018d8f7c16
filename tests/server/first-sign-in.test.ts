import request from "supertest";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { AnyRoute } from "../../server/lib/route";
import { MAX_FAILURES } from "../../server/lib/sign-in-guard";
import { OPEN_BEFORE_OWN_PASSWORD, PASSWORD_CHANGE_REQUIRED } from "../../server/middleware/require-role";
import { createTestApp, TEST_PASSWORD, type TestApp } from "../helpers/test-app";

/**
 * How an administrator's new account gets its first sign-in (issue 16): one way per account — an
 * e-mailed invitation to choose a password, or a first password the person must change before
 * anything else opens — never both. The real app over supertest, a real SQLite file, and the mail
 * the real way: the queue, nodemailer and the local fake SMTP server (rows in mail_received).
 */
let t: TestApp;
let admin: request.Agent;
beforeAll(async () => {
  t = await createTestApp({ scale: 0.01, fakeSmtp: true });
  admin = await t.agentFor("admin");
  // The demo plant's own messages go out first, so what arrives below is ours.
  await t.mailer.processDue();
});
afterAll(() => t?.close());

const O = () => t.env.BETTER_AUTH_URL;
const one = (sql: string, ...a: unknown[]) =>
  t.db.$client
    .prepare(sql)
    .pluck()
    .get(...a);
const outboxTo = (email: string) =>
  t.db.$client.prepare("select kind, status, subject from email_outbox where to_addresses = ? order by id").all(email) as {
    kind: string;
    status: string;
    subject: string;
  }[];
const receivedBy = (email: string) =>
  t.db.$client.prepare("select subject, text_body from mail_received where envelope_to = ? order by id").all(email) as { subject: string; text_body: string }[];
const mustChange = (email: string) => one("select must_change_password from user where email = ?", email);
const listed = async (email: string) =>
  ((await admin.get("/api/admin/users")).body.users as { email: string; firstSignIn: string | null }[]).find((u) => u.email === email);

async function signIn(email: string, password: string) {
  const res = await request(t.app).post("/api/auth/sign-in/email").set("Origin", O()).send({ email, password });
  return { status: res.status, cookie: res.status === 200 ? (res.headers["set-cookie"] as unknown as string[]).map((c) => c.split(";")[0]).join("; ") : "" };
}
const as = (cookie: string) => ({
  get: (path: string) => request(t.app).get(path).set("Cookie", cookie),
  post: (path: string, body: object) => request(t.app).post(path).set("Origin", O()).set("Cookie", cookie).send(body),
});

describe("an account with a first password set by the administrator", () => {
  const email = "first.password@example.test";
  const FIRST = "handed-over-pw-1";
  let id: string;

  it("when the admin creates it with a first password, then 201 says so, the person must change it, and no mail at all is queued or sent", async () => {
    const res = await admin
      .post("/api/admin/users")
      .set("Origin", O())
      .send({ name: "Ravi First (demo)", email, roles: ["quality"], firstSignIn: "first_password", password: FIRST });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ email, roles: ["quality"], active: true, firstSignIn: "first_password", invitationQueued: null });
    id = res.body.id;
    expect(mustChange(email)).toBe(1);
    expect(one("select count(*) from account where user_id = ? and provider_id = 'credential' and password is not null", id)).toBe(1);
    const audit = JSON.parse(one("select after from audit_log where action = 'user.create' and entity_id = ?", id) as string);
    expect(audit).toEqual({ name: "Ravi First (demo)", email, roles: ["quality"], firstSignIn: "first_password" });
    expect((await listed(email))?.firstSignIn).toBe("first_password");

    expect(outboxTo(email)).toEqual([]);
    await t.mailer.processDue();
    expect(outboxTo(email)).toEqual([]);
    expect(receivedBy(email)).toEqual([]);
    expect(one("select count(*) from verification where value = ? and identifier like 'reset-password:%'", id)).toBe(0);
  });

  it("when the person signs in with it, then /api/me says a change is due and every other route answers 403 password_change_required, writes included", async () => {
    const { status, cookie } = await signIn(email, FIRST);
    expect(status).toBe(200);
    const me = await as(cookie).get("/api/me");
    expect(me.status).toBe(200);
    expect(me.body).toEqual({ id, name: "Ravi First (demo)", email, roles: ["quality"], mustChangePassword: true });

    const heats = await as(cookie).get("/api/heats?pageSize=5");
    expect(heats.status).toBe(403);
    expect(heats.body).toEqual({ error: { code: "password_change_required", message: PASSWORD_CHANGE_REQUIRED, details: { changeAt: "/change-password" } } });

    const slab = one("select slab_id from slabs order by id limit 1") as string;
    const post = await as(cookie).post("/api/defects", {
      slab_id: slab,
      type_code: "SLG",
      face: "inner",
      position_along_mm: 100,
      position_across_mm: 100,
      severity: 1,
      disposition: "accept",
      client_key: "first-pw-gate-1",
    });
    expect(post.status).toBe(403);
    expect(post.body.error.code).toBe("password_change_required");
    expect(one("select count(*) from defects where client_key = 'first-pw-gate-1'")).toBe(0);

    // Every route the app serves (params filled with a placeholder: the gate answers before they are read).
    const routes = t.app.locals.routes as AnyRoute[];
    const notRefused: string[] = [];
    for (const r of routes) {
      if (r.access === "public" || r.access === "ingest.token") continue;
      const key = `${r.method.toUpperCase()} ${r.path}`;
      if (OPEN_BEFORE_OWN_PASSWORD.has(key)) continue;
      const path = "/api" + r.path.replace(/:([A-Za-z]+)/g, "1");
      const res = await request(t.app)[r.method](path).set("Origin", O()).set("Cookie", cookie).send({});
      if (res.status !== 403 || res.body.error?.code !== "password_change_required") notRefused.push(`${key} → ${res.status} ${res.body.error?.code}`);
    }
    expect(notRefused).toEqual([]);
    expect([...OPEN_BEFORE_OWN_PASSWORD].sort()).toEqual(["GET /me", "POST /me/password"]);
    expect(routes.filter((r) => r.access !== "public" && r.access !== "ingest.token").length).toBeGreaterThan(60);
  });

  it("when the current password is wrong or the new one is the same, then 400 in words and the change is still due", async () => {
    const { cookie } = await signIn(email, FIRST);
    const wrong = await as(cookie).post("/api/me/password", { currentPassword: "not-the-first-pw", newPassword: "ravi-own-password-1" });
    expect(wrong.status).toBe(400);
    expect(wrong.body.error).toEqual({
      code: "wrong_current_password",
      message: "The current password is not right: type the password you signed in with.",
      details: [{ path: "currentPassword", message: "This is not your current password." }],
    });
    const same = await as(cookie).post("/api/me/password", { currentPassword: FIRST, newPassword: FIRST });
    expect(same.status).toBe(400);
    expect(same.body.error.code).toBe("validation_failed");
    expect(same.body.error.details).toEqual([
      expect.objectContaining({ path: "newPassword", message: "Choose a password different from the one you have now." }),
    ]);
    const short = await as(cookie).post("/api/me/password", { currentPassword: FIRST, newPassword: "short" });
    expect(short.status).toBe(400);
    expect(short.body.error.details.map((d: { path: string }) => d.path)).toEqual(["newPassword"]);
    expect(mustChange(email)).toBe(1);
    expect((await signIn(email, FIRST)).status).toBe(200);
  });

  it("when the person chooses their own, then the gate opens on this session, other sessions end, the first password stops working, and the change is audited", async () => {
    const other = await signIn(email, FIRST);
    const { cookie } = await signIn(email, FIRST);
    const res = await as(cookie).post("/api/me/password", { currentPassword: FIRST, newPassword: "ravi-own-password-1" });
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ changed: true });
    const fresh = (res.headers["set-cookie"] as unknown as string[]).map((c) => c.split(";")[0]).join("; ");
    expect(fresh).toMatch(/session_token=/);
    expect(mustChange(email)).toBe(0);

    const me = await as(fresh).get("/api/me");
    expect(me.body).toEqual({ id, name: "Ravi First (demo)", email, roles: ["quality"] });
    const heats = await as(fresh).get("/api/heats?pageSize=5");
    expect(heats.status).toBe(200);
    expect(heats.body.items.length).toBe(5);
    // Every session that held the first password has ended (the one used for the change included).
    expect((await as(other.cookie).get("/api/me")).status).toBe(401);
    expect((await as(cookie).get("/api/me")).status).toBe(401);

    expect((await signIn(email, FIRST)).status).toBe(401);
    expect((await signIn(email, "ravi-own-password-1")).status).toBe(200);
    const audit = JSON.parse(
      one("select after from audit_log where action = 'user.password.changed' and entity_id = ? order by id desc limit 1", id) as string,
    );
    expect(audit).toEqual({ how: "changed", resetLinksRevoked: 0, locksLifted: 0, firstPasswordReplaced: true });
    expect(one("select user_id from audit_log where action = 'user.password.changed' and entity_id = ? order by id desc limit 1", id)).toBe(id);
    expect((await listed(email))?.firstSignIn).toBeNull();
    // Still no mail for this account.
    await t.mailer.processDue();
    expect(outboxTo(email)).toEqual([]);
  });

  it("when a first password is given without naming the way, then it is the first-password way too (the request shape of before)", async () => {
    const res = await admin
      .post("/api/admin/users")
      .set("Origin", O())
      .send({ name: "Lea Shape (demo)", email: "shape@example.test", roles: ["inspector"], password: "handed-over-pw-2" });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ firstSignIn: "first_password", invitationQueued: null });
    expect(mustChange("shape@example.test")).toBe(1);
    expect(outboxTo("shape@example.test")).toEqual([]);
  });

  it("when the person uses a mailed reset link instead, then the password they chose there also ends the must-change", async () => {
    const created = await admin
      .post("/api/admin/users")
      .set("Origin", O())
      .send({ name: "Omar Reset (demo)", email: "reset.way@example.test", roles: ["claims"], firstSignIn: "first_password", password: "handed-over-pw-3" });
    expect(created.status).toBe(201);
    expect(
      (
        await request(t.app)
          .post("/api/auth/request-password-reset")
          .set("Origin", O())
          .send({ email: "reset.way@example.test", redirectTo: "/reset-password" })
      ).status,
    ).toBe(200);
    // Asked for by the person: a reset message, not an invitation.
    expect(outboxTo("reset.way@example.test").map((m) => m.kind)).toEqual(["password_reset"]);
    const token = (one("select identifier from verification where value = ? and identifier like 'reset-password:%'", created.body.id) as string).slice(
      "reset-password:".length,
    );
    expect((await request(t.app).post("/api/auth/reset-password").set("Origin", O()).send({ token, newPassword: "omar-own-password-1" })).status).toBe(200);
    expect(mustChange("reset.way@example.test")).toBe(0);
    const { cookie } = await signIn("reset.way@example.test", "omar-own-password-1");
    expect((await as(cookie).get("/api/claims")).status).toBe(200);
  });

  it(`when the current password is wrong ${MAX_FAILURES} times, then the change is locked from that address, as sign-in is, and the lock is audited`, async () => {
    await admin
      .post("/api/admin/users")
      .set("Origin", O())
      .send({ name: "Guess Lock (demo)", email: "guess.lock@example.test", roles: ["inspector"], password: "handed-over-pw-4" });
    const { cookie } = await signIn("guess.lock@example.test", "handed-over-pw-4");
    const statuses: number[] = [];
    for (let i = 0; i < MAX_FAILURES + 1; i++)
      statuses.push((await as(cookie).post("/api/me/password", { currentPassword: `guess-number-${i}`, newPassword: "guess-own-password-1" })).status);
    expect(statuses).toEqual([...Array(MAX_FAILURES).fill(400), 429]);
    const right = await as(cookie).post("/api/me/password", { currentPassword: "handed-over-pw-4", newPassword: "guess-own-password-1" });
    expect(right.status).toBe(429);
    expect(right.body.error.code).toBe("account_locked");
    expect(mustChange("guess.lock@example.test")).toBe(1);
    expect(one("select count(*) from audit_log where action = 'user.sign_in.locked' and entity_id = 'guess.lock@example.test'")).toBe(1);
  });
});

describe("an account with an invitation", () => {
  const email = "invited.person@example.test";
  let id: string;

  it("when the admin creates it with an invitation, then 201 says the invitation is queued, exactly one message goes out (the invitation), and there is no password yet", async () => {
    const res = await admin
      .post("/api/admin/users")
      .set("Origin", O())
      .send({ name: "Ines Invite (demo)", email, roles: ["process"], firstSignIn: "invitation" });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ email, roles: ["process"], firstSignIn: "invitation", invitationQueued: true });
    id = res.body.id;
    expect(mustChange(email)).toBe(0);
    expect(one("select count(*) from account where user_id = ?", id)).toBe(0);
    expect(JSON.parse(one("select after from audit_log where action = 'user.create' and entity_id = ?", id) as string)).toEqual({
      name: "Ines Invite (demo)",
      email,
      roles: ["process"],
      firstSignIn: "invitation",
    });
    expect((await listed(email))?.firstSignIn).toBe("invitation");
    // No password: nothing signs in before the person chose one.
    expect((await signIn(email, "any-guess-at-all")).status).toBe(401);

    await t.mailer.processDue();
    expect(outboxTo(email)).toEqual([{ kind: "invitation", status: "sent", subject: "Your Strandsight account" }]);
    const mails = receivedBy(email);
    expect(mails).toHaveLength(1);
    expect(mails[0]!.text_body).toContain("an administrator has created a Strandsight account for you");
  });

  it("when the person follows the invitation link and chooses a password, then they sign in with it and nothing is held back", async () => {
    const link = /(https?:\/\/\S+\/api\/auth\/reset-password\/\S+)/.exec(receivedBy(email)[0]!.text_body)![1]!;
    const url = new URL(link);
    const follow = await request(t.app).get(url.pathname + url.search);
    expect(follow.status).toBe(302);
    const token = new URL(follow.headers.location!, O()).searchParams.get("token")!;
    expect((await request(t.app).post("/api/auth/reset-password").set("Origin", O()).send({ token, newPassword: "ines-chose-this-1" })).status).toBe(200);
    expect(one("select count(*) from account where user_id = ? and provider_id = 'credential' and password is not null", id)).toBe(1);
    const { status, cookie } = await signIn(email, "ines-chose-this-1");
    expect(status).toBe(200);
    expect((await as(cookie).get("/api/me")).body).toEqual({ id, name: "Ines Invite (demo)", email, roles: ["process"] });
    expect((await as(cookie).get("/api/import/runs")).status).toBe(200);
    expect((await listed(email))?.firstSignIn).toBeNull();
    expect(JSON.parse(one("select after from audit_log where action = 'user.password.changed' and entity_id = ?", id) as string)).toEqual({
      how: "reset",
      resetLinksRevoked: 0,
      locksLifted: 0,
    });
  });

  it("when a password is given without naming the way, then the account is made the first-password way and no invitation is sent", async () => {
    const before = one("select count(*) from email_outbox where kind = 'invitation'");
    await admin
      .post("/api/admin/users")
      .set("Origin", O())
      .send({ name: "No Mail (demo)", email: "no.mail@example.test", roles: ["inspector"], password: "handed-over-pw-5" });
    expect(one("select count(*) from email_outbox where kind = 'invitation'")).toBe(before);
  });
});

describe("one way only", () => {
  it("when an invitation is asked for with a first password too, or a first password is asked for without one, then 400 names the password and nothing is written", async () => {
    const users = one("select count(*) from user");
    const mails = one("select count(*) from email_outbox");
    const both = await admin
      .post("/api/admin/users")
      .set("Origin", O())
      .send({ name: "Both Ways", email: "both@example.test", roles: ["inspector"], firstSignIn: "invitation", password: "handed-over-pw-6" });
    expect(both.status).toBe(400);
    expect(both.body.error.details).toEqual([
      expect.objectContaining({ path: "password", message: "With an invitation the person chooses their own password: leave the first password out." }),
    ]);
    const none = await admin
      .post("/api/admin/users")
      .set("Origin", O())
      .send({ name: "No Password", email: "none@example.test", roles: ["inspector"], firstSignIn: "first_password" });
    expect(none.status).toBe(400);
    expect(none.body.error.details).toEqual([
      expect.objectContaining({ path: "password", message: "Give the first password, or send an invitation instead." }),
    ]);
    const unknown = await admin
      .post("/api/admin/users")
      .set("Origin", O())
      .send({ name: "Odd Way", email: "odd@example.test", roles: ["inspector"], firstSignIn: "both" });
    expect(unknown.status).toBe(400);
    expect(unknown.body.error.details.map((d: { path: string }) => d.path)).toEqual(["firstSignIn"]);
    expect(one("select count(*) from user")).toBe(users);
    expect(one("select count(*) from email_outbox")).toBe(mails);
  });

  it("when the demo plant is seeded, then none of its people has a change due (they sign in with the demo password)", async () => {
    expect(one("select count(*) from user where must_change_password = 1 and email like '%@demo.test'")).toBe(0);
    const quality = await t.agentFor("quality");
    expect((await quality.get("/api/heats?pageSize=1")).status).toBe(200);
    expect((await signIn("quality@demo.test", TEST_PASSWORD)).status).toBe(200);
  });
});
