import express, { type Request, type RequestHandler, type Response, type Router } from "express";
import type { OpenAPIRegistry, RouteConfig } from "@asteasolutions/zod-to-openapi";
import type { z } from "zod";
import { apiErrorSchema } from "@shared/api/common";
import { HttpError, said } from "./http-error";
import { requestLanguage } from "./i18n";
import { speakingIn } from "./words";
import { requireRole, type Access } from "../middleware/require-role";
import { takeUploadSlot } from "../middleware/uploads";

type Method = "get" | "post" | "put" | "patch" | "delete";
type AnyZod = z.ZodType;
type Out<T> = T extends AnyZod ? z.output<T> : Record<string, never>;

export interface ResponseSpec {
  description: string;
  schema?: AnyZod;
  /** For files and pages: the media type instead of a JSON schema. */
  contentType?: string;
}

export interface RouteContext<P, Q, B> {
  req: Request;
  res: Response;
  /** The signed-in user; non-null on every route that is not public. */
  user: NonNullable<Request["user"]>;
  params: P;
  query: Q;
  body: B;
}

export interface UploadSpec<P, Q> {
  middleware: RequestHandler;
  fields: Record<string, { type: "file" | "files" | "string"; description: string }>;
  /**
   * Runs before a byte of the body is read, with the parsed params and query and the user: every
   * refusal that does not need the files (no such record, not yours, already reviewed, full) is
   * answered here, so a refused upload costs neither memory nor disk. The handler checks again
   * when it writes, since things may change while the files arrive.
   */
  precheck?: (ctx: { req: Request; res: Response; user: NonNullable<Request["user"]>; params: P; query: Q }) => unknown | Promise<unknown>;
}

export interface RouteSpec<P extends AnyZod | undefined, Q extends AnyZod | undefined, B extends AnyZod | undefined> {
  method: Method;
  /** Express path, e.g. "/admin/users/:id" (relative to /api). */
  path: string;
  summary: string;
  tag: string;
  access: Access;
  params?: P;
  query?: Q;
  body?: B;
  /** Multipart uploads: the middleware that reads the form (diskUpload), and the OpenAPI description of the form. */
  upload?: UploadSpec<Out<P>, Out<Q>>;
  /** Status of a successful answer (the first key of `responses` when not given). */
  status?: number;
  responses: Record<number, ResponseSpec>;
  handler: (ctx: RouteContext<Out<P>, Out<Q>, Out<B>>) => unknown | Promise<unknown>;
}

export type AnyRoute = RouteSpec<AnyZod | undefined, AnyZod | undefined, AnyZod | undefined>;

/** Declares a route; the generics carry the zod types into the handler. */
export function defineRoute<P extends AnyZod | undefined = undefined, Q extends AnyZod | undefined = undefined, B extends AnyZod | undefined = undefined>(
  spec: RouteSpec<P, Q, B>,
): AnyRoute {
  return spec as unknown as AnyRoute;
}

const toOpenApiPath = (p: string) => "/api" + p.replace(/:([A-Za-z0-9_]+)/g, "{$1}");

function describe(registry: OpenAPIRegistry, spec: AnyRoute) {
  const responses: RouteConfig["responses"] = {};
  for (const [status, r] of Object.entries(spec.responses)) {
    responses[status] = r.schema
      ? { description: r.description, content: { "application/json": { schema: r.schema } } }
      : r.contentType
        ? { description: r.description, content: { [r.contentType]: { schema: { type: "string", format: "binary" } } } }
        : { description: r.description };
  }
  const errorStatuses: Record<string, string> = { "400": "The request is not valid." };
  if (spec.access !== "public") errorStatuses["401"] = "Not signed in.";
  if (spec.access !== "public" && spec.access !== "signed-in") errorStatuses["403"] = "The role does not allow this.";
  for (const [status, description] of Object.entries(errorStatuses)) {
    if (!responses[status]) responses[status] = { description, content: { "application/json": { schema: apiErrorSchema } } };
  }
  const request: RouteConfig["request"] = {};
  if (spec.params) request.params = spec.params as never;
  if (spec.query) request.query = spec.query as never;
  if (spec.body) request.body = { content: { "application/json": { schema: spec.body } }, required: true };
  if (spec.upload) {
    const properties: Record<string, unknown> = {};
    for (const [name, f] of Object.entries(spec.upload.fields)) {
      properties[name] =
        f.type === "files"
          ? { type: "array", items: { type: "string", format: "binary" }, description: f.description }
          : f.type === "file"
            ? { type: "string", format: "binary", description: f.description }
            : { type: "string", description: f.description };
    }
    request.body = { content: { "multipart/form-data": { schema: { type: "object", properties } as never } }, required: true };
  }
  const security = spec.access === "public" ? [] : spec.access === "ingest.token" ? [{ apiToken: [] }] : [{ session: [] }];
  registry.registerPath({
    method: spec.method,
    path: toOpenApiPath(spec.path),
    summary: spec.summary,
    description: accessText(spec.access),
    tags: [spec.tag],
    security,
    request,
    responses,
  });
}

function accessText(access: Access) {
  if (access === "public") return "Open without sign-in.";
  if (access === "signed-in") return "Any signed-in user.";
  if (access === "ingest.token") return "API token (Authorization: Bearer …).";
  return `Capability \`${access}\` (see shared/roles.ts).`;
}

/**
 * multer passes on busboy's own errors (a form that ends before its closing boundary, a header that
 * never ends, no boundary at all) as plain Errors with no status: they are the client's, so 400.
 * Its limit errors (code LIMIT_*) and anything with a status keep theirs.
 */
function readableUpload(middleware: RequestHandler): RequestHandler {
  return (req, res, next) =>
    middleware(req, res, (err?: unknown) => {
      const e = err as { code?: unknown; status?: unknown } | undefined;
      if (!err || err === "route" || err === "router" || typeof e?.status === "number" || String(e?.code ?? "").startsWith("LIMIT_")) return next(err);
      next(new HttpError(400, "upload_unreadable", said("uploads.unreadable")));
    });
}

/**
 * An upload's checks before its body is read: params and query (400), the route's pre-check
 * (404 / 403 / 409 …), then one of the user's upload slots (429). Node discards the unread body of
 * a refused request as it arrives, so refusals cost no memory however large the files.
 */
function beforeBody(spec: AnyRoute): RequestHandler {
  return async (req, res, next) => {
    const params = spec.params ? spec.params.parse(req.params) : req.params;
    const query = spec.query ? spec.query.parse(req.query) : req.query;
    if (req.user) {
      await spec.upload!.precheck?.({ req, res, user: req.user, params, query } as never);
      takeUploadSlot(req.user.id, res);
    }
    next();
  };
}

/** JSON bodies of the API: at most 2 MB (the level-2 feed reads its own, larger body: server/app.ts). */
const jsonBody = express.json({ limit: "2mb" });

/**
 * Mounts routes on a router behind the role gate, validates params, query and body with their zod
 * schemas (a failure becomes a 400 through the error middleware), and documents each in OpenAPI.
 */
export function mountRoutes(router: Router, registry: OpenAPIRegistry, routes: AnyRoute[], gate = requireRole) {
  for (const spec of routes) {
    describe(registry, spec);
    const successStatus = spec.status ?? Number(Object.keys(spec.responses)[0] ?? 200);
    const handlers: RequestHandler[] = [gate(spec.access)];
    // A body is read only once the caller may use the route: JSON here, a form by its upload middleware.
    if (spec.upload) handlers.push(beforeBody(spec), readableUpload(spec.upload.middleware));
    else handlers.push(jsonBody);
    handlers.push(async (req, res) => {
      const params = spec.params ? spec.params.parse(req.params) : req.params;
      const query = spec.query ? spec.query.parse(req.query) : req.query;
      const body = spec.body ? spec.body.parse(req.body ?? {}) : req.body;
      // What the handler writes in words (server/lib/words.ts) is in the requester's language.
      const result = await speakingIn(requestLanguage(req), () => spec.handler({ req, res, user: req.user!, params, query, body } as never));
      if (!res.headersSent && result !== undefined) res.status(successStatus).json(result);
      else if (!res.headersSent) res.status(successStatus === 200 ? 204 : successStatus).end();
    });
    router[spec.method](spec.path, ...handlers);
  }
}
