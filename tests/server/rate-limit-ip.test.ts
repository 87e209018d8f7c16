import { afterEach, describe, expect, it } from "vitest";
import request from "supertest";
import { createTestApp, type TestApp } from "../helpers/test-app";

// better-auth's sign-in limit (a few attempts per 10 s per client) must key on the client address
// Express trusts, never on an X-Forwarded-For header the client wrote itself.
let t: TestApp | undefined;
afterEach(() => t?.close());

async function wrongSignIns(app: TestApp["app"], origin: string, forwardedFor: (i: number) => string) {
  const statuses: number[] = [];
  for (let i = 0; i < 5; i++) {
    const res = await request(app)
      .post("/api/auth/sign-in/email")
      .set("Origin", origin)
      .set("X-Forwarded-For", forwardedFor(i))
      .send({ email: "quality@demo.test", password: "not-the-password" });
    statuses.push(res.status);
  }
  return statuses;
}

describe("sign-in rate limit and client address", () => {
  it("when clients connect directly (TRUST_PROXY=0), then a forged X-Forwarded-For does not escape the limit", async () => {
    t = await createTestApp({ scale: 0.01, rateLimit: true, env: { TRUST_PROXY: "0" } });
    const statuses = await wrongSignIns(t.app, t.env.BETTER_AUTH_URL, (i) => `203.0.113.${i + 1}`);
    expect(statuses.slice(0, 3)).toEqual([401, 401, 401]);
    expect(statuses.slice(3)).toEqual([429, 429]);
  });

  it("when behind one proxy (TRUST_PROXY=1), then each forwarded client has its own budget", async () => {
    t = await createTestApp({ scale: 0.01, rateLimit: true, env: { TRUST_PROXY: "1" } });
    const statuses = await wrongSignIns(t.app, t.env.BETTER_AUTH_URL, (i) => `198.51.100.${i + 1}`);
    expect(statuses).toEqual([401, 401, 401, 401, 401]);
  });
});
