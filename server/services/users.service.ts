import crypto from "node:crypto";
import { and, asc, desc, eq, gt, isNotNull, ne, sql } from "drizzle-orm";
import { APIError } from "better-auth/api";
import { parseRoles, type Role } from "@shared/roles";
import {
  firstSignInOf,
  type AdminUser,
  type ChangeOwnPasswordInput,
  type CreateUserInput,
  type CreatedUser,
  type FirstSignIn,
  type UpdateUserInput,
} from "@shared/api/users";
import type { Auth } from "../auth";
import type { Db } from "../db/client";
import { CLIENT_IP_HEADER } from "../auth";
import { account, emailOutbox, session, user } from "../db/schema";
import type { Logger } from "../lib/logger";
import type { Notifications } from "../mail/notifications";
import { HttpError, conflict, notFound, said } from "../lib/http-error";
import { LOCK_MS, MAX_FAILURES, type SignInGuard, type SignInLock } from "../lib/sign-in-guard";
import { recordAudit } from "./audit.service";

type UserRow = typeof user.$inferSelect;

const lockView = (l: SignInLock) => ({ address: l.address, until: new Date(l.until).toISOString() });

/** Users holding a password (a credential account with a hash): an invited person has none until they choose it. */
function withPassword(db: Pick<Db, "select">, id?: string): Set<string> {
  const holds = and(eq(account.providerId, "credential"), isNotNull(account.password));
  const rows = db
    .select({ userId: account.userId })
    .from(account)
    .where(id ? and(holds, eq(account.userId, id)) : holds)
    .all();
  return new Set(rows.map((r) => r.userId));
}

function pendingFirstSignIn(u: UserRow, hasPassword: boolean): FirstSignIn | null {
  if (u.mustChangePassword) return "first_password";
  return hasPassword ? null : "invitation";
}

function toAdminUser(u: UserRow, hasPassword: boolean, guard?: SignInGuard): AdminUser {
  return {
    id: u.id,
    name: u.name,
    email: u.email,
    roles: parseRoles(u.role),
    active: !u.banned,
    createdAt: u.createdAt.toISOString(),
    lockedFrom: guard ? guard.locksOf(u.email).map(lockView) : [],
    firstSignIn: pendingFirstSignIn(u, hasPassword),
  };
}

const toAdminUserOf = (db: Pick<Db, "select">, u: UserRow, guard?: SignInGuard) => toAdminUser(u, withPassword(db, u.id).has(u.id), guard);

/** What an audit row keeps of a user (not the passing sign-in locks, nor how their first sign-in goes). */
function auditView(u: UserRow) {
  const { lockedFrom: _locks, firstSignIn: _first, ...rest } = toAdminUser(u, true);
  return rest;
}

export function listUsers(db: Db, guard?: SignInGuard): AdminUser[] {
  const passwords = withPassword(db);
  return db
    .select()
    .from(user)
    .orderBy(asc(user.name))
    .all()
    .map((u) => toAdminUser(u, passwords.has(u.id), guard));
}

/** Lifts every sign-in lock of the account (from every address), audited; 409 when there is none. */
export function unlockUser(db: Db, guard: SignInGuard, id: string, actorId: string): AdminUser {
  const u = db.select().from(user).where(eq(user.id, id)).get();
  if (!u) throw notFound(said("users.noUser"));
  const locks = guard.locksOf(u.email);
  if (locks.length === 0) {
    throw new HttpError(409, "not_locked", said("users.notLocked"));
  }
  // The audit row first: a lock is lifted only once the trail says who lifted it.
  recordAudit(db, {
    userId: actorId,
    action: "user.unlock",
    entity: "user",
    entityId: id,
    before: { lockedFrom: locks.map(lockView) },
    after: { lockedFrom: [] },
  });
  guard.clear(u.email);
  return toAdminUserOf(db, u, guard);
}

/** A new account: with a password (the seed's, or a first one the person must change), or none (invited). */
export type NewUser = Pick<CreateUserInput, "name" | "email" | "roles"> & { password?: string; mustChangePassword?: boolean };

/**
 * Creates a user in one transaction (user, credential account when a password is given, audit row).
 * The hash comes from better-auth itself so sign-in verifies it exactly as for any other account.
 * Without a password the account has no credential until the person sets one with their invitation
 * link (better-auth's reset creates it then).
 */
export async function createUser(db: Db, auth: Auth, input: NewUser, actor: { userId?: string | null; actor?: string }): Promise<AdminUser> {
  const email = input.email.toLowerCase();
  if (db.select({ id: user.id }).from(user).where(eq(user.email, email)).get()) {
    throw conflict(said("users.emailTaken", { email }), { field: "email" });
  }
  const hash = input.password === undefined ? null : await (await auth.$context).password.hash(input.password);
  const mustChangePassword = hash !== null && input.mustChangePassword === true;
  const firstSignIn: FirstSignIn | null = hash === null ? "invitation" : mustChangePassword ? "first_password" : null;
  const id = crypto.randomUUID();
  const now = new Date();
  const insert = () =>
    db.transaction((tx) => {
      const created = tx
        .insert(user)
        .values({
          id,
          name: input.name,
          email,
          emailVerified: true,
          role: input.roles.join(","),
          banned: false,
          mustChangePassword,
          createdAt: now,
          updatedAt: now,
        })
        .returning()
        .get();
      if (hash !== null) {
        tx.insert(account)
          .values({ id: crypto.randomUUID(), accountId: id, providerId: "credential", userId: id, password: hash, createdAt: now, updatedAt: now })
          .run();
      }
      recordAudit(tx, {
        userId: actor.userId,
        actor: actor.actor,
        action: "user.create",
        entity: "user",
        entityId: id,
        after: { name: input.name, email, roles: input.roles, ...(firstSignIn ? { firstSignIn } : {}) },
      });
      return created;
    });
  try {
    return toAdminUser(insert(), hash !== null);
  } catch (err) {
    // Two admins creating the same e-mail at once: the unique index decides, the loser gets 409.
    if ((err as { code?: string }).code === "SQLITE_CONSTRAINT_UNIQUE") {
      throw conflict(said("users.emailTaken", { email }), { field: "email" });
    }
    throw err;
  }
}

function activeAdminsOtherThan(db: Pick<Db, "select">, id: string): number {
  const rows = db
    .select({ role: user.role })
    .from(user)
    .where(and(ne(user.id, id), sql`coalesce(${user.banned}, 0) = 0`))
    .all();
  return rows.filter((r) => parseRoles(r.role).includes("admin")).length;
}

/** Changes name, roles or active state; deactivation ends the user's sessions at once. */
export function updateUser(db: Db, id: string, input: UpdateUserInput, actorId: string, guard?: SignInGuard): AdminUser {
  return db.transaction((tx) => {
    const before = tx.select().from(user).where(eq(user.id, id)).get();
    if (!before) throw notFound(said("users.noUser"));
    const roles: Role[] = input.roles ?? parseRoles(before.role);
    const active = input.active ?? !before.banned;
    const losesAdmin = parseRoles(before.role).includes("admin") && !before.banned && (!roles.includes("admin") || !active);
    if (losesAdmin && activeAdminsOtherThan(tx, id) === 0) {
      throw new HttpError(409, "last_admin", said("users.lastAdmin"));
    }
    const after = tx
      .update(user)
      .set({
        name: input.name ?? before.name,
        role: roles.join(","),
        banned: !active,
        banReason: active ? null : "Deactivated by an administrator",
        updatedAt: new Date(),
      })
      .where(eq(user.id, id))
      .returning()
      .get();
    if (!active) tx.delete(session).where(eq(session.userId, id)).run();
    recordAudit(tx, {
      userId: actorId,
      action: "user.update",
      entity: "user",
      entityId: id,
      before: auditView(before),
      after: auditView(after),
    });
    return toAdminUserOf(tx, after, guard);
  });
}

/**
 * An administrator adds a person, one way only (shared/api/users.ts, FIRST_SIGN_IN): with a first
 * password, which the person must change at their first sign-in, and no mail; or with an
 * invitation, an e-mailed link where they choose their own (better-auth's reset link, worded as an
 * invitation by the notifications), and no password until then. The answer says whether the
 * invitation reached the mail queue, so the screen never claims a message that is not there.
 */
export async function addUser(
  deps: { db: Db; auth: Auth; notify: Notifications; logger: Logger },
  input: CreateUserInput,
  actorId: string,
): Promise<CreatedUser> {
  const { db, auth, notify, logger } = deps;
  const way = firstSignInOf(input);
  const created = await createUser(
    db,
    auth,
    { name: input.name, email: input.email, roles: input.roles, ...(way === "first_password" ? { password: input.password, mustChangePassword: true } : {}) },
    { userId: actorId },
  );
  if (way === "first_password") return { ...created, invitationQueued: null };
  const lastBefore = db.select({ id: emailOutbox.id }).from(emailOutbox).orderBy(desc(emailOutbox.id)).limit(1).get()?.id ?? 0;
  notify.inviting(created.email);
  try {
    await auth.api.requestPasswordReset({ body: { email: created.email, redirectTo: "/reset-password" } });
  } catch (err) {
    logger.error({ err }, "could not queue the invitation");
  }
  const queued = db
    .select({ id: emailOutbox.id })
    .from(emailOutbox)
    .where(and(gt(emailOutbox.id, lastBefore), eq(emailOutbox.kind, "invitation"), eq(emailOutbox.toAddresses, created.email)))
    .get();
  return { ...created, invitationQueued: queued !== undefined };
}

/**
 * A signed-in person changes their own password (a first password set by an administrator
 * included): better-auth checks the current one and writes the new hash; its after-hook
 * (server/auth.ts) revokes reset links, lifts locks, clears the must-change mark and audits. Every
 * other session of the account ends; this one continues with the fresh cookie returned here.
 * Wrong current passwords count towards the account's sign-in lock from that address, like wrong
 * passwords at sign-in.
 */
export async function changeOwnPassword(
  db: Db,
  auth: Auth,
  who: { email: string; cookie: string; address: string },
  input: ChangeOwnPasswordInput,
): Promise<string[]> {
  const guard = auth.signInGuard;
  const minutes = guard.lockedFor(who.email, who.address);
  if (minutes > 0) {
    throw new HttpError(429, "account_locked", said("users.locked", { count: minutes }));
  }
  // Only the session cookie and the address Express resolved: nothing else of the client's headers.
  const headers = new Headers({ cookie: who.cookie, [CLIENT_IP_HEADER]: who.address });
  try {
    const answer = await auth.api.changePassword({
      body: { currentPassword: input.currentPassword, newPassword: input.newPassword, revokeOtherSessions: true },
      headers,
      returnHeaders: true,
    });
    return answer.headers.getSetCookie();
  } catch (err) {
    if (err instanceof APIError && (err.body as { code?: string } | undefined)?.code === "INVALID_PASSWORD") {
      if (guard.failed(who.email, who.address)) {
        recordAudit(db, {
          actor: "sign-in guard",
          action: "user.sign_in.locked",
          entity: "user",
          entityId: who.email.toLowerCase(),
          after: { minutes: LOCK_MS / 60_000, failures: MAX_FAILURES, address: who.address },
        });
      }
      throw new HttpError(400, "wrong_current_password", said("users.wrongCurrentPassword"), [
        { path: "currentPassword", message: "This is not your current password." },
      ]);
    }
    throw err;
  }
}
