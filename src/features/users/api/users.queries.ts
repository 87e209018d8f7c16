import { queryOptions, useMutation, useQueryClient } from "@tanstack/react-query";
import { z } from "zod";
import { adminUserSchema, createdUserSchema, type ChangeOwnPasswordInput, type CreateUserInput, type UpdateUserInput } from "@shared/api/users";
import { api } from "@/lib/api-client";

export const userKeys = {
  all: ["users"] as const,
  list: () =>
    queryOptions({
      queryKey: [...userKeys.all, "list"] as const,
      queryFn: () => api("/admin/users", { schema: z.object({ users: z.array(adminUserSchema) }) }),
    }),
};

export function useCreateUser() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: CreateUserInput) => api("/admin/users", { method: "POST", body: input, schema: createdUserSchema }),
    onSuccess: () => qc.invalidateQueries({ queryKey: userKeys.all }),
  });
}

export function useUpdateUser() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, ...input }: UpdateUserInput & { id: string }) =>
      api(`/admin/users/${encodeURIComponent(id)}`, { method: "PATCH", body: input, schema: adminUserSchema }),
    onSuccess: () => qc.invalidateQueries({ queryKey: userKeys.all }),
  });
}

/** Lifts the sign-in lock an account got after repeated wrong passwords (from every address). */
export function useUnlockUser() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: string) => api(`/admin/users/${encodeURIComponent(id)}/unlock`, { method: "POST", body: {}, schema: adminUserSchema }),
    onSuccess: () => qc.invalidateQueries({ queryKey: userKeys.all }),
  });
}

/**
 * The signed-in person replaces their password (the first one an administrator set, or their own).
 * The server ends the account's other sessions and sends this one a fresh cookie; the caller reads
 * who is signed in again afterwards.
 */
export function useChangeOwnPassword() {
  return useMutation({
    mutationFn: (input: ChangeOwnPasswordInput) => api("/me/password", { method: "POST", body: input, schema: z.object({ changed: z.literal(true) }) }),
  });
}
