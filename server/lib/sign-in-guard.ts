/**
 * Repeated wrong passwords lock sign-in for one account FROM ONE ADDRESS for a while (on top of the
 * per-address request budget): after MAX_FAILURES wrong passwords for an e-mail from the same client
 * address within WINDOW_MS, sign-in for that e-mail from that address is refused for LOCK_MS. Someone
 * guessing from one address therefore cannot lock the real user (or the sole administrator) out from
 * their own desk. A correct password clears that address's count; a completed password reset and an
 * administrator's unlock clear every address.
 *
 * Kept in memory (one app process serves a plant; a restart forgets the counts), in two LRU caches
 * with a time-to-live (lru-cache), so entries expire on their own and a flood of made-up e-mails
 * cannot grow memory without bound: at most `maxEntries` (account, address) pairs are remembered
 * for failures and as many for locks (failures fill their own cache, so they never push a lock out).
 */
import { LRUCache } from "lru-cache";

export const MAX_FAILURES = 5;
export const WINDOW_MS = 15 * 60_000;
export const LOCK_MS = 15 * 60_000;
/** (account, address) pairs remembered per cache: a few MB at most. */
export const MAX_TRACKED = 10_000;

export interface SignInLock {
  email: string;
  address: string;
  /** ms since the epoch */
  until: number;
}

export interface SignInGuardOptions {
  /** The clock (tests inject one). */
  now?: () => number;
  maxEntries?: number;
}

const keyOf = (email: string, address: string) => `${email.toLowerCase()}\n${address}`;

export function createSignInGuard(opts: SignInGuardOptions = {}) {
  const now = opts.now ?? Date.now;
  const max = opts.maxEntries ?? MAX_TRACKED;
  // ttlResolution 0: read the (possibly injected) clock on every check instead of caching it for 1 ms.
  const perf = { now };
  const failures = new LRUCache<string, number[]>({ max, ttl: WINDOW_MS, ttlResolution: 0, perf });
  const locks = new LRUCache<string, SignInLock>({ max, ttl: LOCK_MS, ttlResolution: 0, perf });

  const remove = (email: string) => {
    const prefix = `${email.toLowerCase()}\n`;
    let removed = 0;
    for (const k of [...locks.keys()]) if (k.startsWith(prefix)) (locks.delete(k), removed++);
    for (const k of [...failures.keys()]) if (k.startsWith(prefix)) failures.delete(k);
    return removed;
  };

  return {
    /** Minutes left on the lock of this account from this address, or 0. */
    lockedFor(email: string, address: string): number {
      const lock = locks.get(keyOf(email, address));
      if (!lock) return 0;
      return Math.max(1, Math.ceil((lock.until - now()) / 60_000));
    },
    /** Records a wrong password; true when this one locks the account from this address. */
    failed(email: string, address: string): boolean {
      const key = keyOf(email, address);
      const t = now();
      const recent = (failures.get(key) ?? []).filter((x) => x > t - WINDOW_MS);
      recent.push(t);
      if (recent.length >= MAX_FAILURES) {
        failures.delete(key);
        locks.set(key, { email: email.toLowerCase(), address, until: t + LOCK_MS });
        return true;
      }
      failures.set(key, recent);
      return false;
    },
    /** A correct password from this address: its count starts again. */
    succeeded(email: string, address: string) {
      failures.delete(keyOf(email, address));
    },
    /** The addresses this account is locked from now (the Users screen shows them). */
    locksOf(email: string): SignInLock[] {
      const prefix = `${email.toLowerCase()}\n`;
      const out: SignInLock[] = [];
      for (const [k, lock] of locks.entries()) if (k.startsWith(prefix)) out.push(lock);
      return out.sort((a, b) => a.address.localeCompare(b.address));
    },
    /** Every lock and count of this account, from every address (reset, admin unlock); how many locks were lifted. */
    clear(email: string): number {
      return remove(email);
    },
    /** How many live entries are remembered (bounded by maxEntries each; expired ones are dropped first). */
    size() {
      failures.purgeStale();
      locks.purgeStale();
      return { failures: failures.size, locks: locks.size };
    },
  };
}

export type SignInGuard = ReturnType<typeof createSignInGuard>;
