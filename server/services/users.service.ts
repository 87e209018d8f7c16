import crypto from "node:crypto";
import { and, asc, eq, like, ne, sql } from "drizzle-orm";
import { parseRoles, type Role } from "@shared/roles";
import type { AdminUser, CreateUserInput, UpdateUserInput } from "@shared/api/users";
import type { Auth } from "../auth";
import type { Db } from "../db/client";
import { account, session, user, verification } from "../db/schema";
import { HttpError, conflict, notFound } from "../lib/http-error";
import type { SignInGuard, SignInLock } from "../lib/sign-in-guard";
import { recordAudit } from "./audit.service";

type UserRow = typeof user.$inferSelect;

const lockView = (l: SignInLock) => ({ address: l.address, until: new Date(l.until).toISOString() });

function toAdminUser(u: UserRow, guard?: SignInGuard): AdminUser {
  return {
    id: u.id,
    name: u.name,
    email: u.email,
    roles: parseRoles(u.role),
    active: !u.banned,
    createdAt: u.createdAt.toISOString(),
    lockedFrom: guard ? guard.locksOf(u.email).map(lockView) : [],
  };
}

/** What an audit row keeps of a user (not the passing sign-in locks). */
function auditView(u: UserRow) {
  const { lockedFrom: _locks, ...rest } = toAdminUser(u);
  return rest;
}

export function listUsers(db: Db, guard?: SignInGuard): AdminUser[] {
  return db.select().from(user).orderBy(asc(user.name)).all().map((u) => toAdminUser(u, guard));
}

/**
 * Deletes every password-reset (and invitation) link still out for this user. better-auth keeps each
 * as a `verification` row with identifier `reset-password:<token>` and the user id as its value
 * (better-auth 1.7, api/routes/password.mjs; stored in plain, as `verification.storeIdentifier` is
 * not set). Returns how many were revoked.
 */
export function revokeResetLinks(db: Pick<Db, "delete">, userId: string): number {
  return db
    .delete(verification)
    .where(and(like(verification.identifier, "reset-password:%"), eq(verification.value, userId)))
    .run().changes;
}

/** Lifts every sign-in lock of the account (from every address), audited; 409 when there is none. */
export function unlockUser(db: Db, guard: SignInGuard, id: string, actorId: string): AdminUser {
  const u = db.select().from(user).where(eq(user.id, id)).get();
  if (!u) throw notFound("There is no such user.");
  const locks = guard.locksOf(u.email);
  if (locks.length === 0) {
    throw new HttpError(409, "not_locked", "This account is not locked: a lock ends on its own after 15 minutes, and this one has ended or was lifted already.");
  }
  // The audit row first: a lock is lifted only once the trail says who lifted it.
  recordAudit(db, { userId: actorId, action: "user.unlock", entity: "user", entityId: id, before: { lockedFrom: locks.map(lockView) }, after: { lockedFrom: [] } });
  guard.clear(u.email);
  return toAdminUser(u, guard);
}

/**
 * Creates a user with a password in one transaction (user, credential account, audit row). The hash
 * comes from better-auth itself so sign-in verifies it exactly as for any other account.
 */
export async function createUser(
  db: Db,
  auth: Auth,
  input: CreateUserInput,
  actor: { userId?: string | null; actor?: string },
): Promise<AdminUser> {
  const email = input.email.toLowerCase();
  if (db.select({ id: user.id }).from(user).where(eq(user.email, email)).get()) {
    throw conflict(`A user with the e-mail ${email} already exists.`, { field: "email" });
  }
  const ctx = await auth.$context;
  const hash = await ctx.password.hash(input.password);
  const id = crypto.randomUUID();
  const now = new Date();
  const insert = () => db.transaction((tx) => {
    const created = tx
      .insert(user)
      .values({ id, name: input.name, email, emailVerified: true, role: input.roles.join(","), banned: false, createdAt: now, updatedAt: now })
      .returning()
      .get();
    tx.insert(account)
      .values({ id: crypto.randomUUID(), accountId: id, providerId: "credential", userId: id, password: hash, createdAt: now, updatedAt: now })
      .run();
    recordAudit(tx, {
      userId: actor.userId,
      actor: actor.actor,
      action: "user.create",
      entity: "user",
      entityId: id,
      after: { name: input.name, email, roles: input.roles },
    });
    return created;
  });
  try {
    return toAdminUser(insert());
  } catch (err) {
    // Two admins creating the same e-mail at once: the unique index decides, the loser gets 409.
    if ((err as { code?: string }).code === "SQLITE_CONSTRAINT_UNIQUE") {
      throw conflict(`A user with the e-mail ${email} already exists.`, { field: "email" });
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
    if (!before) throw notFound("There is no such user.");
    const roles: Role[] = input.roles ?? parseRoles(before.role);
    const active = input.active ?? !before.banned;
    const losesAdmin = parseRoles(before.role).includes("admin") && !before.banned && (!roles.includes("admin") || !active);
    if (losesAdmin && activeAdminsOtherThan(tx, id) === 0) {
      throw new HttpError(409, "last_admin", "This is the last active administrator; give another user the admin role first.");
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
    return toAdminUser(after, guard);
  });
}
