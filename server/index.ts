import type { IncomingMessage, Server, ServerResponse } from "node:http";
import path from "node:path";
import util from "node:util";
import { eq, sql } from "drizzle-orm";
import { createApp } from "./app";
import { createAuth } from "./auth";
import { assertWritable, openDatabase } from "./db/client";
import { runMigrations } from "./db/migrate";
import { heats, user } from "./db/schema";
import { EnvError, loadDotEnvFile, loadEnv, originPolicyOf } from "./env";
import { createLogger, type Logger } from "./lib/logger";
import { ALLOCATOR_ENV, allocatorSet } from "./lib/allocator";
import { describePathError, EXIT_CANNOT_START, StartupError } from "./lib/startup-error";
import { setupSso } from "./sso/setup";
import { setupMail } from "./mail/setup";
import { createNotifications } from "./mail/notifications";
import { DEMO_USERS } from "./seed/catalogue";
import { knownPhotoFiles } from "./services/defects.service";
import { cleanupOrphanFiles } from "./services/photos.service";
import { startReportCache } from "./services/report-cache";
import { snapshotFileFor } from "./services/report-cache-snapshot";
import { recoverRiskTraining, scoreUnscoredSlabsYielding } from "./services/risk/risk.service";
import { scheduleRiskDrift } from "./services/risk/drift.service";

/** When this process began: no file written before it can be an upload this process has in flight. */
const processStartedAt = Date.now();

/** Set by server/supervisor.ts: it waits for our "listening" message and for our exit code. */
const supervised = process.env.STRANDSIGHT_SUPERVISED === "1" && typeof process.send === "function";

let crashLogger: Logger | undefined;
/**
 * A crash is recorded with its cause before the process ends: on stderr whatever LOG_LEVEL says (a
 * crash must never go unrecorded; stderr is written synchronously), and as a JSON log line. The state
 * after an uncaught error is unknown, so the process exits at once; the supervisor or systemd
 * restarts it, and SQLite's WAL keeps every committed write.
 */
function crash(what: string, err: unknown): never {
  process.stderr.write(`\nStrandsight stopped on ${what}:\n${util.inspect(err, { depth: 8 })}\n`);
  try {
    crashLogger?.fatal({ err }, `stopped on ${what}`);
  } catch {
    // the stderr line above is the record
  }
  process.exit(1);
}
process.on("uncaughtException", (err, origin) => crash(origin === "unhandledRejection" ? "an unhandled promise rejection" : "an uncaught exception", err));
process.on("unhandledRejection", (reason) => crash("an unhandled promise rejection", reason));

/** Binds the port; a port in use or not allowed is a StartupError that says what to do. */
function listen(app: ReturnType<typeof createApp>, port: number, host: string): Promise<Server> {
  return new Promise((resolve, reject) => {
    const server = app.listen(port, host, (err?: Error) => {
      if (!err) return resolve(server);
      const code = (err as NodeJS.ErrnoException).code;
      if (code === "EADDRINUSE") {
        reject(
          new StartupError(
            `Strandsight cannot start: port ${port} on ${host} is already in use by another program (perhaps another copy of Strandsight).\n` +
              `Stop that program, or choose a free port for Strandsight with PORT, e.g. PORT=${port === 65535 ? 3000 : port + 1} in .env or in the environment.`,
            { cause: err },
          ),
        );
      } else if (code === "EACCES" || code === "EPERM") {
        reject(
          new StartupError(
            `Strandsight cannot start: this user may not listen on port ${port}${port < 1024 ? " (ports below 1024 need special rights)" : ""}.\n` +
              "Use a port above 1023, e.g. PORT=3000, and put a reverse proxy in front for ports 80 and 443.",
            { cause: err },
          ),
        );
      } else if (code === "EADDRNOTAVAIL" || code === "ENOTFOUND" || code === "EAI_AGAIN") {
        reject(
          new StartupError(
            `Strandsight cannot start: HOST=${host} is not an address of this machine (${code}). Use 0.0.0.0 for every interface, or one of this machine's addresses.`,
            { cause: err },
          ),
        );
      } else {
        reject(err);
      }
    });
  });
}

async function main() {
  // Before .env is read: the allocator reads its settings only from the environment the process started with.
  const allocatorFromStart = allocatorSet();
  loadDotEnvFile();
  const env = loadEnv();
  const logger = createLogger(env.LOG_LEVEL);
  crashLogger = logger;
  const db = openDatabase(env.DATABASE_FILE);
  runMigrations(db);
  // A database that can be read but not written would start and then fail every save: refuse now.
  assertWritable(db, env.DATABASE_FILE);

  // `npm run dev`: the browser talks to Vite on 5173, which forwards /api here.
  const devOrigins = env.NODE_ENV === "development" ? ["http://localhost:5173"] : [];
  // Mail: SMTP_URL, or the local fake SMTP server started here.
  const { mailer, fake } = await setupMail(db, env, logger);
  // Single sign-on: the plant's identity provider, or with OIDC_ISSUER=local the fake one started here.
  const { sso, fake: fakeIdp } = await setupSso(env);
  if (fakeIdp) console.log(`Local fake identity provider (invented people, any password) at ${fakeIdp.issuer}`);
  const notify = createNotifications({ db, mailer, baseUrl: env.BETTER_AUTH_URL, logger });
  const auth = createAuth({
    sendResetPassword: async ({ user: u, url }) => void notify.resetLink(u, url),
    db,
    secret: env.BETTER_AUTH_SECRET,
    baseURL: env.BETTER_AUTH_URL,
    origins: originPolicyOf(env, devOrigins),
    logger,
    secureCookies: env.NODE_ENV === "production",
    sso,
  });

  const empty =
    db
      .select({ n: sql<number>`count(*)` })
      .from(heats)
      .get()!.n === 0;
  const seed = env.SEED_DEMO ?? (empty && env.NODE_ENV !== "production");
  if (seed) {
    console.log("Seeding the invented demo plant…");
    // The seed (and its random generators and photo code) is loaded only when it runs.
    const { seedDemo } = await import("./seed/seed");
    const result = await seedDemo(db, auth, { password: env.DEMO_PASSWORD, uploadDir: path.resolve(env.UPLOAD_DIR), scale: env.SEED_SCALE });
    const p = result.production;
    const count = (n: number, what: string) => `${n.toLocaleString("en-GB")} ${n === 1 ? what.slice(0, -1) : what}`;
    console.log(
      p
        ? `Demo plant ready in ${result.seconds.toFixed(1)} s: ${count(p.heats + p.lastShifts.heats, "heats")}, ${count(p.slabs + p.lastShifts.slabs, "slabs")}, ` +
            `${count(p.defects + p.lastShifts.defects, "defects")}, ${count(p.claims, "claims")}, ${count(p.photos ?? 0, "photos")}, ${count(p.riskModels?.length ?? 0, "risk models")}.`
        : `Demo plant already there (checked in ${result.seconds.toFixed(1)} s).`,
    );
  }

  // A risk model left "training" by a stop says so; one that never finished is trained again by hand.
  recoverRiskTraining(db);
  const app = createApp({ db, auth, env, logger, trustedOrigins: devOrigins, mailer, notify });
  mailer.start(env.MAIL_POLL_MS);
  // Said in words with the address below; the JSON line is for debugging.
  logger.debug({ to: mailer.describe() }, "mail worker started");

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
  const server = await listen(app, env.PORT, env.HOST);
  // Started by hand (not npm start or the systemd unit): the same answers, more memory on a large plant.
  if (process.platform === "linux" && !allocatorFromStart) {
    logger.info(
      { set: ALLOCATOR_ENV },
      "started without the C allocator's setting npm start gives the server: a large plant's reports may hold ≈ 100–150 MB more memory (see the README)",
    );
  }
  const listenedAt = Date.now();
  // The reports' in-memory slab facts load after the server listens (sign-in, the yard and every
  // other request are answered meanwhile; reports say "warming up"): from the snapshot written at the
  // last stop when it is whole and current, else from the database (≈ 6 s per million slabs).
  // Slabs that arrived without being scored (a stop between an import and its scoring) are scored now.
  setImmediate(() => {
    scoreUnscoredSlabsYielding(db)
      .then((n) => n && logger.info({ scored: n }, "slabs scored by the active risk models at start"))
      .catch((err: unknown) => logger.error({ err }, "risk scoring at start failed"));
  });
  const reportCache = startReportCache(db, { snapshotFile: snapshotFileFor(path.resolve(env.DATABASE_FILE)), logger });
  // The first import thread starts once the report facts are in (or after 10 s), not on the first
  // import or feed call — and not while sign-in and the yard's first requests need the cores.
  const warmImports = () => void (app.locals.imports as { warm(): Promise<void> }).warm();
  const warmTimer = setTimeout(warmImports, 10_000);
  warmTimer.unref();
  void reportCache.whenReady().then(() => {
    clearTimeout(warmTimer);
    warmImports();
    // A failed load is logged by the cache itself (and tried again by the next report).
    const ready = reportCache.status();
    if (ready.state === "ready" && ready.slabs !== null) {
      console.log(
        `Reports ready: ${ready.slabs.toLocaleString("en-GB")} slabs loaded from ${ready.from === "snapshot" ? "the snapshot" : "the database"}, ${((Date.now() - listenedAt) / 1000).toFixed(1)} s after listening.`,
      );
    }
  });
  // Drift of the active risk models: checked once the report facts are in (not holding up the start),
  // then once a day; newly drifted months are e-mailed to the quality engineers through the queue.
  const stopDriftChecks = scheduleRiskDrift(db, { notify, logger, firstAfter: reportCache.whenReady() });
  console.log(`\nStrandsight is running: ${env.BETTER_AUTH_URL}`);
  console.log(`Mail: ${mailer.describe()}.`);
  if (demoUsers) {
    console.log(`Demo sign-ins (password: ${env.DEMO_PASSWORD === "strandsight-demo" ? "strandsight-demo" : "the DEMO_PASSWORD you set"}):`);
    for (const u of DEMO_USERS) console.log(`  ${u.email.padEnd(22)} ${u.roles.join(", ")}`);
  }

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
    stopDriftChecks();
    server.close(() => {
      void (async () => {
        await mailer.stop();
        await fake?.close();
        await fakeIdp?.close();
        // Imports in flight finished with their requests; the idle import threads go now.
        await (app.locals.imports as { close(): Promise<void> }).close();
        // After the last write: the next start reads the report cache back instead of rebuilding it.
        await reportCache.close();
        await (app.locals.reports as { close(): Promise<void> } | null)?.close();
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
  if (supervised) {
    // The supervisor gone (killed itself) would leave this process without anyone to restart or stop it.
    process.on("disconnect", () => shutdown("supervisor gone"));
    process.send!({ type: "listening", port: env.PORT });
  }
}

main().catch((err) => {
  // What a restart cannot fix gets a plain message and its own exit code, so nothing restarts it in a loop.
  const plain = err instanceof EnvError || err instanceof StartupError ? err.message : describePathError(err);
  if (plain) {
    console.error(plain);
    process.exit(EXIT_CANNOT_START);
  }
  crash("an error during start-up", err);
});
