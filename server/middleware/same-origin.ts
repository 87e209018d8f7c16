import type { RequestHandler } from "express";
import { HttpError, said } from "../lib/http-error";
import { isTrustedOrigin, ownOriginOf, type OriginPolicy } from "../lib/origins";

const SAFE = new Set(["GET", "HEAD", "OPTIONS"]);

/**
 * CSRF guard for our own API: a write that carries the session cookie must come from one of the
 * app's origins (Origin header, or Sec-Fetch-Site: same-origin from the browser). Requests without
 * a cookie cannot act as anyone (API tokens travel in a header), so they pass.
 */
export function sameOriginWrites(policy: OriginPolicy): RequestHandler {
  return (req, _res, next) => {
    if (SAFE.has(req.method) || !req.headers.cookie) return next();
    if (req.path.startsWith("/auth/")) return next(); // better-auth checks its own
    const origin = req.headers.origin;
    if (origin ? isTrustedOrigin(policy, origin, ownOriginOf(req)) : req.headers["sec-fetch-site"] === "same-origin") return next();
    next(new HttpError(403, "untrusted_origin", said("auth.untrustedOrigin")));
  };
}
