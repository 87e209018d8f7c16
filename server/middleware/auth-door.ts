/**
 * The door to better-auth (/api/auth/*). Before the library sees a request:
 *  1. the per-address budget for sign-in and password reset, applied on the path as a URL parser
 *     normalises it (`/api/auth/./sign-in/email`, `/x/../sign-in/email` and `%2e` segments reach the
 *     same endpoint, so they spend the same budget);
 *  2. only the endpoints the product opens over HTTP (HTTP_AUTH_ENDPOINTS in server/auth.ts), spelled
 *     exactly as the client spells them: a dot segment, a percent-encoding, a doubled or trailing
 *     slash or a change of case answers 404 without the body being read. better-auth decides again
 *     on the endpoint it resolved (its before hook), so neither fence depends on the other;
 *  3. at most AUTH_BODY_LIMIT bytes of body, refused by the declared length before reading and by
 *     counting while reading (better-auth would buffer any size itself);
 *     A JSON body nested deeper than MAX_JSON_DEPTH is refused too: the library's schema error for
 *     thousands of nested arrays overflows the stack while it writes its message (a 500);
 *  4. better-auth gets a Request built here on BETTER_AUTH_URL (not on the Host header the client
 *     sent), with the client address Express resolved (TRUST_PROXY) in CLIENT_IP_HEADER.
 */
import express, { Router, type RequestHandler } from "express";
import { fromNodeHeaders } from "better-auth/node";
import { CLIENT_IP_HEADER, isOpenAuthPath, type Auth } from "../auth";
import { OWN_ORIGIN_HEADER, ownOriginOf } from "../lib/origins";
import type { Language } from "@shared/i18n/languages";
import { HttpError, notFound, said, sayIn } from "../lib/http-error";
import { requestLanguage } from "../lib/i18n";

export const AUTH_BODY_LIMIT = 64 * 1024;
/** No sign-in form nests at all; a little room for what a client library might add. */
export const MAX_JSON_DEPTH = 8;
const BASE = "/api/auth";
/** Endpoints under the per-address sign-in budget (POST). */
const BUDGETED = new Set([`${BASE}/sign-in/email`, `${BASE}/request-password-reset`, `${BASE}/reset-password`]);

/** The path as a URL parser resolves it (dot segments, %2e), lower-cased, without doubled or trailing slashes. */
export function normalisedPath(originalUrl: string): string {
  try {
    return new URL(originalUrl, "http://door.invalid").pathname
      .replace(/\/{2,}/g, "/")
      .replace(/\/+$/, "")
      .toLowerCase();
  } catch {
    return "";
  }
}

/**
 * better-auth's schema refusals read "[body.email] Invalid input: expected string, received object":
 * say it in words, and keep the library's text as the detail.
 */
async function inPlainWords(response: Response, language: Language): Promise<Response> {
  if (response.status !== 400) return response;
  const text = await response.text();
  let body: { error?: { code?: string; message?: string } } = {};
  try {
    body = JSON.parse(text);
  } catch {
    // not JSON: passed on as it came
  }
  const out =
    body.error?.code === "validation_error"
      ? JSON.stringify({
          error: {
            code: "validation_failed",
            message: sayIn(said("auth.signInUnreadable"), language),
            details: [{ path: "body", message: body.error.message ?? "" }],
          },
        })
      : text;
  const headers = new Headers(response.headers);
  headers.delete("content-length");
  return new Response(out, { status: response.status, headers });
}

/** Is any value in this parsed JSON nested deeper than `limit`? (Iterative: depth is what is being checked.) */
function deeperThan(value: unknown, limit: number): boolean {
  const stack: [unknown, number][] = [[value, 0]];
  while (stack.length > 0) {
    const [v, depth] = stack.pop()!;
    if (v === null || typeof v !== "object") continue;
    if (depth >= limit) return true;
    for (const child of Object.values(v)) stack.push([child, depth + 1]);
  }
  return false;
}

const tooLarge = () => new HttpError(413, "too_large", said("auth.signInTooLarge", { kb: AUTH_BODY_LIMIT / 1024 }));

export interface AuthDoorOptions {
  auth: Auth;
  /** BETTER_AUTH_URL: the origin the requests handed to better-auth are built on. */
  baseUrl: string;
  signInBudget: RequestHandler;
  /** Rewrites better-auth's error answers into the app's envelope. */
  toEnvelope: (response: Response) => Promise<Response>;
}

export function authDoor({ auth, baseUrl, signInBudget, toEnvelope }: AuthDoorOptions): Router {
  const door = Router();

  door.use((req, res, next) => (req.method === "POST" && BUDGETED.has(normalisedPath(req.originalUrl)) ? signInBudget(req, res, next) : next()));

  door.use((req, _res, next) => {
    const raw = req.originalUrl.split("?")[0] ?? "";
    const open = raw.startsWith(`${BASE}/`) && isOpenAuthPath(req.method, raw.slice(BASE.length));
    next(open ? undefined : notFound(said("auth.noSignInRoute")));
  });

  // body-parser's raw reader: checks Content-Length first, then counts while streaming.
  const readBody = express.raw({ type: () => true, limit: AUTH_BODY_LIMIT, inflate: false });
  door.use((req, res, next) => {
    const refuse = () => {
      // Do not let the client go on sending the rest of an oversized body on this connection.
      res.setHeader("Connection", "close");
      next(tooLarge());
    };
    if (Number(req.headers["content-length"] ?? 0) > AUTH_BODY_LIMIT) return refuse();
    readBody(req, res, (err?: unknown) => ((err as { type?: string } | undefined)?.type === "entity.too.large" ? refuse() : next(err)));
  });

  door.use((req, _res, next) => {
    if (!Buffer.isBuffer(req.body) || !/json/i.test(String(req.headers["content-type"] ?? ""))) return next();
    let parsed: unknown;
    try {
      parsed = JSON.parse(req.body.toString("utf8"));
    } catch {
      return next(); // better-auth answers malformed JSON itself (400)
    }
    if (!deeperThan(parsed, MAX_JSON_DEPTH)) return next();
    next(new HttpError(400, "validation_failed", said("auth.signInTooDeep")));
  });

  door.use(async (req, res) => {
    req.headers[CLIENT_IP_HEADER] = req.ip ?? req.socket.remoteAddress ?? "";
    const own = ownOriginOf(req);
    if (own) req.headers[OWN_ORIGIN_HEADER] = own;
    else delete req.headers[OWN_ORIGIN_HEADER];
    const headers = fromNodeHeaders(req.headers);
    headers.delete("content-length");
    headers.delete("transfer-encoding");
    const body = req.method !== "GET" && req.method !== "HEAD" && Buffer.isBuffer(req.body) && req.body.length > 0 ? new Uint8Array(req.body) : undefined;
    const response = await inPlainWords(
      await toEnvelope(await auth.handler(new Request(new URL(req.originalUrl, baseUrl), { method: req.method, headers, body }))),
      requestLanguage(req),
    );
    res.status(response.status);
    response.headers.forEach((value, name) => {
      if (name !== "set-cookie") res.setHeader(name, value);
    });
    const cookies = response.headers.getSetCookie();
    if (cookies.length > 0) res.setHeader("Set-Cookie", cookies);
    res.end(Buffer.from(await response.arrayBuffer()));
  });

  return door;
}
