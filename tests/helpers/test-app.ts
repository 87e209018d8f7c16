import fs from "node:fs";
import http from "node:http";
import type { AddressInfo } from "node:net";
import os from "node:os";
import path from "node:path";
import request from "supertest";
import { createApp } from "../../server/app";
import { createAuth } from "../../server/auth";
import { openDatabase, type Db } from "../../server/db/client";
import { runMigrations } from "../../server/db/migrate";
import { loadEnv, originPolicyOf } from "../../server/env";
import { createLogger } from "../../server/lib/logger";
import { seedDemo } from "../../server/seed/seed";
import { setupMail } from "../../server/mail/setup";
import { setupSso } from "../../server/sso/setup";
import { createNotifications } from "../../server/mail/notifications";
import type { Role } from "../../shared/roles";

export const TEST_PASSWORD = "test-password-123";

export interface TestAppOptions {
  /** Seed the demo plant at this scale (1 = the full eight months); users are always seeded. */
  scale?: number;
  enforceOriginCheck?: boolean;
  rateLimit?: boolean;
  port?: number;
  /** Extra environment, e.g. TRUST_PROXY. */
  env?: Record<string, string>;
  /** false: only users and reference data, for tests that build their own plant. */
  production?: boolean;
  /** Start the local fake SMTP server (on a free port) and point the mail queue at it. */
  fakeSmtp?: boolean;
  /**
   * Writes a plant of the test's own making after the seed and before the app is built (so no
   * report cache has seen the database yet), e.g. `(db) => buildConfoundedPlant(db)` with
   * `production: false`.
   */
  beforeStart?: (db: Db) => void;
  /** Single sign-on through the local fake identity provider (server/sso/fake-idp.ts) on a free port. */
  fakeIdp?: { codeTtlSeconds?: number };
}

/**
 * A fresh SQLite file in a temp folder, the real migrations, the real app. Every test file gets its
 * own, so files run in parallel without sharing state.
 */
export async function createTestApp(opts: TestAppOptions = {}) {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "strandsight-test-"));
  const env = loadEnv({
    NODE_ENV: "test",
    DATABASE_FILE: path.join(dir, "app.db"),
    UPLOAD_DIR: path.join(dir, "uploads"),
    BETTER_AUTH_URL: `http://localhost:${opts.port ?? 3000}`,
    LOG_LEVEL: process.env.LOG_LEVEL ?? "silent",
    FAKE_SMTP_PORT: "0",
    FAKE_OIDC_PORT: "0",
    ...(opts.fakeIdp ? { OIDC_ISSUER: "local" } : {}),
    ...opts.env,
  });
  const db = openDatabase(env.DATABASE_FILE);
  runMigrations(db);
  const logger = createLogger(env.LOG_LEVEL);
  // The real mail path: the queue, nodemailer, and (when asked) the fake SMTP server on a free port.
  // The worker is not started: tests send what is due with `await mailer.processDue()`.
  const { mailer, fake } = await setupMail(db, env, logger, { startFake: opts.fakeSmtp ?? false });
  const notify = createNotifications({ db, mailer, baseUrl: env.BETTER_AUTH_URL, logger });
  const { sso, fake: fakeIdp } = await setupSso(env, { codeTtlSeconds: opts.fakeIdp?.codeTtlSeconds });
  const auth = createAuth({
    sso,
    db,
    secret: env.BETTER_AUTH_SECRET,
    baseURL: env.BETTER_AUTH_URL,
    origins: originPolicyOf(env),
    enforceOriginCheck: opts.enforceOriginCheck,
    rateLimit: opts.rateLimit,
    logger,
    sendResetPassword: async ({ user: u, url }) => void notify.resetLink(u, url),
  });
  const seed = await seedDemo(db, auth, { password: TEST_PASSWORD, scale: opts.scale ?? 0.02, uploadDir: env.UPLOAD_DIR, production: opts.production });
  opts.beforeStart?.(db);
  const app = createApp({ db, auth, env, logger, serveClient: true, mailer, notify });

  /** A supertest agent that keeps the cookie of the given demo user. */
  async function agentFor(role: Role) {
    const agent = request.agent(app);
    const res = await agent
      .post("/api/auth/sign-in/email")
      .set("Origin", env.BETTER_AUTH_URL)
      .send({ email: `${role}@demo.test`, password: TEST_PASSWORD });
    if (res.status !== 200) throw new Error(`sign-in as ${role} failed: ${res.status} ${JSON.stringify(res.body)}`);
    return agent;
  }

  async function close() {
    await (app.locals.imports as { close(): Promise<void> } | undefined)?.close();
    // The report thread (its own connection to the file) goes before the file is removed.
    await (app.locals.reports as { close(): Promise<void> } | null | undefined)?.close();
    await mailer.stop();
    await fake?.close();
    await fakeIdp?.close();
    db.$client.close();
    fs.rmSync(dir, { recursive: true, force: true });
  }

  return { app, db, auth, env, dir, seed, agentFor, close, mailer, fake, fakeIdp };
}

export type TestApp = Awaited<ReturnType<typeof createTestApp>>;

/** The same app on a real port, for the browser tests. */
export async function startTestServer(opts: TestAppOptions = {}) {
  // Listen first (the OS picks the port), then build the app with that port as BETTER_AUTH_URL (the
  // trusted origin): no other program can take the port in between.
  const server = http.createServer();
  await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
  const port = (server.address() as AddressInfo).port;
  let t: TestApp;
  try {
    t = await createTestApp({ ...opts, port });
  } catch (err) {
    server.close();
    throw err;
  }
  server.on("request", t.app);
  const baseUrl = `http://localhost:${port}`;
  return {
    ...t,
    baseUrl,
    async stop() {
      await new Promise<void>((resolve) => server.close(() => resolve()));
      server.closeAllConnections();
      await t.close();
    },
  };
}

export type { Db };
