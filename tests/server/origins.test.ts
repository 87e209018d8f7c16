import { afterAll, beforeAll, describe, expect, it } from "vitest";
import request from "supertest";
import { EnvError, loadEnv } from "../../server/env";
import { OWN_ORIGIN_HEADER } from "../../server/lib/origins";
import { createTestApp, TEST_PASSWORD, type TestApp } from "../helpers/test-app";

/*
 * Tablets reach the server by IP address or host name, not by BETTER_AUTH_URL's. Sign-in and writes
 * are accepted from the server's own origin as the browser reached it (ACCEPT_REQUEST_HOST, on by
 * default outside production) and from TRUSTED_ORIGINS; every other origin stays refused. better-auth's
 * own check is switched back on here (it is off under NODE_ENV=test).
 */
const signIn = (t: TestApp, host: string, origin: string, extra: Record<string, string> = {}) =>
  request(t.app)
    .post("/api/auth/sign-in/email")
    .set("Host", host)
    .set("Origin", origin)
    .set(extra)
    .send({ email: "inspector@demo.test", password: TEST_PASSWORD });

describe("origins, with the request's own host accepted (the default outside production)", () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await createTestApp({ scale: 0.01, enforceOriginCheck: true, env: { TRUSTED_ORIGINS: "https://strandsight.plant.example" } });
  });
  afterAll(() => t?.close());

  it("when a tablet signs in through the server's IP address or host name, then better-auth accepts it and sets the session cookie", async () => {
    for (const host of ["10.20.0.15:3000", "caster-pc:3000", "127.0.0.1:3000", "[fd00::15]:3000"]) {
      const res = await signIn(t, host, `http://${host}`);
      expect(res.status, host).toBe(200);
      expect(String(res.headers["set-cookie"]), host).toMatch(/session_token=/);
    }
  });

  it("when a page of another site posts to the server (its Origin differs from the Host it reached), then sign-in is refused with 403 in words", async () => {
    for (const [host, origin] of [
      ["10.20.0.15:3000", "http://evil.example"],
      ["10.20.0.15:3000", "http://10.20.0.16:3000"],
      ["10.20.0.15:3000", "https://10.20.0.15:3000"],
      ["10.20.0.15:3000", "http://10.20.0.15:3001"],
    ]) {
      const res = await signIn(t, host!, origin!);
      expect(res.status, origin).toBe(403);
      expect(res.body.error.code, origin).toBe("invalid_origin");
      expect(res.body.error.message, origin).toMatch(/^Signing in from this address is not allowed\. .*TRUSTED_ORIGINS/);
    }
  });

  it("when a client sends its own value of the internal own-origin header, then it is overwritten by the Host the request reached and a foreign Origin stays refused", async () => {
    const res = await signIn(t, "10.20.0.15:3000", "http://evil.example", { [OWN_ORIGIN_HEADER]: "http://evil.example" });
    expect(res.status).toBe(403);
  });

  it("when an origin is listed in TRUSTED_ORIGINS, then it is accepted whatever host it posts to", async () => {
    const res = await signIn(t, "10.20.0.15:3000", "https://strandsight.plant.example");
    expect(res.status).toBe(200);
  });

  it("when a signed-in tablet writes to our API from its own host, then the write passes the origin check; the same cookie from a foreign page is refused", async () => {
    const agent = request.agent(t.app);
    const host = "10.20.0.15:3000";
    expect(
      (
        await agent
          .post("/api/auth/sign-in/email")
          .set("Host", host)
          .set("Origin", `http://${host}`)
          .send({ email: "admin@demo.test", password: TEST_PASSWORD })
      ).status,
    ).toBe(200);
    const users = () => t.db.$client.prepare("select count(*) from user").pluck().get() as number;
    const before = users();
    const body = { name: "Tablet Ten", email: "tablet10@example.test", roles: ["inspector"], password: "long-enough-pw" };
    const foreign = await agent.post("/api/admin/users").set("Host", host).set("Origin", "http://evil.example").send(body);
    expect(foreign.status).toBe(403);
    expect(foreign.body.error.code).toBe("untrusted_origin");
    expect(users()).toBe(before);
    const own = await agent.post("/api/admin/users").set("Host", host).set("Origin", `http://${host}`).send(body);
    expect(own.status).toBe(201);
    expect(users()).toBe(before + 1);
  });
});

describe("origins, with the request's own host not accepted (the default in production)", () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await createTestApp({ scale: 0.01, enforceOriginCheck: true, env: { ACCEPT_REQUEST_HOST: "false", TRUSTED_ORIGINS: "http://10.20.0.15:3000" } });
  });
  afterAll(() => t?.close());

  it("when a tablet signs in through an address that is not listed, then 403; through a listed one, or BETTER_AUTH_URL's, then 200", async () => {
    expect((await signIn(t, "caster-pc:3000", "http://caster-pc:3000")).status).toBe(403);
    expect((await signIn(t, "10.20.0.15:3000", "http://10.20.0.15:3000")).status).toBe(200);
    expect((await signIn(t, "localhost:3000", t.env.BETTER_AUTH_URL)).status).toBe(200);
  });
});

describe("the origin settings", () => {
  const base = { NODE_ENV: "test", DATABASE_FILE: ":memory:", BETTER_AUTH_SECRET: "s".repeat(40) };
  it("when TRUSTED_ORIGINS lists addresses (with spaces or a trailing slash), then each is kept as an origin; production does not accept the request's host unless told to", () => {
    const env = loadEnv({ ...base, TRUSTED_ORIGINS: " http://10.20.0.15:3000/ , https://strandsight.plant.example" });
    expect(env.TRUSTED_ORIGINS).toEqual(["http://10.20.0.15:3000", "https://strandsight.plant.example"]);
    expect(env.ACCEPT_REQUEST_HOST).toBe(true);
    const prod = { ...base, NODE_ENV: "production", BETTER_AUTH_URL: "https://strandsight.plant.example" };
    expect(loadEnv(prod).ACCEPT_REQUEST_HOST).toBe(false);
    expect(loadEnv({ ...prod, ACCEPT_REQUEST_HOST: "true" }).ACCEPT_REQUEST_HOST).toBe(true);
  });

  it("when TRUSTED_ORIGINS holds a path, a wildcard, another scheme or no address, then the start stops with a sentence naming the setting", () => {
    for (const [value, words] of [
      ["http://10.20.0.15:3000/app", /no path/],
      ["https://*.plant.example", /wildcards/],
      ["ftp://10.20.0.15", /http:\/\/ or https:\/\//],
      ["caster-pc", /not an address/],
    ] as const) {
      expect(() => loadEnv({ ...base, TRUSTED_ORIGINS: value }), value).toThrow(EnvError);
      expect(() => loadEnv({ ...base, TRUSTED_ORIGINS: value }), value).toThrow(words);
      expect(() => loadEnv({ ...base, TRUSTED_ORIGINS: value }), value).toThrow(/TRUSTED_ORIGINS/);
    }
  });
});
