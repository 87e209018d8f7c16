/**
 * Repeated failed sign-ins lock the account for a while (on top of the per-address rate limit):
 * after MAX_FAILURES wrong passwords within WINDOW_MS, sign-in for that e-mail is refused for
 * LOCK_MS, whatever the address, and the lock is written to the audit log. A correct password
 * clears the count. Kept in memory: one app process serves a plant; a restart forgets the counts.
 */
export const MAX_FAILURES = 5;
export const WINDOW_MS = 15 * 60_000;
export const LOCK_MS = 15 * 60_000;

export function createSignInGuard(now: () => number = Date.now) {
  const failures = new Map<string, number[]>();
  const locks = new Map<string, number>();
  return {
    /** Minutes left on the lock, or 0. */
    lockedFor(email: string): number {
      const until = locks.get(email.toLowerCase());
      if (!until) return 0;
      if (until <= now()) {
        locks.delete(email.toLowerCase());
        return 0;
      }
      return Math.ceil((until - now()) / 60_000);
    },
    /** Records a failure; true when this one locks the account. */
    failed(email: string): boolean {
      const key = email.toLowerCase();
      const t = now();
      const recent = (failures.get(key) ?? []).filter((x) => x > t - WINDOW_MS);
      recent.push(t);
      failures.set(key, recent);
      if (recent.length >= MAX_FAILURES) {
        locks.set(key, t + LOCK_MS);
        failures.delete(key);
        return true;
      }
      return false;
    },
    succeeded(email: string) {
      failures.delete(email.toLowerCase());
    },
  };
}

export type SignInGuard = ReturnType<typeof createSignInGuard>;
