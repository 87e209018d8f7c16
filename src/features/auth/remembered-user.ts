import { meSchema, type Me } from "@shared/api/users";

/*
 * Who was signed in on this device, so the app can start and show the yard when the tablet has no
 * network (the server cannot be asked). Only the name, e-mail, id and roles: the server still
 * decides every request, and anything sent later goes under the real session (or waits for a
 * sign-in). Forgotten at sign-out and when the server says the session ended.
 */

const KEY = "strandsight.user";
/** As long as a session lasts (server/auth.ts, 3 days): a tablet left longer must sign in again. */
const MAX_AGE_MS = 3 * 24 * 60 * 60 * 1000;

export function rememberUser(me: Me, now = Date.now()) {
  try {
    localStorage.setItem(KEY, JSON.stringify({ me, at: now }));
  } catch {
    // Private mode or full storage: the app then needs the network to start, as before.
  }
}

export function forgetUser() {
  try {
    localStorage.removeItem(KEY);
  } catch {
    // nothing stored
  }
}

/** The last user the server confirmed on this device, if recent; whatever else is stored there is ignored. */
export function rememberedUser(now = Date.now()): Me | null {
  try {
    const raw = localStorage.getItem(KEY);
    if (!raw || raw.length > 10_000) return null;
    const v = JSON.parse(raw) as { me?: unknown; at?: unknown };
    if (typeof v.at !== "number" || now - v.at > MAX_AGE_MS || v.at > now + 60_000) return null;
    const me = meSchema.safeParse(v.me);
    return me.success ? me.data : null;
  } catch {
    return null;
  }
}
