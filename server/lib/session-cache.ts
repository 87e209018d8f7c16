import { languageOf, type Language } from "@shared/i18n/languages";
import type Database from "better-sqlite3";
import { LRUCache } from "lru-cache";
import { parseRoles, type Role } from "@shared/roles";

/**
 * Which session a Cookie header stands for, remembered for a short while so that not every request
 * pays better-auth's session look-up (a WebCrypto key import and HMAC check of the cookie, then
 * queries built anew by the ORM: ≈ 30 % of a defect post's CPU).
 *
 * Why in-process and not better-auth's own cookie cache (session.cookieCache): that one still checks
 * the cookie's signature on every request, and the session copy it signs into the browser cannot be
 * taken back: a deactivated user or a removed role would keep working until it expires. Here, the
 * key is the Cookie header exactly as better-auth accepted it (same bytes, same result, so no
 * signature check is needed again), and every hit re-reads the session row and its user with one
 * prepared statement: a session ended (sign-out, deactivation, password reset) or expired is seen by
 * the very next request, and a role or name change as well. Such a request, and every miss, goes to
 * better-auth as before (which also clears the browser's cookie when the session is gone). The
 * entries are dropped besides at once on sign-out, password change or reset and any change to the
 * user by an administrator, and after TTL_MS in any case, so better-auth's own rules (extending a
 * session while the user keeps working) still run at least that often.
 *
 * Bounded: at most MAX_ENTRIES entries of at most MAX_KEY characters, made only for a session
 * better-auth accepted, so made-up cookies never enter it. One server process holds one cache
 * (the supervisor runs one); the database stays the record.
 */
export const SESSION_CACHE_TTL_MS = 30_000;
const MAX_ENTRIES = 5_000;
const MAX_KEY = 4_096;

export interface SessionUser {
  id: string;
  name: string;
  email: string;
  roles: Role[];
  /** An administrator set the password: nothing but the change opens (server/middleware/require-role.ts). */
  mustChangePassword: boolean;
  /** The language the person chose (null: none chosen). */
  language: Language | null;
}

interface Entry {
  sessionId: string;
  userId: string;
}

export interface SessionCache {
  /** The signed-in user for this Cookie header, or null: not cached, or no longer valid (ask better-auth). */
  lookup(cookieHeader: string): SessionUser | null;
  /** After better-auth accepted this Cookie header for a live session of an active user. */
  remember(cookieHeader: string, entry: Entry): void;
  /** Every entry of the user (password changed or reset, roles, name or active state changed). */
  forgetUser(userId: string): number;
  /** The entry of this Cookie header (sign-out). */
  forgetCookie(cookieHeader: string | null | undefined): void;
  readonly size: number;
}

export function createSessionCache(sqlite: Database.Database, opts: { ttlMs?: number } = {}): SessionCache {
  const entries = new LRUCache<string, Entry>({ max: MAX_ENTRIES, ttl: opts.ttlMs ?? SESSION_CACHE_TTL_MS });
  // Prepared once; what better-auth's get-session would find: the session, unexpired, and its user.
  const live = sqlite.prepare<
    [string, number],
    { id: string; name: string; email: string; role: string | null; banned: number | null; must_change_password: number; language: string | null }
  >(
    `select u.id, u.name, u.email, u.role, u.banned, u.must_change_password, u.language from session s join user u on u.id = s.user_id where s.id = ? and s.expires_at > ?`,
  );
  return {
    lookup(cookieHeader) {
      const entry = entries.get(cookieHeader);
      if (!entry) return null;
      const u = live.get(entry.sessionId, Date.now());
      if (!u || u.banned || u.id !== entry.userId) {
        entries.delete(cookieHeader);
        return null;
      }
      return {
        id: u.id,
        name: u.name,
        email: u.email,
        roles: parseRoles(u.role),
        mustChangePassword: u.must_change_password === 1,
        language: languageOf(u.language),
      };
    },
    remember(cookieHeader, entry) {
      if (cookieHeader.length <= MAX_KEY) entries.set(cookieHeader, { sessionId: entry.sessionId, userId: entry.userId });
    },
    forgetUser(userId) {
      let n = 0;
      for (const [key, e] of entries.entries()) {
        if (e.userId === userId) {
          entries.delete(key);
          n++;
        }
      }
      return n;
    },
    forgetCookie(cookieHeader) {
      if (cookieHeader) entries.delete(cookieHeader);
    },
    get size() {
      return entries.size;
    },
  };
}
