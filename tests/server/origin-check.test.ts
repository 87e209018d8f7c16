import { afterAll, beforeAll, describe, expect, it } from "vitest";
import request from "supertest";
import { createTestApp, TEST_PASSWORD, type TestApp } from "../helpers/test-app";

// better-auth switches its origin (CSRF) check off under NODE_ENV=test; this app turns it back on.
// Our own API routes have their own check (server/middleware/same-origin.ts), on in every mode.
let t: TestApp;
beforeAll(async () => {
  t = await createTestApp({ scale: 0.01, enforceOriginCheck: true });
});
afterAll(() => t?.close());

const users = () => t.db.$client.prepare("select count(*) from user").pluck().get() as number;

describe("origin check", () => {
  it("when a sign-out POST carries the session cookie but no Origin, then better-auth refuses it with 403", async () => {
    const agent = request.agent(t.app);
    const signIn = await agent
      .post("/api/auth/sign-in/email")
      .set("Origin", t.env.BETTER_AUTH_URL)
      .send({ email: "inspector@demo.test", password: TEST_PASSWORD });
    expect(signIn.status).toBe(200);
    const res = await agent.post("/api/auth/sign-out").send({});
    expect(res.status).toBe(403);
    expect(res.body.error).toBeDefined();
    // The session is still valid: the refused request changed nothing.
    expect((await agent.get("/api/me")).status).toBe(200);
  });

  it("when the Origin is not trusted, then sign-in is refused", async () => {
    const res = await request(t.app)
      .post("/api/auth/sign-in/email")
      .set("Origin", "http://evil.example")
      .send({ email: "inspector@demo.test", password: TEST_PASSWORD });
    expect(res.status).toBe(403);
  });

  it("when the Origin is the app's own, then sign-out works", async () => {
    const agent = request.agent(t.app);
    await agent.post("/api/auth/sign-in/email").set("Origin", t.env.BETTER_AUTH_URL).send({ email: "inspector@demo.test", password: TEST_PASSWORD });
    const res = await agent.post("/api/auth/sign-out").set("Origin", t.env.BETTER_AUTH_URL).send({});
    expect(res.status).toBe(200);
    expect((await agent.get("/api/me")).status).toBe(401);
  });

  it("when a write to our API comes with the admin's cookie from a foreign Origin, then 403 and nothing is written", async () => {
    const admin = await t.agentFor("admin");
    const before = users();
    const body = { name: "Evil", email: "evil@example.test", roles: ["admin"], password: "long-enough-pw" };
    const foreign = await admin.post("/api/admin/users").set("Origin", "http://evil.example").send(body);
    expect(foreign.status).toBe(403);
    expect(foreign.body.error.code).toBe("untrusted_origin");
    const none = await admin.post("/api/admin/users").send(body);
    expect(none.status).toBe(403);
    expect(users()).toBe(before);
    // The browser's own fetch metadata is accepted when no Origin is sent.
    const sameSite = await admin.post("/api/admin/users").set("Sec-Fetch-Site", "same-origin").send(body);
    expect(sameSite.status).toBe(201);
    expect(users()).toBe(before + 1);
  });

  it("when better-auth's own admin endpoints are called, then they do not exist (users are managed through /api/admin/users)", async () => {
    const admin = await t.agentFor("admin");
    const inspectorId = t.db.$client.prepare("select id from user where email = 'inspector@demo.test'").pluck().get();
    const adminId = t.db.$client.prepare("select id from user where email = 'admin@demo.test'").pluck().get();
    for (const [path, body] of [
      ["/api/auth/admin/impersonate-user", { userId: inspectorId }],
      ["/api/auth/admin/set-role", { userId: adminId, role: "inspector" }],
      ["/api/auth/admin/remove-user", { userId: inspectorId }],
      ["/api/auth/admin/set-user-password", { userId: inspectorId, newPassword: "another-password" }],
      ["/api/auth/admin/list-users", {}],
    ] as const) {
      const res = await admin.post(path).set("Origin", t.env.BETTER_AUTH_URL).send(body);
      expect(res.status, path).toBe(404);
      expect(res.body.error.code).toBe("not_found");
    }
    expect(t.db.$client.prepare("select role from user where id = ?").pluck().get(adminId)).toBe("admin");
    expect((await admin.get("/api/me")).body.email).toBe("admin@demo.test");
  });
});
