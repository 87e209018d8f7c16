import fs from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";
import express from "express";
import { toNodeHandler } from "better-auth/node";
import type { Auth } from "./auth";
import type { Db } from "./db/client";
import type { Env } from "./env";
import type { Logger } from "./lib/logger";
import { mountRoutes, type AnyRoute } from "./lib/route";
import { authContext } from "./middleware/auth-context";
import { apiNotFound, errorHandler } from "./middleware/error-handler";
import { buildOpenApiDocument, createOpenApiRegistry } from "./openapi";
import { adminUserRoutes } from "./routes/admin-users.routes";
import type { Deps } from "./routes/deps";
import { plantRoutes } from "./routes/plant.routes";
import { systemRoutes } from "./routes/system.routes";

const here = path.dirname(fileURLToPath(import.meta.url));
export const CLIENT_DIST = path.resolve(here, "../dist");

export interface AppOptions {
  db: Db;
  auth: Auth;
  env: Env;
  logger: Logger;
  /** Serve the built client from dist/ (on by default when it exists). */
  serveClient?: boolean;
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
  } catch {
    if (text && response.status !== 404) message = text.slice(0, 300);
  }
  return new Response(JSON.stringify({ error: { code, message } }), { status: response.status, headers });
}

export function collectRoutes(deps: Deps): AnyRoute[] {
  return [...systemRoutes(deps), ...adminUserRoutes(deps), ...plantRoutes(deps)];
}

export function createApp(opts: AppOptions) {
  const { db, auth, env, logger } = opts;
  const deps: Deps = { db, auth, env, logger };
  const app = express();
  app.disable("x-powered-by");
  app.set("trust proxy", env.TRUST_PROXY);

  // better-auth reads the raw body itself: mount it before express.json().
  const authHandler = toNodeHandler(async (request: Request) => withErrorEnvelope(await auth.handler(request)));
  app.all("/api/auth/{*any}", authHandler);

  app.use("/api", express.json({ limit: "2mb" }));
  app.use("/api", authContext(auth));

  const registry = createOpenApiRegistry();
  const api = express.Router();
  const routes = collectRoutes(deps);
  mountRoutes(api, registry, routes);
  const openApiDocument = buildOpenApiDocument(registry, env.BETTER_AUTH_URL);
  api.get("/openapi.json", (_req, res) => {
    res.json(openApiDocument);
  });
  app.use("/api", api);
  app.use("/api", apiNotFound());

  const serveClient = opts.serveClient ?? fs.existsSync(path.join(CLIENT_DIST, "index.html"));
  if (serveClient) {
    // Hashed assets never change under the same name; index.html must always be revalidated.
    app.use(
      "/assets",
      express.static(path.join(CLIENT_DIST, "assets"), { immutable: true, maxAge: "365d", fallthrough: false }),
    );
    app.use(express.static(CLIENT_DIST, { index: false, maxAge: "1h" }));
    app.get("/{*any}", (_req, res) => {
      res.setHeader("Cache-Control", "no-cache");
      res.sendFile(path.join(CLIENT_DIST, "index.html"));
    });
  }

  app.use(errorHandler(logger));
  app.locals.routes = routes;
  return app;
}
