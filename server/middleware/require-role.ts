import type { RequestHandler } from "express";
import { CAPABILITIES, can, ROLE_LABELS, type Capability } from "@shared/roles";
import { HttpError } from "../lib/http-error";

/** Who may call a route: anyone, any signed-in user, or the roles holding a capability. */
export type Access = "public" | "signed-in" | "ingest.token" | Capability;

/** The single gate every route passes: 401 when signed out, 403 when the role is not allowed. */
export function requireRole(access: Access): RequestHandler {
  return (req, _res, next) => {
    if (access === "public") return next();
    if (access === "ingest.token") {
      // Which kinds it may send is the feed route's check (assertTokenAllows in tokens.service).
      if (req.apiToken && req.apiToken.scopes.length > 0) return next();
      return next(new HttpError(401, "unauthenticated", "This feed needs a valid API token (Authorization: Bearer …)."));
    }
    if (!req.user) {
      return next(new HttpError(401, "unauthenticated", "Please sign in to continue."));
    }
    if (access === "signed-in" || can(req.user.roles, access)) return next();
    const who = CAPABILITIES[access].map((r) => ROLE_LABELS[r]).join(", ");
    next(new HttpError(403, "forbidden", `Your role does not allow this. It is open to: ${who}.`, { capability: access }));
  };
}
