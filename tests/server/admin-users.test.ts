import { afterAll, beforeAll, describe, expect, it } from "vitest";
import request from "supertest";
import { createTestApp, TEST_PASSWORD, type TestApp } from "../helpers/test-app";

let t: TestApp;
let admin: request.Agent;
beforeAll(async () => {
  t = await createTestApp({ scale: 0.01 });
  admin = await t.agentFor("admin");
});
afterAll(() => t?.close());

const origin = () => t.env.BETTER_AUTH_URL;
const count = (sql: string, ...args: unknown[]) =>
  t.db.$client
    .prepare(sql)
    .pluck()
    .get(...args) as number;

describe("admin: users and roles", () => {
  it("when the admin lists users, then the five demo users come back with their roles", async () => {
    const res = await admin.get("/api/admin/users");
    expect(res.status).toBe(200);
    const byEmail = Object.fromEntries(res.body.users.map((u: { email: string; roles: string[] }) => [u.email, u.roles]));
    expect(byEmail).toMatchObject({
      "inspector@demo.test": ["inspector"],
      "quality@demo.test": ["quality"],
      "process@demo.test": ["process"],
      "claims@demo.test": ["claims"],
      "admin@demo.test": ["admin"],
    });
  });

  it("when the admin creates a user with two roles, then that user can sign in and holds both", async () => {
    const res = await admin
      .post("/api/admin/users")
      .set("Origin", origin())
      .send({ name: "Night Shift Lead", email: "Lead@Example.test", roles: ["quality", "process"], password: "night-shift-2026" });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ email: "lead@example.test", roles: ["quality", "process"], active: true });
    const agent = request.agent(t.app);
    const signIn = await agent.post("/api/auth/sign-in/email").set("Origin", origin()).send({ email: "lead@example.test", password: "night-shift-2026" });
    expect(signIn.status).toBe(200);
    expect((await agent.get("/api/me")).body.roles).toEqual(["quality", "process"]);
    expect(count("select count(*) from audit_log where action = 'user.create' and entity_id = ?", res.body.id)).toBe(1);
  });

  it("when the e-mail is taken, then 409 and nothing is written", async () => {
    const before = count("select count(*) from user");
    const res = await admin
      .post("/api/admin/users")
      .set("Origin", origin())
      .send({ name: "Again", email: "inspector@demo.test", roles: ["inspector"], password: "long-enough-pw" });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toContain("inspector@demo.test");
    expect(count("select count(*) from user")).toBe(before);
  });

  it("when the input is not valid, then 400 with one detail per field and nothing is written", async () => {
    const before = count("select count(*) from user");
    const res = await admin.post("/api/admin/users").set("Origin", origin()).send({ name: "", email: "not-an-email", roles: [], password: "short" });
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe("validation_failed");
    const paths = res.body.error.details.map((d: { path: string }) => d.path).sort();
    expect(paths).toEqual(["email", "name", "password", "roles"]);
    expect(count("select count(*) from user")).toBe(before);
  });

  it("when an unknown role is given, then 400", async () => {
    const res = await admin
      .post("/api/admin/users")
      .set("Origin", origin())
      .send({ name: "X", email: "x@example.test", roles: ["superuser"], password: "long-enough-pw" });
    expect(res.status).toBe(400);
  });

  it("when a user is deactivated, then their session ends at once and they cannot sign in; reactivation restores access", async () => {
    const inspector = await t.agentFor("inspector");
    const id = t.db.$client.prepare("select id from user where email = 'inspector@demo.test'").pluck().get() as string;
    const off = await admin.patch(`/api/admin/users/${id}`).set("Origin", origin()).send({ active: false });
    expect(off.status).toBe(200);
    expect(off.body.active).toBe(false);
    expect((await inspector.get("/api/me")).status).toBe(401);
    const again = await request(t.app).post("/api/auth/sign-in/email").set("Origin", origin()).send({ email: "inspector@demo.test", password: TEST_PASSWORD });
    expect(again.status).toBe(403);
    expect(again.body.error.code).toBe("banned_user");
    const on = await admin.patch(`/api/admin/users/${id}`).set("Origin", origin()).send({ active: true });
    expect(on.body.active).toBe(true);
    await t.agentFor("inspector");
    const audit = t.db.$client.prepare("select before, after from audit_log where action = 'user.update' and entity_id = ? order by id").all(id) as {
      before: string;
      after: string;
    }[];
    expect(audit.map((a) => [JSON.parse(a.before).active, JSON.parse(a.after).active])).toEqual([
      [true, false],
      [false, true],
    ]);
  });

  it("when roles are changed, then the next request sees the new roles", async () => {
    const agent = await t.agentFor("claims");
    const id = t.db.$client.prepare("select id from user where email = 'claims@demo.test'").pluck().get() as string;
    const res = await admin
      .patch(`/api/admin/users/${id}`)
      .set("Origin", origin())
      .send({ roles: ["claims", "quality"] });
    expect(res.status).toBe(200);
    expect((await agent.get("/api/me")).body.roles).toEqual(["claims", "quality"]);
    await admin
      .patch(`/api/admin/users/${id}`)
      .set("Origin", origin())
      .send({ roles: ["claims"] });
  });

  it("when the last active admin would lose the role, then 409 and the role stays", async () => {
    const id = t.db.$client.prepare("select id from user where email = 'admin@demo.test'").pluck().get() as string;
    const res = await admin
      .patch(`/api/admin/users/${id}`)
      .set("Origin", origin())
      .send({ roles: ["quality"] });
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe("last_admin");
    expect(t.db.$client.prepare("select role from user where id = ?").pluck().get(id)).toBe("admin");
  });

  it("when the user id does not exist, then 404", async () => {
    const res = await admin.patch("/api/admin/users/does-not-exist").set("Origin", origin()).send({ active: false });
    expect(res.status).toBe(404);
    expect(res.body.error.code).toBe("not_found");
  });
});

describe("admin: names", () => {
  it("when an admin gives a name with a line break, a tab, a bidirectional override or over 120 characters, then 400 names the field and the name stays", async () => {
    const id = t.db.$client.prepare("select id from user where email = 'process@demo.test'").pluck().get() as string;
    const before = t.db.$client.prepare("select name from user where id = ?").pluck().get(id);
    for (const name of ["Pia\nAdministrator", "Pia\tRossi", "Pia \u202Erotartsinimda", "Esc\u001b[31m", "N".repeat(121)]) {
      const res = await admin.patch(`/api/admin/users/${id}`).set("Origin", origin()).send({ name });
      expect(res.status, JSON.stringify(name)).toBe(400);
      expect(res.body.error.code).toBe("validation_failed");
      expect(res.body.error.details.map((d: { path: string }) => d.path)).toEqual(["name"]);
    }
    const created = await admin
      .post("/api/admin/users")
      .set("Origin", origin())
      .send({ name: "Two\nLines", email: "two-lines@example.test", roles: ["inspector"], password: "long-enough-pw" });
    expect(created.status).toBe(400);
    expect(t.db.$client.prepare("select name from user where id = ?").pluck().get(id)).toBe(before);
    expect(count("select count(*) from user where email = 'two-lines@example.test'")).toBe(0);
  });

  it("when an admin renames a user, then the rename is audited, and the history of what they did before still shows the name they had then", async () => {
    const claimsAgent = await t.agentFor("claims");
    const id = t.db.$client.prepare("select id from user where email = 'claims@demo.test'").pluck().get() as string;
    const oldName = t.db.$client.prepare("select name from user where id = ?").pluck().get(id) as string;
    const claim = await claimsAgent
      .post("/api/claims")
      .set("Origin", origin())
      .send({ claimNo: "CL-RENAME-1", customer: "Rename test customer", receivedOn: "2026-11-30", defectComplained: "Slivers" });
    expect(claim.status).toBe(201);

    const renamed = await admin.patch(`/api/admin/users/${id}`).set("Origin", origin()).send({ name: "Clara Mbeki-Stone (demo claims officer)" });
    expect(renamed.status).toBe(200);
    const audit = t.db.$client
      .prepare("select user_name, before, after from audit_log where action = 'user.update' and entity_id = ? order by id desc limit 1")
      .get(id) as { user_name: string; before: string; after: string };
    expect(audit.user_name).toBe("Adam Novak (demo administrator)");
    expect([JSON.parse(audit.before).name, JSON.parse(audit.after).name]).toEqual([oldName, "Clara Mbeki-Stone (demo claims officer)"]);

    expect((await claimsAgent.patch(`/api/claims/${claim.body.id}`).set("Origin", origin()).send({ status: "under_review" })).status).toBe(200);
    const history = (await claimsAgent.get(`/api/claims/${claim.body.id}`)).body.history as { by: string; action: string }[];
    expect(history.map((h) => [h.action, h.by])).toEqual([
      ["claim.create", oldName],
      ["claim.update", "Clara Mbeki-Stone (demo claims officer)"],
    ]);
    await admin.patch(`/api/admin/users/${id}`).set("Origin", origin()).send({ name: oldName });
  });
});
