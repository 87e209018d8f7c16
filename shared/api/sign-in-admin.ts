import { z } from "zod";
import { roleSchema } from "../roles";
import { LOCAL_PASSWORDS } from "./sign-in";

/** One line of the administrator's mapping: a directory group and the roles it gives. */
export const groupRolesSchema = z.object({
  group: z.string().trim().min(1, "Give the group's name as the identity provider sends it.").max(256, "A group name is at most 256 characters."),
  roles: z.array(roleSchema).max(5),
});

export const signInSettingsSchema = z.object({
  groupRoles: z.array(groupRolesSchema).max(200, "At most 200 groups can be mapped."),
  localPasswords: z.enum(LOCAL_PASSWORDS),
});
export type SignInSettings = z.infer<typeof signInSettingsSchema>;

/** The identity provider as configured on the server (read-only on screen: it is set in the environment). */
export const identityProviderSchema = z.object({
  /** The issuer URL (for OIDC_ISSUER=local, the fake provider's own address). */
  issuer: z.string(),
  local: z.boolean(),
  name: z.string(),
  groupClaim: z.string(),
  /** The address to register at the provider as the redirect (callback) URL. */
  redirectUrl: z.string(),
  clientId: z.string(),
});

/** GET /api/admin/sign-in: the mapping, the password rule and the provider (null where none is set up). */
export const adminSignInSchema = signInSettingsSchema.extend({ provider: identityProviderSchema.nullable() });
export type AdminSignIn = z.infer<typeof adminSignInSchema>;
