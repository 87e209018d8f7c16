import { adminSignInSchema, signInSettingsSchema, type AdminSignIn } from "@shared/api/sign-in-admin";
import { defineRoute } from "../lib/route";
import { getSignInSettings, writeSignInSettings } from "../services/sign-in-settings.service";
import { ssoCallbackUrl } from "../sso/setup";
import type { Deps } from "./deps";

/** The administrator's side of signing in: the identity provider's groups mapped to roles, and who may use a password. */
export function signInRoutes({ db, auth, env }: Deps) {
  const view = (): AdminSignIn => ({
    ...getSignInSettings(db),
    provider: auth.sso
      ? {
          issuer: auth.sso.issuer,
          local: auth.sso.local,
          name: auth.sso.name,
          groupClaim: auth.sso.groupClaim,
          redirectUrl: ssoCallbackUrl(env.BETTER_AUTH_URL),
          clientId: auth.sso.clientId,
        }
      : null,
  });
  return [
    defineRoute({
      method: "get",
      path: "/admin/sign-in",
      summary: "The identity provider (as configured), the mapping of its groups to roles, and who may still sign in with a password",
      tag: "admin",
      access: "users.manage",
      responses: { 200: { description: "The sign-in settings.", schema: adminSignInSchema } },
      handler: () => view(),
    }),
    defineRoute({
      method: "put",
      path: "/admin/sign-in",
      summary: "Replace the group → roles mapping and the password rule (audited; a mapping change takes effect at each person's next single sign-on)",
      tag: "admin",
      access: "users.manage",
      body: signInSettingsSchema,
      responses: {
        200: { description: "Saved.", schema: adminSignInSchema },
        409: { description: "Passwords cannot be closed to non-administrators without an identity provider." },
      },
      handler: ({ body, user }) => {
        writeSignInSettings(db, body, user.id, auth.sso !== null);
        return view();
      },
    }),
  ];
}
