import { afterAll, beforeAll, describe, expect, it } from "vitest";
import request from "supertest";
import type { AnyRoute } from "../../server/lib/route";
import { createTestApp, type TestApp } from "../helpers/test-app";

let t: TestApp;
beforeAll(async () => {
  t = await createTestApp({ scale: 0.01 });
});
afterAll(() => t?.close());

describe("API basics", () => {
  it("when /api/health is called without sign-in, then it answers { status: ok }", async () => {
    const res = await request(t.app).get("/api/health");
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ status: "ok" });
  });

  it("when the sign-in page asks about the demo plant, then it lists the demo sign-ins with the published password itself, and never a password of the plant's own choosing", async () => {
    const res = await request(t.app).get("/api/about");
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ product: "Strandsight", demo: true, demoPassword: "strandsight-demo" });
    expect(res.body.demoAccounts.map((a: { email: string }) => a.email)).toContain("inspector@demo.test");
    const own = await createTestApp({ scale: 0.01, env: { DEMO_PASSWORD: "the-plants-own-secret" } });
    try {
      const body = (await request(own.app).get("/api/about")).body;
      expect(body.demoAccounts.length).toBeGreaterThan(0);
      expect(body.demoPassword).toBeNull();
      expect(JSON.stringify(body)).not.toContain("the-plants-own-secret");
    } finally {
      await own.close();
    }
  });

  it("when an unknown /api route is called, then it answers 404 JSON, not the client's HTML", async () => {
    const res = await request(t.app).get("/api/no-such-thing");
    expect(res.status).toBe(404);
    expect(res.headers["content-type"]).toMatch(/application\/json/);
    expect(res.body.error).toMatchObject({ code: "not_found" });
  });

  it("when a missing static asset is asked for, then 404 JSON without any server path in it", async () => {
    const res = await request(t.app).get("/assets/nope.js");
    expect(res.status).toBe(404);
    expect(res.body).toEqual({ error: { code: "not_found", message: "Not found." } });
  });

  it("when any page is served, then the security headers are set", async () => {
    const res = await request(t.app).get("/api/health");
    expect(res.headers["content-security-policy"]).toContain("frame-ancestors 'none'");
    expect(res.headers["x-content-type-options"]).toBe("nosniff");
    expect(res.headers["x-frame-options"]).toBe("SAMEORIGIN");
  });

  it("when signed in, then /api/me gives the user with roles as an array", async () => {
    const agent = await t.agentFor("process");
    const res = await agent.get("/api/me");
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ email: "process@demo.test", roles: ["process"] });
  });

  it("when /api/session is asked signed out, then 200 with me: null; signed in, the same user /api/me gives", async () => {
    const out = await request(t.app).get("/api/session");
    expect(out.status).toBe(200);
    expect(out.body).toEqual({ me: null });
    const agent = await t.agentFor("quality");
    const signed = await agent.get("/api/session");
    expect(signed.status).toBe(200);
    expect(signed.body.me).toEqual((await agent.get("/api/me")).body);
    expect(signed.body.me).toMatchObject({ email: "quality@demo.test", roles: ["quality"] });
  });

  it("when a session is close to its end, then the next request extends it and sends a fresh cookie", async () => {
    const agent = await t.agentFor("claims");
    const userId = t.db.$client.prepare("select id from user where email = 'claims@demo.test'").pluck().get();
    const soon = Date.now() + 60 * 60_000;
    t.db.$client.prepare("update session set expires_at = ? where user_id = ?").run(soon, userId);
    const res = await agent.get("/api/me");
    expect(res.status).toBe(200);
    expect(String(res.headers["set-cookie"])).toContain("better-auth.session_token=");
    const expires = t.db.$client.prepare("select max(expires_at) from session where user_id = ?").pluck().get(userId) as number;
    expect(expires).toBeGreaterThan(soon + 24 * 60 * 60_000);
  });

  it("when the JSON body is malformed, then the answer is 400 invalid_json in the error envelope", async () => {
    const agent = await t.agentFor("admin");
    const res = await agent.post("/api/admin/users").set("Origin", t.env.BETTER_AUTH_URL).set("content-type", "application/json").send("{ not json");
    expect(res.status).toBe(400);
    expect(res.body).toEqual({ error: { code: "invalid_json", message: "The request body is not valid JSON." } });
  });

  it("when sign-in fails, then better-auth's error comes back in the same envelope", async () => {
    const res = await request(t.app)
      .post("/api/auth/sign-in/email")
      .set("Origin", t.env.BETTER_AUTH_URL)
      .send({ email: "quality@demo.test", password: "wrong-password" });
    expect(res.status).toBe(401);
    expect(res.body.error.code).toBe("invalid_email_or_password");
    expect(typeof res.body.error.message).toBe("string");
  });

  it("when someone tries to sign themselves up, then it is refused and no user is written", async () => {
    const before = t.db.$client.prepare("select count(*) from user").pluck().get();
    const res = await request(t.app)
      .post("/api/auth/sign-up/email")
      .set("Origin", t.env.BETTER_AUTH_URL)
      .send({ email: "self@example.test", password: "long-enough-pw", name: "Self", role: "admin" });
    expect(res.status).toBeGreaterThanOrEqual(400);
    expect(res.status).toBeLessThan(500);
    expect(t.db.$client.prepare("select count(*) from user").pluck().get()).toBe(before);
  });

  it("when /api/openapi.json is read, then it is OpenAPI 3 and lists every route the app serves", async () => {
    const res = await request(t.app).get("/api/openapi.json");
    expect(res.status).toBe(200);
    expect(res.body.openapi).toMatch(/^3\./);
    const documented = new Set<string>();
    for (const [p, ops] of Object.entries(res.body.paths as Record<string, object>)) {
      for (const m of Object.keys(ops)) documented.add(`${m.toUpperCase()} ${p}`);
    }
    for (const r of t.app.locals.routes as AnyRoute[]) {
      const p = "/api" + r.path.replace(/:([A-Za-z0-9_]+)/g, "{$1}");
      expect(documented.has(`${r.method.toUpperCase()} ${p}`), `${r.method} ${p}`).toBe(true);
    }
    expect(res.body.components.schemas.Error).toBeDefined();
  });
});
