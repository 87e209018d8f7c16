import { z } from "zod";
import { roleSchema } from "../roles";
import { languageSchema } from "../i18n/languages";

export const meSchema = z.object({
  id: z.string(),
  name: z.string(),
  email: z.string(),
  roles: z.array(roleSchema),
  /**
   * An administrator set this person's password: they must choose their own before anything else
   * (every other route answers 403 `password_change_required`). Sent only while true.
   */
  mustChangePassword: z.literal(true).optional(),
  /** The language the person chose for screens, e-mails and workbooks; absent: none chosen (the browser's). */
  language: languageSchema.optional(),
});
export type Me = z.infer<typeof meSchema>;

/**
 * GET /api/session: who is signed in, open without a session, so a signed-out start is an answer
 * (200, `me: null`) and not an error the browser logs. /api/me stays the signed-in door (401).
 */
export const sessionSchema = z.object({ me: meSchema.nullable() });

/**
 * How a new person gets in, chosen by the administrator who creates the account (one way, never both):
 * - `invitation`: an e-mail with a link where they choose their own password; no password until then.
 * - `first_password`: the administrator sets a first password and hands it over; at their first
 *   sign-in the person must choose their own before anything else opens.
 */
export const FIRST_SIGN_IN = ["invitation", "first_password"] as const;
export const firstSignInSchema = z.enum(FIRST_SIGN_IN);
export type FirstSignIn = z.infer<typeof firstSignInSchema>;

export const adminUserSchema = z.object({
  id: z.string(),
  name: z.string(),
  email: z.string(),
  roles: z.array(roleSchema),
  active: z.boolean(),
  createdAt: z.string(),
  /** Client addresses this account's sign-in is locked from after repeated wrong passwords, and until when. */
  lockedFrom: z.array(z.object({ address: z.string(), until: z.string() })),
  /**
   * While the person has no password of their own: `invitation` (the mailed link is not used yet) or
   * `first_password` (set by an administrator, to be changed at first sign-in); null once they chose one.
   */
  firstSignIn: firstSignInSchema.nullable(),
});
export type AdminUser = z.infer<typeof adminUserSchema>;

/** The answer to a creation: the account, and for an invitation whether its message is in the mail queue. */
export const createdUserSchema = adminUserSchema.extend({
  invitationQueued: z.boolean().nullable(),
});
export type CreatedUser = z.infer<typeof createdUserSchema>;

export const passwordSchema = z.string().min(10, "Use at least 10 characters.").max(128, "Use at most 128 characters.");

// Line breaks, tabs, escape codes and the bidirectional overrides that make text display as
// something else have no place in a name that every history, list and mail shows.
const NOT_IN_A_NAME = /[\p{Cc}\u061C\u200E\u200F\u2028\u2029\u202A-\u202E\u2066-\u2069]/u;

export const personNameSchema = z
  .string()
  .trim()
  .min(1, "Give the person's name.")
  .max(120, "Use at most 120 characters for a name.")
  .refine((v) => !NOT_IN_A_NAME.test(v), "A name cannot hold line breaks, tabs or other control characters.");

/**
 * A new account. `firstSignIn` says how the person gets in; left out, a given `password` means
 * `first_password` and none means `invitation`. A first password with an invitation is refused: one
 * way only.
 */
export const createUserSchema = z
  .object({
    name: personNameSchema,
    email: z.string().trim().toLowerCase().email("This is not an e-mail address."),
    roles: z.array(roleSchema).min(1, "Give the user at least one role."),
    firstSignIn: firstSignInSchema.optional(),
    password: passwordSchema.optional(),
  })
  .superRefine((v, ctx) => {
    if (v.firstSignIn === "first_password" && v.password === undefined) {
      ctx.addIssue({ code: "custom", path: ["password"], message: "Give the first password, or send an invitation instead." });
    }
    if (v.firstSignIn === "invitation" && v.password !== undefined) {
      ctx.addIssue({ code: "custom", path: ["password"], message: "With an invitation the person chooses their own password: leave the first password out." });
    }
  });
export type CreateUserInput = z.infer<typeof createUserSchema>;

/** The way a creation takes: the one named, else a first password when one is given. */
export const firstSignInOf = (input: Pick<CreateUserInput, "firstSignIn" | "password">): FirstSignIn =>
  input.firstSignIn ?? (input.password !== undefined ? "first_password" : "invitation");

/** A person replaces the first password an administrator set (or changes their own). */
export const changeOwnPasswordSchema = z
  .object({
    currentPassword: z.string().min(1, "Type the password you signed in with.").max(128, "Use at most 128 characters."),
    newPassword: passwordSchema,
  })
  .refine((v) => v.newPassword !== v.currentPassword, {
    path: ["newPassword"],
    message: "Choose a password different from the one you have now.",
  });
export type ChangeOwnPasswordInput = z.infer<typeof changeOwnPasswordSchema>;

export const updateUserSchema = z
  .object({
    name: personNameSchema.optional(),
    roles: z.array(roleSchema).min(1, "A user keeps at least one role.").optional(),
    active: z.boolean().optional(),
  })
  .refine((v) => v.name !== undefined || v.roles !== undefined || v.active !== undefined, {
    message: "Nothing to change.",
  });
export type UpdateUserInput = z.infer<typeof updateUserSchema>;
