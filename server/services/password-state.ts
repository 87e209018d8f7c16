/**
 * The state of a person's password kept beside better-auth's own tables: the first-password flag and
 * the reset links still out. A module of its own because server/auth.ts calls it from better-auth's
 * hooks, and users.service.ts needs the auth instance: one importing the other both ways was a cycle.
 */
import { and, eq, like } from "drizzle-orm";
import type { Db } from "../db/client";
import { user, verification } from "../db/schema";

/**
 * The person chose a password of their own: the first password an administrator set no longer
 * holds them at the change screen. Returns whether it did.
 */
export function clearMustChange(db: Pick<Db, "update">, userId: string): boolean {
  return (
    db
      .update(user)
      .set({ mustChangePassword: false, updatedAt: new Date() })
      .where(and(eq(user.id, userId), eq(user.mustChangePassword, true)))
      .run().changes > 0
  );
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
