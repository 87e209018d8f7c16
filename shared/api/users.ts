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
});
export type AdminUser = z.infer<typeof adminUserSchema>;

export const passwordSchema = z
  .string()
  .min(10, "Use at least 10 characters.")
  .max(128, "Use at most 128 characters.");

export const createUserSchema = z.object({
  name: z.string().trim().min(1, "Give the person's name.").max(120),
  email: z.string().trim().toLowerCase().email("This is not an e-mail address."),
  roles: z.array(roleSchema).min(1, "Give the user at least one role."),
  password: passwordSchema,
});
export type CreateUserInput = z.infer<typeof createUserSchema>;

export const updateUserSchema = z
  .object({
    name: z.string().trim().min(1).max(120).optional(),
    roles: z.array(roleSchema).min(1, "A user keeps at least one role.").optional(),
    active: z.boolean().optional(),
  })
  .refine((v) => v.name !== undefined || v.roles !== undefined || v.active !== undefined, {
    message: "Nothing to change.",
  });
export type UpdateUserInput = z.infer<typeof updateUserSchema>;
