import { queryOptions, useMutation, useQueryClient } from "@tanstack/react-query";
import { meSchema, type Me } from "@shared/api/users";
import { api, ApiError } from "@/lib/api-client";

export const authKeys = {
  all: ["auth"] as const,
  me: () =>
    queryOptions({
      queryKey: [...authKeys.all, "me"] as const,
      // Signed out is an answer, not an error: null.
      queryFn: async (): Promise<Me | null> => {
        try {
          return await api("/me", { schema: meSchema });
        } catch (err) {
          if (err instanceof ApiError && err.status === 401) return null;
          throw err;
        }
      },
      staleTime: 5 * 60_000,
    }),
};

export function useSignIn() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: { email: string; password: string }) =>
      api("/auth/sign-in/email", { method: "POST", body: { ...input, rememberMe: true } }),
    onSuccess: async () => {
      await qc.invalidateQueries({ queryKey: authKeys.all });
    },
  });
}

export function useSignOut() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => api("/auth/sign-out", { method: "POST", body: {} }),
    onSettled: () => {
      // Forget everything cached for the previous user.
      qc.clear();
    },
  });
}
