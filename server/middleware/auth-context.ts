import type { RequestHandler } from "express";
import { fromNodeHeaders } from "better-auth/node";
import { parseRoles } from "@shared/roles";
import type { Auth } from "../auth";

/** Resolves the session cookie once per request into `req.user` (null when signed out or deactivated). */
export function authContext(auth: Auth): RequestHandler {
  return async (req, _res, next) => {
    req.user = null;
    if (!req.headers.cookie) return next();
    const found = await auth.api.getSession({ headers: fromNodeHeaders(req.headers) });
    if (found && !found.user.banned) {
      req.user = {
        id: found.user.id,
        name: found.user.name,
        email: found.user.email,
        roles: parseRoles(found.user.role),
      };
    }
    next();
  };
}
