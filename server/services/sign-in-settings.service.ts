/**
 * How people sign in: the administrator's mapping from the identity provider's groups to our roles,
 * and whether local passwords stay open to everyone or only to administrators (the break-glass
 * accounts) once the plant signs in through its identity provider. Kept in plant_settings as one JSON
 * value; every change is audited with the value before and after.
 *
 * Roles from the directory are applied at each single sign-on (server/auth.ts): the union of the
 * roles mapped to the person's groups; none mapped → no role (the "no role" screen). A mapping
 * change takes effect at each person's next sign-in.
 */
import { eq } from "drizzle-orm";
import { parseRoles, ROLES, type Role } from "@shared/roles";
import type { SignInSettings } from "@shared/api/sign-in-admin";
import type { Db } from "../db/client";
import { plantSettings, user } from "../db/schema";
import { HttpError, said } from "../lib/http-error";
import { recordAudit } from "./audit.service";

const KEY = "signIn.directory";

export const DEFAULT_SIGN_IN_SETTINGS: SignInSettings = { groupRoles: [], localPasswords: "everyone" };

type Reader = Pick<Db, "select">;

export function getSignInSettings(db: Reader): SignInSettings {
  const row = db.select({ value: plantSettings.value }).from(plantSettings).where(eq(plantSettings.key, KEY)).get();
  const v = (row?.value ?? {}) as Partial<SignInSettings>;
  return { groupRoles: v.groupRoles ?? DEFAULT_SIGN_IN_SETTINGS.groupRoles, localPasswords: v.localPasswords ?? DEFAULT_SIGN_IN_SETTINGS.localPasswords };
}

/**
 * Saves the mapping and the password rule (audited). Local passwords can be closed to all but
 * administrators only where an identity provider is configured, or nobody else could sign in.
 */
export function writeSignInSettings(db: Db, next: SignInSettings, actorId: string, ssoConfigured: boolean): SignInSettings {
  if (next.localPasswords === "administrators" && !ssoConfigured) {
    throw new HttpError(409, "no_identity_provider", said("signInSettings.noIdentityProvider"));
  }
  const seen = new Set<string>();
  for (const g of next.groupRoles) {
    if (seen.has(g.group)) throw new HttpError(400, "validation_failed", said("signInSettings.groupTwice", { group: g.group }));
    seen.add(g.group);
  }
  return db.transaction((tx) => {
    const before = getSignInSettings(tx);
    const value = {
      groupRoles: next.groupRoles.map((g) => ({ group: g.group, roles: ROLES.filter((r) => g.roles.includes(r)) })),
      localPasswords: next.localPasswords,
    };
    const exists = tx.select({ key: plantSettings.key }).from(plantSettings).where(eq(plantSettings.key, KEY)).get();
    if (exists) tx.update(plantSettings).set({ value, updatedAt: new Date(), updatedBy: actorId }).where(eq(plantSettings.key, KEY)).run();
    else tx.insert(plantSettings).values({ key: KEY, value, updatedBy: actorId }).run();
    recordAudit(tx, { userId: actorId, action: "settings.sign_in.changed", entity: "settings", entityId: KEY, before, after: value });
    return value;
  });
}

/** The roles the directory's groups give: every role mapped to any of them, in the product's order. */
export function rolesFromGroups(settings: SignInSettings, groups: readonly string[]): Role[] {
  const given = new Set<Role>();
  for (const g of settings.groupRoles) if (groups.includes(g.group)) for (const r of g.roles) given.add(r);
  return ROLES.filter((r) => given.has(r));
}

/**
 * The groups claim of an ID token the sign-in has just verified (better-auth checked its signature,
 * issuer, audience and nonce before storing it): a list of strings, or one string; anything else is
 * no groups. Reading a JWT's payload is base64url and JSON, no protocol code.
 */
export function groupsOfIdToken(idToken: string | null | undefined, claim: string): string[] {
  if (!idToken) return [];
  const payload = idToken.split(".")[1];
  if (!payload) return [];
  let claims: Record<string, unknown>;
  try {
    claims = JSON.parse(Buffer.from(payload, "base64url").toString("utf8")) as Record<string, unknown>;
  } catch {
    return [];
  }
  const v = claims[claim];
  const list = Array.isArray(v) ? v : typeof v === "string" ? [v] : [];
  return list.filter((g): g is string => typeof g === "string" && g.length > 0 && g.length <= 256).slice(0, 500);
}

/**
 * Gives a person who has just signed in through the identity provider the roles their groups map
 * to (audited when they change). The last active administrator keeps the admin role even if the
 * directory no longer gives it, as on the Users screen, and the audit row says so.
 */
export function applyDirectoryRoles(db: Db, userId: string, groups: string[]): { before: Role[]; after: Role[]; changed: boolean } {
  return db.transaction((tx) => {
    const row = tx.select({ role: user.role, banned: user.banned }).from(user).where(eq(user.id, userId)).get();
    if (!row) return { before: [], after: [], changed: false };
    const before = parseRoles(row.role);
    let after = rolesFromGroups(getSignInSettings(tx), groups);
    let keptAdmin = false;
    if (before.includes("admin") && !after.includes("admin") && !row.banned) {
      const otherAdmins = tx
        .select({ id: user.id, role: user.role, banned: user.banned })
        .from(user)
        .all()
        .filter((u) => u.id !== userId && !u.banned && parseRoles(u.role).includes("admin")).length;
      if (otherAdmins === 0) {
        after = ROLES.filter((r) => r === "admin" || after.includes(r));
        keptAdmin = true;
      }
    }
    const changed = before.join(",") !== after.join(",");
    if (changed) {
      tx.update(user)
        .set({ role: after.join(","), updatedAt: new Date() })
        .where(eq(user.id, userId))
        .run();
      recordAudit(tx, {
        actor: "identity provider",
        action: "user.roles.from_directory",
        entity: "user",
        entityId: userId,
        before: { roles: before },
        after: { roles: after, groups, ...(keptAdmin ? { keptAdmin: "the last active administrator keeps the admin role" } : {}) },
      });
    }
    return { before, after, changed };
  });
}
