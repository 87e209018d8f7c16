/**
 * Single sign-on as the environment sets it up: the plant's identity provider (OIDC_ISSUER with its
 * client id and secret), or with OIDC_ISSUER=local the fake provider started here with a client for
 * this app (server/sso/fake-idp.ts), or none (local passwords only).
 */
import crypto from "node:crypto";
import { SSO_PROVIDER_ID } from "@shared/api/sign-in";
import type { Env } from "../env";
import { startFakeIdentityProvider } from "./fake-idp";

export interface SsoConfig {
  issuer: string;
  /** The fake provider of server/sso/fake-idp.ts. */
  local: boolean;
  clientId: string;
  clientSecret: string;
  groupClaim: string;
  scopes: string[];
  /** "Sign in with …" */
  name: string;
}

/** The address the provider sends the browser back to (registered at the provider as the redirect URL). */
export const ssoCallbackUrl = (baseURL: string) => `${baseURL.replace(/\/$/, "")}/api/auth/callback/${SSO_PROVIDER_ID}`;

type SsoEnv = Pick<
  Env,
  | "OIDC_ISSUER"
  | "OIDC_CLIENT_ID"
  | "OIDC_CLIENT_SECRET"
  | "OIDC_GROUP_CLAIM"
  | "OIDC_SCOPES"
  | "OIDC_DISPLAY_NAME"
  | "FAKE_OIDC_PORT"
  | "BETTER_AUTH_URL"
  | "HOST"
>;

export async function setupSso(env: SsoEnv, opts: { codeTtlSeconds?: number } = {}) {
  if (!env.OIDC_ISSUER) return { sso: null, fake: null };
  const scopes = [...new Set(["openid", ...env.OIDC_SCOPES.split(/\s+/).filter(Boolean)])];
  if (env.OIDC_ISSUER !== "local") {
    const sso: SsoConfig = {
      issuer: env.OIDC_ISSUER.replace(/\/$/, ""),
      local: false,
      clientId: env.OIDC_CLIENT_ID!,
      clientSecret: env.OIDC_CLIENT_SECRET!,
      groupClaim: env.OIDC_GROUP_CLAIM,
      scopes,
      name: env.OIDC_DISPLAY_NAME,
    };
    return { sso, fake: null };
  }
  const client = {
    clientId: "strandsight-local",
    clientSecret: crypto.randomBytes(24).toString("base64url"),
    redirectUris: [ssoCallbackUrl(env.BETTER_AUTH_URL)],
  };
  const fake = await startFakeIdentityProvider({
    port: env.FAKE_OIDC_PORT,
    host: env.HOST === "0.0.0.0" ? "127.0.0.1" : env.HOST,
    clients: [client],
    codeTtlSeconds: opts.codeTtlSeconds,
  });
  const sso: SsoConfig = {
    issuer: fake.issuer,
    local: true,
    clientId: client.clientId,
    clientSecret: client.clientSecret,
    groupClaim: "groups",
    scopes,
    name: env.OIDC_DISPLAY_NAME,
  };
  return { sso, fake };
}
