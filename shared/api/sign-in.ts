import { z } from "zod";

/**
 * Who may still use a local password once the plant signs in through its identity provider:
 * everyone, or administrators only (the break-glass accounts for a day the provider is down).
 */
export const LOCAL_PASSWORDS = ["everyone", "administrators"] as const;

/** GET /api/about's `signIn` (open): what the sign-in page offers. */
export const signInOptionsSchema = z.object({
  /** Single sign-on through the plant's identity provider, by the name people know it by; null where none is set up. */
  sso: z
    .object({
      name: z.string(),
      /** With the local fake provider only (development and demos): its invented people and their groups. */
      localPeople: z.array(z.object({ login: z.string(), groups: z.array(z.string()) })).optional(),
    })
    .nullable(),
  localPasswords: z.enum(LOCAL_PASSWORDS),
});
export type SignInOptions = z.infer<typeof signInOptionsSchema>;

/** The provider id under which better-auth knows the plant's identity provider (/api/auth/callback/plant). */
export const SSO_PROVIDER_ID = "plant";
