import type { Request } from "express";

/**
 * Which browser origins may sign in and send writes with the session cookie.
 *
 * - The address in BETTER_AUTH_URL, always.
 * - Each origin in TRUSTED_ORIGINS (comma-separated, e.g. `http://10.20.0.15:3000,https://strandsight.plant.example`).
 * - With ACCEPT_REQUEST_HOST (on by default outside production): the server's own origin as the browser
 *   reached it — the Host the request was sent to, with the scheme Express resolved (TRUST_PROXY) — so
 *   a tablet that opens the server by IP address or host name can sign in. A page of another site
 *   still carries its own origin, which differs from the Host it posts to, and is refused.
 */
export interface OriginPolicy {
  listed: string[];
  acceptRequestHost: boolean;
}

/** Set on every request to better-auth by our own door (server/middleware/auth-door.ts); a client's value is overwritten. */
export const OWN_ORIGIN_HEADER = "x-strandsight-own-origin";

/** `scheme://host[:port]` of the request as it reached us (X-Forwarded-* honoured only under TRUST_PROXY). */
export function ownOriginOf(req: Request): string | null {
  const host = req.get("host");
  if (!host || !/^[A-Za-z0-9.\-:[\]]{1,300}$/.test(host)) return null;
  try {
    return new URL(`${req.protocol}://${host}`).origin;
  } catch {
    return null;
  }
}

export function isTrustedOrigin(policy: OriginPolicy, origin: string, own: string | null): boolean {
  if (policy.listed.includes(origin)) return true;
  return policy.acceptRequestHost && own !== null && origin === own;
}

/**
 * One origin as TRUSTED_ORIGINS takes it: http(s), a host, an optional port, nothing after it.
 * Returns a sentence for the start-up error when it is not one.
 */
export function originProblem(value: string): string | null {
  let url: URL;
  try {
    url = new URL(value);
  } catch {
    return `"${value}" is not an address; write it like http://10.20.0.15:3000.`;
  }
  if (url.protocol !== "http:" && url.protocol !== "https:") return `"${value}" must start with http:// or https://.`;
  if (value.includes("*")) return `"${value}": wildcards are not accepted; list each address.`;
  if (url.origin !== value.replace(/\/$/, "")) return `"${value}" must be only scheme, host and port (no path), e.g. ${url.origin}.`;
  return null;
}
