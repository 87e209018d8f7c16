import fs from "node:fs";
import path from "node:path";
import compression from "compression";
import express from "express";
import expressStaticGzip from "express-static-gzip";
import helmet from "helmet";
import type { Auth } from "./auth";
import type { Db } from "./db/client";
import { originPolicyOf, type Env } from "./env";
import type { Logger } from "./lib/logger";
import { PROJECT_ROOT } from "./lib/paths";
import { can } from "@shared/roles";
import { screenFor } from "@shared/screens";
import { mountRoutes, type AnyRoute } from "./lib/route";
import { firstDataRequest, preloadLink } from "./lib/screen-data";
import { createScreenPages } from "./lib/screen-preload";
import { authContext } from "./middleware/auth-context";
import { authDoor } from "./middleware/auth-door";
import { apiNotFound, errorHandler } from "./middleware/error-handler";
import { sameOriginWrites } from "./middleware/same-origin";
import { freshPrecompressed } from "./middleware/fresh-precompressed";
import { rateLimits } from "./middleware/rate-limits";
import { buildOpenApiDocument, createOpenApiRegistry } from "./openapi";
import { adminUserRoutes } from "./routes/admin-users.routes";
import { signInRoutes } from "./routes/sign-in.routes";
import type { Deps } from "./routes/deps";
import { heatRoutes } from "./routes/heats.routes";
import { defectRoutes } from "./routes/defects.routes";
import { reportRoutes } from "./routes/reports.routes";
import { causeRoutes } from "./routes/causes.routes";
import { investigationRoutes } from "./routes/investigations.routes";
import { outboxRoutes } from "./routes/outbox.routes";
import { claimRoutes } from "./routes/claims.routes";
import type { DefectEvents } from "./services/defects.service";
import { createMailer, type Mailer } from "./mail/mailer";
import { queueOverdueReminders } from "./services/investigations.service";
import { createNotifications, type Notifications } from "./mail/notifications";
import { importRoutes } from "./routes/import.routes";
import { setupRoutes } from "./routes/setup.routes";
import { tokenRoutes } from "./routes/tokens.routes";
import { apiTokenContext } from "./middleware/api-token";
import { requireRole } from "./middleware/require-role";
import { createImportPool, type ImportPool } from "./import/import-pool";
import { createReportThread, type ReportThread } from "./services/report-thread";
import { riskRoutes } from "./routes/risk.routes";
import { riskDriftRoutes } from "./routes/risk-drift.routes";
import { operatingWindowRoutes } from "./routes/operating-windows.routes";
import { onSlabFactsChangedOn } from "./services/report-cache";
import { scoreOnArrival } from "./services/risk/risk.service";
import { IMPORT_KINDS, IMPORT_MAX_BYTES } from "@shared/api/imports";
import { assertTokenAllows } from "./services/tokens.service";
import { plantRoutes } from "./routes/plant.routes";
import { systemRoutes } from "./routes/system.routes";
import { yardRoutes } from "./routes/yard.routes";
import { requestLanguage } from "./lib/i18n";
import { say } from "./lib/words";

/** The built client; STRANDSIGHT_CLIENT_DIST points elsewhere (engineers building side by side on one machine). */
export const CLIENT_DIST = process.env.STRANDSIGHT_CLIENT_DIST ? path.resolve(process.env.STRANDSIGHT_CLIENT_DIST) : path.join(PROJECT_ROOT, "dist");

export interface AppOptions {
  db: Db;
  auth: Auth;
  env: Env;
  logger: Logger;
  /** Serve the built client from dist/ (on by default when it exists). */
  serveClient?: boolean;
  /** Origins besides BETTER_AUTH_URL's that may send writes with the session cookie (Vite's dev server). */
  trustedOrigins?: string[];
  events?: DefectEvents;
  /** The mail queue; without one, mail is queued in the database and not sent. */
  mailer?: Mailer;
  notify?: Notifications;
  /** The import threads; created here when not given. Close with `app.locals.imports.close()`. */
  imports?: ImportPool;
  /**
   * The report thread (the slab facts and the reports that read them); created here when not given,
   * for a database in a file. Close with `app.locals.reports.close()`.
   */
  reports?: ReportThread;
}

/**
 * better-auth answers errors as `{ code, message }`; rewrite them into the envelope every other route
 * uses, so the client and the plant's scripts read one error shape.
 */
async function withErrorEnvelope(response: Response): Promise<Response> {
  if (response.status < 400) return response;
  const headers = new Headers(response.headers);
  headers.set("content-type", "application/json; charset=utf-8");
  headers.delete("content-length");
  let code = response.status === 404 ? "not_found" : "auth_error";
  let message = response.status === 404 ? "There is no such sign-in route." : "The sign-in service refused the request.";
  const text = await response.text();
  try {
    const body = JSON.parse(text) as { code?: string; message?: string };
    if (body.code) code = body.code.toLowerCase();
    if (body.message) message = body.message;
    if (code === "invalid_origin") {
      message =
        "Signing in from this address is not allowed. Open Strandsight at the address your plant gave you, or ask IT to add this address to TRUSTED_ORIGINS.";
    }
  } catch {
    if (text && response.status !== 404) message = text.slice(0, 300);
  }
  return new Response(JSON.stringify({ error: { code, message } }), { status: response.status, headers });
}

export function collectRoutes(deps: Deps): AnyRoute[] {
  return [
    ...systemRoutes(deps),
    ...adminUserRoutes(deps),
    ...signInRoutes(deps),
    ...plantRoutes(deps),
    ...heatRoutes(deps),
    ...importRoutes(deps),
    ...tokenRoutes(deps),
    ...setupRoutes(deps),
    ...defectRoutes(deps),
    ...reportRoutes(deps),
    ...causeRoutes(deps),
    ...investigationRoutes(deps),
    ...outboxRoutes(deps),
    ...claimRoutes(deps),
    ...yardRoutes(deps),
    ...riskRoutes(deps),
    ...riskDriftRoutes(deps),
    ...operatingWindowRoutes(deps),
  ];
}

export function createApp(opts: AppOptions) {
  const { db, auth, env, logger } = opts;
  const mailer =
    opts.mailer ??
    createMailer({
      db,
      logger,
      smtpUrl: "smtp://127.0.0.1:9",
      from: env.MAIL_FROM,
      dir: path.join(path.resolve(env.UPLOAD_DIR), "mail"),
      describe: () => say("mail.none"),
    });
  const notify = opts.notify ?? createNotifications({ db, mailer, baseUrl: env.BETTER_AUTH_URL, logger });
  const events: DefectEvents = opts.events ?? { criticalDefect: (d) => void notify.criticalDefect(d) };
  const imports = opts.imports ?? createImportPool({ logger, heapMb: env.IMPORT_THREAD_HEAP_MB });
  // Linked to the connection: the fact reports and the change notices go to the thread (started on
  // first use). An in-memory database cannot be opened by a second thread: its reports run here.
  const reports =
    opts.reports ??
    (db.$client.memory
      ? null
      : createReportThread(db, {
          logger,
          screening: { threads: env.SCREENING_THREADS, sharedFrom: env.SCREENING_SHARED_FROM },
          columnsMb: env.REPORT_COLUMNS_MB,
          columnsDir: env.REPORT_COLUMNS_DIR,
        }));
  const deps: Deps = { db, auth, env, logger, events, mailer, notify, imports };
  // Slabs whose conditions arrive or change are scored by the active risk models at once.
  onSlabFactsChangedOn(db, scoreOnArrival(db, logger));
  // Each pass of the mail worker first queues reminders for actions that fell overdue (an indexed look-up).
  mailer.onPass((now) => void queueOverdueReminders(db, notify, now));
  const app = express();
  app.disable("x-powered-by");
  app.set("trust proxy", env.TRUST_PROXY);

  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: {
          "default-src": ["'self'"],
          "script-src": ["'self'"],
          "style-src": ["'self'", "'unsafe-inline'"],
          "img-src": ["'self'", "data:", "blob:"],
          "font-src": ["'self'", "data:"],
          "connect-src": ["'self'"],
          "frame-ancestors": ["'none'"],
          "form-action": ["'self'"],
          "object-src": ["'none'"],
          "base-uri": ["'self'"],
          // The app is often served over plain http on a plant intranet; do not force https here.
          "upgrade-insecure-requests": null,
        },
      },
      // HSTS only makes sense behind https; the reverse proxy sets it there.
      strictTransportSecurity: env.BETTER_AUTH_URL.startsWith("https://"),
      // Browsers honour COOP only on https (or localhost) and print a console error for it on a
      // tablet reaching the server over http by IP or host name: send it where it means something.
      crossOriginOpenerPolicy: env.BETTER_AUTH_URL.startsWith("https://"),
      crossOriginEmbedderPolicy: false,
    }),
  );

  // Reads of the API go out compressed when they are big enough to gain from it (report answers,
  // lists: tens of kB of JSON, a fifth of that after gzip on a tablet's Wi-Fi). Writes answer a few
  // hundred bytes and are left alone, so the write path does not pay for it. Answers that are
  // compressed already (the yard sync gzips itself, workbooks and photos are zipped or images) are
  // passed through untouched: the middleware skips an answer with a Content-Encoding of its own and
  // types that do not compress.
  const compressReads = compression({ threshold: 1024 });
  app.use("/api", (req, res, next) => (req.method === "GET" ? compressReads(req, res, next) : next()));

  const origins = originPolicyOf(env, opts.trustedOrigins);

  // better-auth's own endpoints: only those the product uses are open over HTTP, decided twice — on
  // the path as sent (server/middleware/auth-door.ts) and on the endpoint better-auth resolved
  // (HTTP_AUTH_ENDPOINTS in server/auth.ts). Its user-management endpoints (/api/auth/admin/*) would
  // bypass our role gate, audit log and last-admin rule: users are managed through /api/admin/users.
  // The door reads its own (small) body: mount it before express.json().
  const limits = rateLimits({ signIn: env.RATE_LIMIT_SIGNIN ?? (env.NODE_ENV === "production" ? 30 : 300), tokens: env.RATE_LIMIT_TOKENS });
  app.use("/api/auth", authDoor({ auth, baseUrl: env.BETTER_AUTH_URL, signInBudget: limits.signIn, toEnvelope: withErrorEnvelope }));
  app.use(["/api/ingest", "/api/admin/tokens"], limits.tokens);

  app.use("/api", sameOriginWrites(origins));
  // The level-2 feed: the token is checked before its body (up to 20 MB) is read, and the body goes
  // unparsed to an import thread, which parses and checks it off the main thread.
  app.use("/api/ingest", apiTokenContext(db), requireRole("ingest.token"));
  app.post("/api/ingest/:kind", (req, _res, next) => {
    // The token's scopes (what it may send) are checked before the body too; an unknown kind is left
    // to the route, which refuses it (400).
    if ((IMPORT_KINDS as readonly string[]).includes(req.params.kind!)) assertTokenAllows(req.apiToken, req.params.kind!);
    next();
  });
  app.use("/api/ingest", express.raw({ type: "application/json", limit: IMPORT_MAX_BYTES }));
  // Bodies are read after the role gate, route by route (server/lib/route.ts).
  app.use("/api", authContext(auth));

  const registry = createOpenApiRegistry();
  const api = express.Router();
  const routes = collectRoutes(deps);
  mountRoutes(api, registry, routes);
  // Built on the first request (≈ 0.3 s of work that the start should not wait for), then kept.
  let openApiDocument: ReturnType<typeof buildOpenApiDocument> | undefined;
  api.get("/openapi.json", (_req, res) => {
    res.json((openApiDocument ??= buildOpenApiDocument(registry, env.BETTER_AUTH_URL)));
  });
  app.use("/api", api);
  app.use("/api", apiNotFound());

  const serveClient = opts.serveClient ?? fs.existsSync(path.join(CLIENT_DIST, "index.html"));
  if (serveClient) {
    // The build leaves a .br and a .gz beside every text file (vite.config.ts): each is sent to the
    // browsers that accept it, with Vary: Accept-Encoding, compressed once at build and never per
    // request. Hashed assets never change under the same name; index.html must always be revalidated.
    // A copy is sent only while it matches its file (server/middleware/fresh-precompressed.ts).
    const precompressed = { enableBrotli: true, orderPreference: ["br", "gzip"] };
    app.use(
      "/assets",
      freshPrecompressed(path.join(CLIENT_DIST, "assets")),
      expressStaticGzip(path.join(CLIENT_DIST, "assets"), {
        ...precompressed,
        index: false,
        serveStatic: { immutable: true, maxAge: "365d", fallthrough: false },
      }),
    );
    const client = expressStaticGzip(CLIENT_DIST, {
      ...precompressed,
      index: false,
      serveStatic: {
        index: false,
        maxAge: "1h",
        // The service worker, its Workbox runtime, the app manifest and index.html keep their names
        // across versions: the browser must ask every time, or a tablet keeps an old version. The
        // file named here may be the .br or .gz sent in its place.
        setHeaders: (res, file) => {
          if (/^(sw\.js|workbox-[\w-]+\.js|manifest\.webmanifest|index\.html)(\.br|\.gz)?$/.test(path.basename(file)))
            res.setHeader("Cache-Control", "no-cache");
        },
      },
    });
    const fresh = freshPrecompressed(CLIENT_DIST);
    app.use(fresh, client);
    // Every other address is a screen of the app: index.html naming that screen's code (so the
    // browser fetches it beside the first script: server/lib/screen-preload.ts), compressed like the rest.
    const screens = createScreenPages(CLIENT_DIST);
    // Who asks decides what is named: a report's chart code for a role that reads reports, and the
    // screen's first data request (server/lib/screen-data.ts) for a role that may read it.
    app.get("/{*any}", authContext(auth), (req, res) => {
      const match = screenFor(req.path);
      const page = screens.pageFor(match, { mayReadReports: can(req.user?.roles, "reports.read"), language: requestLanguage(req) });
      const signedIn = req.user && !req.user.mustChangePassword ? req.user : null;
      const data = signedIn ? firstDataRequest(match.screen, new URLSearchParams(req.url.split("?")[1] ?? ""), signedIn.roles) : null;
      if (data) res.setHeader("Link", preloadLink(data));
      const encoding = req.headers["accept-encoding"] ? (req.acceptsEncodings("br") ? "br" : req.acceptsEncodings("gzip") ? "gzip" : null) : null;
      res.setHeader("Content-Type", "text/html; charset=UTF-8");
      res.setHeader("Cache-Control", "no-cache");
      res.vary("Accept-Encoding");
      res.vary("Cookie");
      // Which catalogues the page names follows the browser's languages for someone signed out.
      res.vary("Accept-Language");
      if (encoding) res.setHeader("Content-Encoding", encoding);
      // send() answers 304 to a browser holding this very page (ETag), and no body to HEAD.
      res.send(encoding === "br" ? page.br : encoding === "gzip" ? page.gzip : page.html);
    });
  }

  app.use(errorHandler(logger));
  app.locals.routes = routes;
  app.locals.mailer = mailer;
  app.locals.imports = imports;
  app.locals.reports = reports;
  return app;
}
