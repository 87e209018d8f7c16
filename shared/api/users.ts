import { z } from "zod";
import { roleSchema } from "../roles";

export const meSchema = z.object({
  id: z.string(),
  name: z.string(),
  email: z.string(),
  roles: z.array(roleSchema),
});
export type Me = z.infer<typeof meSchema>;

export const adminUserSchema = z.object({
  id: z.string(),
  name: z.string(),
  email: z.string(),
  roles: z.array(roleSchema),
  active: z.boolean(),
  createdAt: z.string(),
  /** Client addresses this account's sign-in is locked from after repeated wrong passwords, and until when. */
  lockedFrom: z.array(z.object({ address: z.string(), until: z.string() })),
});
export type AdminUser = z.infer<typeof adminUserSchema>;

export const passwordSchema = z
  .string()
  .min(10, "Use at least 10 characters.")
  .max(128, "Use at most 128 characters.");

// Line breaks, tabs, escape codes and the bidirectional overrides that make text display as
// something else have no place in a name that every history, list and mail shows.
const NOT_IN_A_NAME = /[\p{Cc}\u061C\u200E\u200F\u2028\u2029\u202A-\u202E\u2066-\u2069]/u;

export const personNameSchema = z
  .string()
  .trim()
  .min(1, "Give the person's name.")
  .max(120, "Use at most 120 characters for a name.")
  .refine((v) => !NOT_IN_A_NAME.test(v), "A name cannot hold line breaks, tabs or other control characters.");

export const createUserSchema = z.object({
  name: personNameSchema,
  email: z.string().trim().toLowerCase().email("This is not an e-mail address."),
  roles: z.array(roleSchema).min(1, "Give the user at least one role."),
  password: passwordSchema,
});
export type CreateUserInput = z.infer<typeof createUserSchema>;

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
