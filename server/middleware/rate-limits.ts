/**
 * Per-address request budgets (express-rate-limit) for the doors an attacker knocks on: sign-in and
 * password reset, the level-2 feed (API tokens) and token management. The address is the one
 * Express resolves (TRUST_PROXY), so behind a reverse proxy set TRUST_PROXY to its hop count.
 * Refusals use the app's error envelope, with the standard RateLimit and Retry-After headers.
 * The sign-in budget is applied by server/middleware/auth-door.ts on the path as a URL parser
 * normalises it, so `/api/auth/./sign-in/email` and the like spend the same budget.
 */
import type { RequestHandler } from "express";
import { rateLimit } from "express-rate-limit";
import { said, sayIn } from "../lib/http-error";
import { requestLanguage } from "../lib/i18n";

/** `what`: the refusal's key under errors.rateLimits (the budget's name in it). */
function limiter(windowMs: number, limit: number, what: "signIn" | "tokens"): RequestHandler {
  return rateLimit({
    windowMs,
    limit,
    standardHeaders: "draft-7",
    legacyHeaders: false,
    handler: (req, res, _next, options) => {
      const minutes = Math.max(1, Math.ceil(options.windowMs / 60_000));
      res.status(429).json({
        error: {
          code: "too_many_requests",
          message: sayIn(said(`rateLimits.${what}`, { count: minutes }), requestLanguage(req)),
        },
      });
    },
  });
}

export interface RateLimitSettings {
  /** Sign-in and password-reset requests per address per 15 minutes. */
  signIn: number;
  /** Feed and token requests per address (or token) per minute. */
  tokens: number;
}

export function rateLimits(s: RateLimitSettings) {
  return {
    signIn: limiter(15 * 60_000, s.signIn, "signIn"),
    tokens: limiter(60_000, s.tokens, "tokens"),
  };
}
