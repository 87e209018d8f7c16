import type { RequestHandler } from "express";
import { fromNodeHeaders } from "better-auth/node";
import { parseRoles } from "@shared/roles";
import { languageOf } from "@shared/i18n/languages";
import type { Auth } from "../auth";

/**
 * Resolves the session cookie once per request into `req.user` (null when signed out or
 * deactivated). A Cookie header better-auth accepted within the last seconds is answered from the
 * session cache (server/lib/session-cache.ts), which re-reads the session and user rows each time;
 * anything else asks better-auth. When better-auth extends the session it sends a fresh cookie,
 * passed on here so an active user stays signed in.
 */
export function authContext(auth: Auth): RequestHandler {
  const sessions = auth.sessions;
  return async (req, res, next) => {
    req.user = null;
    const cookie = req.headers.cookie;
    if (!cookie) return next();
    const cached = sessions.lookup(cookie);
    if (cached) {
      req.user = cached;
      return next();
    }
    const { headers, response: found } = await auth.api.getSession({
      headers: fromNodeHeaders(req.headers),
      returnHeaders: true,
    });
    const cookies = headers.getSetCookie();
    if (cookies.length > 0) res.append("Set-Cookie", cookies);
    if (found && !found.user.banned) {
      req.user = {
        id: found.user.id,
        name: found.user.name,
        email: found.user.email,
        roles: parseRoles(found.user.role),
        mustChangePassword: found.user.mustChangePassword === true,
        language: languageOf(found.user.language),
      };
      sessions.remember(cookie, { sessionId: found.session.id, userId: found.user.id });
    }
    next();
  };
}
