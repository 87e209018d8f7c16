import type { RequestHandler } from "express";
import { CAPABILITIES, can, type Capability } from "@shared/roles";
import { HttpError, said, sayIn } from "../lib/http-error";

/** Who may call a route: anyone, any signed-in user, or the roles holding a capability. */
export type Access = "public" | "signed-in" | "ingest.token" | Capability;

/**
 * What a person may call while the password they signed in with was set by an administrator (as
 * "METHOD path", the route's declared path): who they are, and the change itself. Public routes
 * stay open; every other route answers 403 `password_change_required` until they chose their own.
 */
export const OPEN_BEFORE_OWN_PASSWORD: ReadonlySet<string> = new Set(["GET /me", "POST /me/password"]);

const PASSWORD_CHANGE_SAID = said("auth.passwordChangeRequired");
/** The refusal's English words (the message; the answer is in the person's language). */
export const PASSWORD_CHANGE_REQUIRED = sayIn(PASSWORD_CHANGE_SAID, "en");

/**
 * The single gate every route passes: 401 when signed out, 403 when a first password must still be
 * changed, 403 when the role is not allowed.
 */
export function requireRole(access: Access): RequestHandler {
  return (req, _res, next) => {
    if (access === "public") return next();
    if (access === "ingest.token") {
      // Which kinds it may send is the feed route's check (assertTokenAllows in tokens.service).
      if (req.apiToken && req.apiToken.scopes.length > 0) return next();
      return next(new HttpError(401, "unauthenticated", said("auth.feedNeedsToken")));
    }
    if (!req.user) {
      return next(new HttpError(401, "unauthenticated", said("auth.signIn")));
    }
    // req.route is the route being dispatched: its declared path, however the URL was spelled.
    if (req.user.mustChangePassword && !OPEN_BEFORE_OWN_PASSWORD.has(`${req.method} ${req.route?.path ?? "?"}`)) {
      return next(new HttpError(403, "password_change_required", PASSWORD_CHANGE_SAID, { changeAt: "/change-password" }));
    }
    if (access === "signed-in" || can(req.user.roles, access)) return next();
    const who = { terms: CAPABILITIES[access].map((r) => `common:roles.${r}`) };
    next(new HttpError(403, "forbidden", said("auth.roleRefused", { who }), { capability: access }));
  };
}
