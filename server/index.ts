import type { IncomingMessage, ServerResponse } from "node:http";
import path from "node:path";
import { eq, sql } from "drizzle-orm";
import { createApp } from "./app";
import { createAuth } from "./auth";
import { openDatabase } from "./db/client";
import { runMigrations } from "./db/migrate";
import { heats, user } from "./db/schema";
import { EnvError, loadDotEnvFile, loadEnv } from "./env";
import { createLogger } from "./lib/logger";
import { setupMail } from "./mail/setup";
import { createNotifications } from "./mail/notifications";
import { DEMO_USERS } from "./seed/catalogue";
import { seedDemo } from "./seed/seed";
import { knownPhotoFiles } from "./services/defects.service";
import { cleanupOrphanFiles } from "./services/photos.service";
import { slabFacts } from "./services/report-cache";

/** When this process began: no file written before it can be an upload this process has in flight. */
const processStartedAt = Date.now();

async function main() {
  loadDotEnvFile();
  const env = loadEnv();
  const logger = createLogger(env.LOG_LEVEL);
  const db = openDatabase(env.DATABASE_FILE);
  runMigrations(db);

  // `npm run dev`: the browser talks to Vite on 5173, which forwards /api here.
  const devOrigins = env.NODE_ENV === "development" ? ["http://localhost:5173"] : [];
  // Mail: SMTP_URL, or the local fake SMTP server started here.
  const { mailer, fake } = await setupMail(db, env, logger);
  const notify = createNotifications({ db, mailer, baseUrl: env.BETTER_AUTH_URL, logger });
  const auth = createAuth({
    sendResetPassword: async ({ user: u, url }) => void notify.resetLink(u, url),
    db,
    secret: env.BETTER_AUTH_SECRET,
    baseURL: env.BETTER_AUTH_URL,
    trustedOrigins: devOrigins,
    logger,
    secureCookies: env.NODE_ENV === "production",
  });

  const empty = db.select({ n: sql<number>`count(*)` }).from(heats).get()!.n === 0;
  const seed = env.SEED_DEMO ?? (empty && env.NODE_ENV !== "production");
  if (seed) {
    console.log("Seeding the invented demo plant…");
    const result = await seedDemo(db, auth, { password: env.DEMO_PASSWORD, uploadDir: path.resolve(env.UPLOAD_DIR), scale: env.SEED_SCALE });
    console.log(`Demo plant ready in ${result.seconds.toFixed(1)} s`, result.production ?? "(already there)");
  }

  const app = createApp({ db, auth, env, logger, trustedOrigins: devOrigins, mailer, notify });
  mailer.start(env.MAIL_POLL_MS);
  logger.info({ to: mailer.describe() }, "mail worker started");
  // The reports' in-memory slab facts, built now rather than on the first report (≈ 6 s per million slabs).
  const tf = performance.now();
  const facts = slabFacts(db);
  logger.info({ slabs: facts.size, ms: Math.round(performance.now() - tf) }, "report cache ready");

  // Photo files without a row (a crash between writing the file and its row) are removed at start
  // — every file older than this process, which no upload of ours can still be writing — and every
  // hour after (files older than the grace period).
  const cleanup = async (writtenBefore?: number) => {
    const known = knownPhotoFiles(db);
    const removed = await cleanupOrphanFiles(path.resolve(env.UPLOAD_DIR), (f) => known.has(f), Date.now(), writtenBefore);
    if (removed.length) logger.info({ removed: removed.length }, "removed orphaned photo files");
  };
  void cleanup(processStartedAt).catch((err) => logger.error({ err }, "photo cleanup failed"));
  setInterval(() => void cleanup().catch((err) => logger.error({ err }, "photo cleanup failed")), 60 * 60_000).unref();
  const demoUsers = db.select({ id: user.id }).from(user).where(eq(user.email, DEMO_USERS[0].email)).get() !== undefined;
  const server = app.listen(env.PORT, env.HOST, () => {
    const url = env.BETTER_AUTH_URL;
    console.log(`\nStrandsight is running: ${url}`);
    if (demoUsers) {
      console.log(`Demo sign-ins (password: ${env.DEMO_PASSWORD === "strandsight-demo" ? "strandsight-demo" : "the DEMO_PASSWORD you set"}):`);
      for (const u of DEMO_USERS) console.log(`  ${u.email.padEnd(22)} ${u.roles.join(", ")}`);
    }
  });

  // On SIGTERM/SIGINT stop accepting connections, let requests in flight finish, then close the database.
  // Node keeps a connection alive after the response it was busy with and serves the next request on
  // it, so a client that keeps asking would hold the exit back: once stopping, every response says
  // "Connection: close" and connections are dropped as they fall idle.
  let stopping = false;
  const open = new Set<ServerResponse>();
  server.prependListener("request", (_req: IncomingMessage, res: ServerResponse) => {
    if (stopping) res.setHeader("Connection", "close");
    open.add(res);
    res.once("finish", () => stopping && setImmediate(() => server.closeIdleConnections()));
    res.once("close", () => open.delete(res));
  });
  const shutdown = (signal: string) => {
    if (stopping) return;
    stopping = true;
    logger.info({ signal }, "shutting down");
    for (const res of open) if (!res.headersSent) res.setHeader("Connection", "close");
    server.close(() => {
      void (async () => {
        await mailer.stop();
        await fake?.close();
        db.$client.close();
        process.exit(0);
      })();
    });
    server.closeIdleConnections();
    setTimeout(() => {
      logger.error("requests still open after 15 s; exiting");
      process.exit(1);
    }, 15_000).unref();
  };
  process.on("SIGTERM", () => shutdown("SIGTERM"));
  process.on("SIGINT", () => shutdown("SIGINT"));
}

main().catch((err) => {
  if (err instanceof EnvError) {
    console.error(err.message);
  } else {
    console.error(err);
  }
  process.exit(1);
});
