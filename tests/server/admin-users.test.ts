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
const count = (sql: string, ...args: unknown[]) => t.db.$client.prepare(sql).pluck().get(...args) as number;

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
    const audit = t.db.$client
      .prepare("select before, after from audit_log where action = 'user.update' and entity_id = ? order by id")
      .all(id) as { before: string; after: string }[];
    expect(audit.map((a) => [JSON.parse(a.before).active, JSON.parse(a.after).active])).toEqual([
      [true, false],
      [false, true],
    ]);
  });

  it("when roles are changed, then the next request sees the new roles", async () => {
    const agent = await t.agentFor("claims");
    const id = t.db.$client.prepare("select id from user where email = 'claims@demo.test'").pluck().get() as string;
    const res = await admin.patch(`/api/admin/users/${id}`).set("Origin", origin()).send({ roles: ["claims", "quality"] });
    expect(res.status).toBe(200);
    expect((await agent.get("/api/me")).body.roles).toEqual(["claims", "quality"]);
    await admin.patch(`/api/admin/users/${id}`).set("Origin", origin()).send({ roles: ["claims"] });
  });

  it("when the last active admin would lose the role, then 409 and the role stays", async () => {
    const id = t.db.$client.prepare("select id from user where email = 'admin@demo.test'").pluck().get() as string;
    const res = await admin.patch(`/api/admin/users/${id}`).set("Origin", origin()).send({ roles: ["quality"] });
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
