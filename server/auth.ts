import { createAuthMiddleware, APIError } from "better-auth/api";
import { createSignInGuard, LOCK_MS, MAX_FAILURES, type SignInGuard } from "./lib/sign-in-guard";
import { recordAudit } from "./services/audit.service";
import { createSessionCache } from "./lib/session-cache";
import { clearMustChange, revokeResetLinks } from "./services/password-state";
import { betterAuth } from "better-auth";
import { drizzleAdapter } from "better-auth/adapters/drizzle";
import { admin } from "better-auth/plugins/admin";
import { genericOAuth } from "better-auth/plugins/generic-oauth";
import { and, eq } from "drizzle-orm";
import { parseRoles } from "@shared/roles";
import { SSO_PROVIDER_ID } from "@shared/api/sign-in";
import { languageFromBrowser } from "@shared/i18n/languages";
import { said, sayIn, type Said } from "./lib/http-error";
import { applyDirectoryRoles, getSignInSettings, groupsOfIdToken } from "./services/sign-in-settings.service";
import type { SsoConfig } from "./sso/setup";
import { createAccessControl } from "better-auth/plugins/access";
import { adminAc, defaultStatements } from "better-auth/plugins/admin/access";
import type { Db } from "./db/client";
import type { Logger } from "./lib/logger";
import { OWN_ORIGIN_HEADER, type OriginPolicy } from "./lib/origins";
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
  /** Origins allowed to sign in (server/lib/origins.ts); default: baseURL's only. */
  origins?: OriginPolicy;
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
  /** Counts wrong passwords per account and address and locks sign-in from there for a while (server/lib/sign-in-guard.ts). */
  signInGuard?: SignInGuard;
  /** Single sign-on through the plant's identity provider (server/sso/setup.ts); none: local passwords only. */
  sso?: SsoConfig | null;
}

/**
 * The better-auth endpoints reachable over HTTP: exactly what the client calls
 * (src/features/auth/api/session.ts) and the mailed reset link. Everything else better-auth and its
 * admin plugin serve (list-users, set-role, impersonate-user, update-user, change-email, delete-user,
 * get-session, list-sessions, …) answers 404 over HTTP, however its path is spelled: users are
 * managed through /api/admin/users only, with our role gate, audit log and last-admin rule. Our own
 * server code still calls the library directly (`auth.api.*`), which no HTTP client can reach.
 * `path` is the endpoint's declared path, as better-auth resolves it.
 */
export const HTTP_AUTH_ENDPOINTS = [
  { method: "POST", path: "/sign-in/email" },
  { method: "POST", path: "/sign-out" },
  { method: "POST", path: "/request-password-reset" },
  { method: "POST", path: "/reset-password" },
  { method: "GET", path: "/reset-password/:token" },
  // Single sign-on: the start (answers the provider's address to go to) and the provider's return.
  { method: "POST", path: "/sign-in/social" },
  { method: "GET", path: "/callback/:id" },
] as const;

const allowedOverHttp = (method: string, declaredPath: string) => HTTP_AUTH_ENDPOINTS.some((e) => e.method === method && e.path === declaredPath);

// A path parameter (the reset token) is what better-auth generates: letters and digits (- and _ allowed).
const OPEN_PATHS = HTTP_AUTH_ENDPOINTS.map((e) => ({
  method: e.method as string,
  re: new RegExp(`^${e.path.replace(/:[A-Za-z]+/g, "[A-Za-z0-9_-]{1,200}")}$`),
}));

/** Does this concrete path (below /api/auth, already canonical) name an endpoint open over HTTP? */
export function isOpenAuthPath(method: string, path: string): boolean {
  return OPEN_PATHS.some((e) => e.method === method && e.re.test(path));
}

/**
 * A sign-in refusal in the browser's language (no one is signed in yet): the languages of its
 * Accept-Language by preference, the first one we have, else English.
 */
function sayToBrowser(s: Said, request: Request | undefined): string {
  const preferred = (request?.headers.get("accept-language") ?? "")
    .split(",")
    .map((part, i) => {
      const [tag = "", ...params] = part.split(";").map((p) => p.trim());
      const q = Number(params.find((p) => p.startsWith("q="))?.slice(2) ?? 1);
      return { tag, q: Number.isFinite(q) ? q : 0, i };
    })
    .filter((l) => l.tag !== "" && l.tag !== "*" && l.q > 0)
    .sort((a, b) => b.q - a.q || a.i - b.i)
    .map((l) => l.tag);
  return sayIn(s, languageFromBrowser(preferred));
}

/**
 * Where the open endpoints may send the browser afterwards: a page of this app, given as a path
 * ("/reset-password"). better-auth checks these against its trusted origins too, but switches that
 * check off under NODE_ENV=test; this one holds in every mode, so no mailed link or sign-in can be
 * made to lead to another site.
 */
const RETURN_FIELDS: Record<string, { from: "query" | "body"; field: string }[]> = {
  "/reset-password/:token": [{ from: "query", field: "callbackURL" }],
  "/request-password-reset": [{ from: "body", field: "redirectTo" }],
  "/sign-in/email": [{ from: "body", field: "callbackURL" }],
  "/sign-in/social": [
    { from: "body", field: "callbackURL" },
    { from: "body", field: "errorCallbackURL" },
    { from: "body", field: "newUserCallbackURL" },
  ],
};
const isAppPath = (v: unknown) => typeof v === "string" && v.length <= 200 && /^\/(?![/\\])[^\s\\]*$/.test(v);

/** Express puts the client address it trusts (TRUST_PROXY) in this header before better-auth runs. */
export const CLIENT_IP_HEADER = "x-strandsight-client-ip";

export function createAuth(opts: AuthOptions) {
  const guard = opts.signInGuard ?? createSignInGuard();
  // Sessions recently accepted (server/lib/session-cache.ts); dropped here on sign-out and password
  // changes, and by the Users routes when an administrator changes a user.
  const sessions = createSessionCache(opts.db.$client);
  const addressOf = (ctx: { request?: Request; headers?: Headers }) =>
    ctx.request?.headers.get(CLIENT_IP_HEADER) || ctx.headers?.get(CLIENT_IP_HEADER) || "server";

  /**
   * After any password change: every reset or invitation link still out for this user stops working
   * (an older link must not set a password after a newer one did), every sign-in lock of the account
   * is lifted (the lock message tells people to reset), and the change is audited.
   */
  const afterPasswordChange = (u: { id: string; email: string }, how: "reset" | "changed" | "set by an administrator", actorId: string) => {
    const resetLinksRevoked = revokeResetLinks(opts.db, u.id);
    const locksLifted = guard.clear(u.email);
    // A password the person chose (their own change, or a mailed link) replaces a first password an
    // administrator set: the must-change gate opens (server/middleware/require-role.ts).
    const firstPasswordReplaced = how !== "set by an administrator" && clearMustChange(opts.db, u.id);
    sessions.forgetUser(u.id);
    recordAudit(opts.db, {
      userId: actorId,
      action: "user.password.changed",
      entity: "user",
      entityId: u.id,
      after: { how, resetLinksRevoked, locksLifted, ...(firstPasswordReplaced ? { firstPasswordReplaced } : {}) },
    });
  };

  const auth = betterAuth({
    appName: "Strandsight",
    baseURL: opts.baseURL,
    secret: opts.secret,
    // The listed origins, and with ACCEPT_REQUEST_HOST the origin the browser reached us at (our door
    // writes it in OWN_ORIGIN_HEADER from the Host header; a client's own value is overwritten).
    trustedOrigins: opts.origins?.acceptRequestHost
      ? (request) => {
          const own = request?.headers.get(OWN_ORIGIN_HEADER);
          return own ? [...opts.origins!.listed, own] : opts.origins!.listed;
        }
      : (opts.origins?.listed ?? []),
    logger: opts.logger ? { log: (level, message, ...args) => opts.logger![level]({ source: "better-auth", args }, message) } : undefined,
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
      sendResetPassword: opts.sendResetPassword ? async ({ user: u, url, token }) => opts.sendResetPassword!({ user: u, url, token }) : undefined,
      onPasswordReset: async ({ user: u }) => afterPasswordChange(u, "reset", u.id),
    },
    user: {
      // Read with every session (server/middleware/auth-context.ts); set only by our own code.
      additionalFields: {
        mustChangePassword: { type: "boolean", required: false, defaultValue: false, input: false },
        // The person's language (shared/i18n), set by PUT /api/me/language only.
        language: { type: "string", required: false, input: false },
      },
    },
    // A person the identity provider brings for the first time starts with no role: their roles come
    // from their groups right after (the callback hook below), audited from nothing.
    databaseHooks: {
      user: {
        create: {
          before: async (u, ctx) => (ctx?.path === "/callback/:id" ? { data: { ...u, role: "" } } : undefined),
        },
      },
    },
    // A sign-in through the identity provider that comes back refused before its own return address is
    // known (a changed or lost state) lands on our sign-in page, which says why in words.
    onAPIError: { errorURL: "/sign-in" },
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
        // Decided on the endpoint better-auth resolved (its declared path), not on how the URL was
        // spelled: /api/auth/./admin/…, /x/../admin/…, %2e segments all land here as "/admin/…".
        // `ctx.request` is set only for HTTP; our own `auth.api.*` calls carry none.
        if (ctx.request && !allowedOverHttp(ctx.request.method, ctx.path)) {
          throw new APIError("NOT_FOUND", { code: "NOT_FOUND", message: sayToBrowser(said("auth.noSignInRoute"), ctx.request) });
        }
        for (const { from, field } of ctx.request ? (RETURN_FIELDS[ctx.path] ?? []) : []) {
          const value = ((from === "query" ? ctx.query : ctx.body) as Record<string, unknown> | undefined)?.[field];
          if (value !== undefined && !isAppPath(value)) {
            throw new APIError("FORBIDDEN", { code: "INVALID_CALLBACK_URL", message: sayToBrowser(said("auth.callbackNotOurs"), ctx.request) });
          }
        }
        if (ctx.request && ctx.path === "/sign-in/social") {
          const provider = (ctx.body as { provider?: unknown } | undefined)?.provider;
          if (!opts.sso || provider !== SSO_PROVIDER_ID) {
            throw new APIError("NOT_FOUND", {
              code: "NO_IDENTITY_PROVIDER",
              message: sayToBrowser(said("auth.noIdentityProvider"), ctx.request),
            });
          }
          return;
        }
        if (ctx.path !== "/sign-in/email") return;
        const email = String((ctx.body as { email?: unknown } | undefined)?.email ?? "");
        // Once the plant signs in through its identity provider, the administrator may keep local
        // passwords for administrators only (the break-glass accounts).
        if (opts.sso && getSignInSettings(opts.db).localPasswords === "administrators") {
          const row = opts.db.select({ role: user.role }).from(user).where(eq(user.email, email.trim().toLowerCase())).get();
          if (!row || !parseRoles(row.role).includes("admin")) {
            throw new APIError("FORBIDDEN", {
              code: "PASSWORD_SIGN_IN_OFF",
              message: sayToBrowser(said("auth.passwordSignInOff", { name: opts.sso.name }), ctx.request),
            });
          }
        }
        const minutes = email ? guard.lockedFor(email, addressOf(ctx)) : 0;
        if (minutes > 0) {
          throw new APIError("TOO_MANY_REQUESTS", {
            code: "ACCOUNT_LOCKED",
            message: sayToBrowser(said("auth.signInLocked", { count: minutes }), ctx.request),
          });
        }
      }),
      after: createAuthMiddleware(async (ctx) => {
        const returned = ctx.context.returned;
        const ok = !(returned instanceof APIError) && !(returned instanceof Response && returned.status >= 400);
        // Back from the identity provider with a new session: the roles the person's groups map to.
        if (ctx.path === "/callback/:id" && opts.sso) {
          const signedIn = ctx.context.newSession?.user;
          if (!signedIn) return;
          const acct = opts.db
            .select({ idToken: account.idToken })
            .from(account)
            .where(and(eq(account.userId, signedIn.id), eq(account.providerId, SSO_PROVIDER_ID)))
            .get();
          const groups = groupsOfIdToken(acct?.idToken, opts.sso.groupClaim);
          applyDirectoryRoles(opts.db, signedIn.id, groups);
          sessions.forgetUser(signedIn.id);
          return;
        }
        if (ctx.path === "/sign-out") {
          sessions.forgetCookie(ctx.headers?.get("cookie"));
          return;
        }
        if (ctx.path === "/sign-in/email") {
          const email = String((ctx.body as { email?: unknown } | undefined)?.email ?? "");
          if (!email) return;
          const address = addressOf(ctx);
          if (returned instanceof APIError) {
            if (returned.status === "UNAUTHORIZED" && guard.failed(email, address)) {
              recordAudit(opts.db, {
                actor: "sign-in guard",
                action: "user.sign_in.locked",
                entity: "user",
                entityId: email.toLowerCase(),
                after: { minutes: LOCK_MS / 60_000, failures: MAX_FAILURES, address },
              });
            }
          } else {
            guard.succeeded(email, address);
          }
          return;
        }
        // Password changes other than a reset (onPasswordReset covers that). Neither is open over
        // HTTP; this covers server-side calls.
        if (!ok) return;
        if (ctx.path === "/change-password") {
          const u = (returned as { user?: { id: string; email: string } } | undefined)?.user;
          if (u) afterPasswordChange(u, "changed", u.id);
        } else if (ctx.path === "/admin/set-user-password") {
          const userId = String((ctx.body as { userId?: unknown } | undefined)?.userId ?? "");
          const target = userId ? await (await auth.$context).internalAdapter.findUserById(userId) : null;
          if (target) afterPasswordChange(target, "set by an administrator", ctx.context.session?.user.id ?? target.id);
        }
      }),
    },
    plugins: [
      // No provider configured: the plugin is there with no provider, and /sign-in/social says so in words.
      genericOAuth({
        config: opts.sso
          ? [
              {
                providerId: SSO_PROVIDER_ID,
                name: opts.sso.name,
                discoveryUrl: `${opts.sso.issuer}/.well-known/openid-configuration`,
                // Only ID tokens verified against the provider's keys, issuer and this client are taken.
                requireIdTokenVerification: true,
                clientId: opts.sso.clientId,
                clientSecret: opts.sso.clientSecret,
                authentication: "basic",
                scopes: opts.sso.scopes,
                pkce: true,
                // Name and e-mail follow the directory at every sign-in.
                overrideUserInfo: true,
              },
            ]
          : [],
      }),
      admin({
        ac,
        roles: authRoles,
        adminRoles: ["admin"],
        defaultRole: "inspector",
        bannedUserMessage: "This account has been deactivated. Ask an administrator to reactivate it.",
      }),
    ],
  });
  // The admin's Users screen shows and lifts locks (server/routes/admin-users.routes.ts); the Users
  // routes drop a changed user's cached sessions.
  return Object.assign(auth, { signInGuard: guard, sessions, sso: opts.sso ?? null });
}

export type Auth = ReturnType<typeof createAuth>;
