/**
 * The local stand-in for a plant's identity provider: a real OpenID Connect provider (the
 * oidc-provider package) with a handful of invented people and directory groups, so the whole
 * sign-in redirect (authorization code with PKCE, signed ID token, discovery, JWKS) runs for real on
 * this machine, in development, the demo and the tests. It is started like the local mail catcher
 * (server/mail/fake-smtp.ts), but only when asked for (OIDC_ISSUER=local), never in production: anyone
 * who reaches it can sign in as any of its people.
 *
 * Its sign-in and consent pages are oidc-provider's own development pages (any password is taken;
 * the person must be one of FAKE_DIRECTORY). Nothing here is protocol code of ours: the provider is
 * the package, configured.
 */
import crypto from "node:crypto";
import http from "node:http";
import type { AddressInfo } from "node:net";
import Provider, { type Configuration, type KoaContextWithOIDC } from "oidc-provider";

/** The invented people of the local provider and the directory groups each belongs to. */
export const FAKE_DIRECTORY = [
  { login: "inga", name: "Inga Brenner", email: "inga.brenner@plant.invalid", groups: ["yard-inspection"] },
  { login: "otto", name: "Otto Lindqvist", email: "otto.lindqvist@plant.invalid", groups: ["quality-lab", "process-engineering"] },
  { login: "mara", name: "Mara Okafor", email: "mara.okafor@plant.invalid", groups: ["visitors"] },
  { login: "ruth", name: "Ruth Achterberg", email: "ruth.achterberg@plant.invalid", groups: ["customer-service"] },
  { login: "ivo", name: "Ivo Marchetti", email: "ivo.marchetti@plant.invalid", groups: ["it-strandsight-admins"] },
] as const;

/** The group claim the local provider puts in its ID tokens. */
export const FAKE_GROUP_CLAIM = "groups";

export interface FakeIdpClient {
  clientId: string;
  clientSecret: string;
  redirectUris: string[];
}

export interface FakeIdpOptions {
  port: number;
  host?: string;
  /** The host name in the issuer URL (what browsers are sent to); default: host, or localhost. */
  publicHost?: string;
  clients: FakeIdpClient[];
  /** How long an authorization code may be exchanged (seconds); default 60 (tests use 1 for an expired code). */
  codeTtlSeconds?: number;
}

export async function startFakeIdentityProvider(opts: FakeIdpOptions) {
  const host = opts.host ?? "127.0.0.1";
  // The issuer must be known before the provider is made: listen first, then hand requests to it.
  let handler: http.RequestListener = (_req, res) => {
    res.statusCode = 503;
    res.end();
  };
  const server = http.createServer((req, res) => handler(req, res));
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(opts.port, host, () => resolve());
  });
  const port = (server.address() as AddressInfo).port;
  const publicHost = opts.publicHost ?? (host === "0.0.0.0" || host === "127.0.0.1" ? "localhost" : host);
  const issuer = `http://${publicHost}:${port}`;

  const { privateKey } = crypto.generateKeyPairSync("rsa", { modulusLength: 2048 });
  const signingKey = { ...privateKey.export({ format: "jwk" }), kid: crypto.randomUUID(), alg: "RS256", use: "sig" };

  const configuration: Configuration = {
    clients: opts.clients.map((c) => ({
      client_id: c.clientId,
      client_secret: c.clientSecret,
      redirect_uris: c.redirectUris,
      grant_types: ["authorization_code"],
      response_types: ["code"],
      token_endpoint_auth_method: "client_secret_basic",
    })),
    jwks: { keys: [signingKey] },
    cookies: { keys: [crypto.randomBytes(32).toString("base64url")] },
    pkce: { required: () => true },
    scopes: ["openid", "email", "profile", "groups"],
    claims: { openid: ["sub"], email: ["email", "email_verified"], profile: ["name"], groups: [FAKE_GROUP_CLAIM] },
    // The scopes' claims in the ID token itself, as directory providers configured for group claims do.
    conformIdTokenClaims: false,
    features: { devInteractions: { enabled: true } },
    ttl: { AuthorizationCode: opts.codeTtlSeconds ?? 60, IdToken: 3600, AccessToken: 3600, Session: 3600, Interaction: 600, Grant: 3600 },
    findAccount: (_ctx, id) => {
      const person = FAKE_DIRECTORY.find((p) => p.login === id);
      if (!person) return undefined;
      return {
        accountId: person.login,
        claims: () => ({ sub: person.login, email: person.email, email_verified: true, name: person.name, [FAKE_GROUP_CLAIM]: [...person.groups] }),
      };
    },
    // The application is the plant's own: no consent page, the grant is given at once.
    loadExistingGrant: async (ctx: KoaContextWithOIDC) => {
      const clientId = ctx.oidc.client!.clientId;
      const existing = ctx.oidc.session!.grantIdFor(clientId);
      if (existing) return ctx.oidc.provider.Grant.find(existing);
      const grant = new ctx.oidc.provider.Grant({ clientId, accountId: ctx.oidc.session!.accountId! });
      grant.addOIDCScope("openid email profile groups");
      await grant.save();
      return grant;
    },
  };
  const provider = new Provider(issuer, configuration);
  const serve = provider.callback();
  handler = (req, res) => void serve(req, res);

  return {
    issuer,
    port,
    async close() {
      server.closeAllConnections();
      await new Promise<void>((resolve) => server.close(() => resolve()));
    },
  };
}
