import { createAuthMiddleware, APIError } from "better-auth/api";
import { createSignInGuard, LOCK_MS, MAX_FAILURES, type SignInGuard } from "./lib/sign-in-guard";
import { recordAudit } from "./services/audit.service";
import { betterAuth } from "better-auth";
import { drizzleAdapter } from "better-auth/adapters/drizzle";
import { admin } from "better-auth/plugins/admin";
import { createAccessControl } from "better-auth/plugins/access";
import { adminAc, defaultStatements } from "better-auth/plugins/admin/access";
import type { Db } from "./db/client";
import type { Logger } from "./lib/logger";
import { account, session, user, verification } from "./db/schema";

// better-auth's admin plugin needs an access-control role for every role name it may meet in the
// user.role column. Only `admin` gets the plugin's user-management permissions; the plant roles are
// enforced by our own require-role middleware (shared/roles.ts).
const ac = createAccessControl(defaultStatements);
const noAuthAdmin = { user: [], session: [] } as const;
const authRoles = {
  admin: ac.newRole(adminAc.statements),
  inspector: ac.newRole(noAuthAdmin),
  quality: ac.newRole(noAuthAdmin),
  process: ac.newRole(noAuthAdmin),
  claims: ac.newRole(noAuthAdmin),
};

export interface AuthOptions {
  db: Db;
  secret: string;
  baseURL: string;
  /** Extra origins allowed to call the API with a cookie (the Vite dev server, say). */
  trustedOrigins?: string[];
  /** Tests that check the CSRF/origin protection turn it back on under NODE_ENV=test. */
  enforceOriginCheck?: boolean;
  /** Delivers a password-reset link; the mail issue plugs the outbox in here. */
  sendResetPassword?: (data: { user: { email: string; name: string }; url: string; token: string }) => Promise<void>;
  /** better-auth's own messages go to the app's log. */
  logger?: Logger;
  /** Production: cookies always Secure (the URL is https there). */
  secureCookies?: boolean;
  /** better-auth's built-in rate limits (sign-in: a few attempts per 10 s per client); on in production. */
  rateLimit?: boolean;
  /** Counts wrong passwords per account and locks it for a while (server/lib/sign-in-guard.ts). */
  signInGuard?: SignInGuard;
}

/** Express puts the client address it trusts (TRUST_PROXY) in this header before better-auth runs. */
export const CLIENT_IP_HEADER = "x-strandsight-client-ip";

export function createAuth(opts: AuthOptions) {
  const guard = opts.signInGuard ?? createSignInGuard();
  return betterAuth({
    appName: "Strandsight",
    baseURL: opts.baseURL,
    secret: opts.secret,
    trustedOrigins: opts.trustedOrigins ?? [],
    logger: opts.logger
      ? { log: (level, message, ...args) => opts.logger![level]({ source: "better-auth", args }, message) }
      : undefined,
    // Keep the adapter's `transaction` option off: better-sqlite3 is synchronous (see STACK.md).
    database: drizzleAdapter(opts.db, {
      provider: "sqlite",
      schema: { user, session, account, verification },
    }),
    emailAndPassword: {
      enabled: true,
      // Users are created by an administrator; nobody signs themselves up.
      disableSignUp: true,
      minPasswordLength: 10,
      maxPasswordLength: 128,
      revokeSessionsOnPasswordReset: true,
      sendResetPassword: opts.sendResetPassword
        ? async ({ user: u, url, token }) => opts.sendResetPassword!({ user: u, url, token })
        : undefined,
    },
    rateLimit: { enabled: opts.rateLimit ?? process.env.NODE_ENV === "production", storage: "memory" },
    session: {
      // A shift plus margin; the cookie is refreshed while the user keeps working.
      expiresIn: 60 * 60 * 24 * 3,
      updateAge: 60 * 60 * 4,
    },
    advanced: {
      ...(opts.enforceOriginCheck ? { disableOriginCheck: false } : {}),
      useSecureCookies: opts.secureCookies ?? false,
      defaultCookieAttributes: { httpOnly: true, sameSite: "lax" },
      // Rate limits and session records key on the address Express resolved, never on a header a
      // client could forge (server/app.ts overwrites this one on every request).
      ipAddress: { ipAddressHeaders: [CLIENT_IP_HEADER] },
    },
    hooks: {
      before: createAuthMiddleware(async (ctx) => {
        if (ctx.path !== "/sign-in/email") return;
        const email = String((ctx.body as { email?: unknown } | undefined)?.email ?? "");
        const minutes = email ? guard.lockedFor(email) : 0;
        if (minutes > 0) {
          throw new APIError("TOO_MANY_REQUESTS", {
            code: "ACCOUNT_LOCKED",
            message: `Too many wrong passwords for this account: sign-in is locked for ${minutes} more minute${minutes === 1 ? "" : "s"}. Wait, or ask an administrator to reset the password.`,
          });
        }
      }),
      after: createAuthMiddleware(async (ctx) => {
        if (ctx.path !== "/sign-in/email") return;
        const email = String((ctx.body as { email?: unknown } | undefined)?.email ?? "");
        if (!email) return;
        const returned = ctx.context.returned;
        if (returned instanceof APIError) {
          if (returned.status === "UNAUTHORIZED" && guard.failed(email)) {
            recordAudit(opts.db, { actor: "sign-in guard", action: "user.sign_in.locked", entity: "user", entityId: email.toLowerCase(), after: { minutes: LOCK_MS / 60_000, failures: MAX_FAILURES } });
          }
        } else {
          guard.succeeded(email);
        }
      }),
    },
    plugins: [
      admin({
        ac,
        roles: authRoles,
        adminRoles: ["admin"],
        defaultRole: "inspector",
        bannedUserMessage: "This account has been deactivated. Ask an administrator to reactivate it.",
      }),
    ],
  });
}

export type Auth = ReturnType<typeof createAuth>;
