import { afterAll, beforeAll, describe, expect, it } from "vitest";
import request from "supertest";
import { createTestApp, TEST_PASSWORD, type TestApp } from "../helpers/test-app";

// better-auth switches its origin (CSRF) check off under NODE_ENV=test; this app turns it back on.
let t: TestApp;
beforeAll(async () => {
  t = await createTestApp({ scale: 0.01, enforceOriginCheck: true });
});
afterAll(() => t?.close());

describe("origin check", () => {
  it("when a POST carries the session cookie but no Origin, then better-auth refuses it with 403", async () => {
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
});
