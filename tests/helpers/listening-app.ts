import type { AddressInfo } from "node:net";
import { createTestApp, TEST_PASSWORD, type TestApp } from "./test-app";

/**
 * A test app listening on a port of its own, for tests that need the answer as it travels (plain
 * node:http or fetch: compressed bodies, headers) rather than supertest's decoded one.
 */
export interface ListeningApp {
  t: TestApp;
  port: number;
  /** The session cookie of a demo user (`<role>@demo.test`), signed in over HTTP. */
  signIn(role: string): Promise<string>;
  close(): Promise<void>;
}

export async function listenTestApp(options: Parameters<typeof createTestApp>[0] = { scale: 0 }): Promise<ListeningApp> {
  const t = await createTestApp(options);
  const server = t.app.listen(0, "127.0.0.1");
  await new Promise<void>((resolve) => server.once("listening", () => resolve()));
  const port = (server.address() as AddressInfo).port;
  return {
    t,
    port,
    async signIn(role) {
      const res = await fetch(`http://127.0.0.1:${port}/api/auth/sign-in/email`, {
        method: "POST",
        headers: { "content-type": "application/json", origin: t.env.BETTER_AUTH_URL },
        body: JSON.stringify({ email: `${role}@demo.test`, password: TEST_PASSWORD }),
      });
      if (res.status !== 200) throw new Error(`${role} could not sign in: ${res.status}`);
      return res.headers
        .getSetCookie()
        .map((c) => c.split(";")[0])
        .join("; ");
    },
    async close() {
      await new Promise<void>((resolve) => server.close(() => resolve()));
      await t.close();
    },
  };
}
