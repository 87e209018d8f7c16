import { queryOptions, useMutation, useQueryClient } from "@tanstack/react-query";
import { sessionSchema, type Me } from "@shared/api/users";
import { api, ApiError } from "@/lib/api-client";
import { forgetUser, rememberedUser, rememberUser } from "../remembered-user";

export const authKeys = {
  all: ["auth"] as const,
  me: () =>
    queryOptions({
      queryKey: [...authKeys.all, "me"] as const,
      // Signed out is an answer, not an error: null.
      queryFn: async (): Promise<Me | null> => {
        try {
          // Asked where a signed-out answer is a 200 (me: null), so a signed-out start logs no error.
          const { me } = await api("/session", { schema: sessionSchema });
          if (me) rememberUser(me);
          else forgetUser();
          return me;
        } catch (err) {
          if (err instanceof ApiError && err.status === 401) {
            forgetUser();
            return null;
          }
          // No network: the tablet starts as the last user the server confirmed here (remembered-user.ts).
          const last = err instanceof ApiError && err.status === 0 ? rememberedUser() : null;
          if (last) return last;
          throw err;
        }
      },
      staleTime: 60_000,
    }),
};

export function useSignIn() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: { email: string; password: string }) => api("/auth/sign-in/email", { method: "POST", body: { ...input, rememberMe: true } }),
    // A new user: nothing cached for the previous one may show.
    onSuccess: () => qc.clear(),
  });
}

export function useSignOut() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => api("/auth/sign-out", { method: "POST", body: {} }),
    // Forget everything cached for this user — only once the server has ended the session.
    onSuccess: () => {
      forgetUser();
      qc.clear();
    },
  });
}

/** Asks for a reset link by mail. The server answers the same whether or not the address has an account. */
export function useRequestPasswordReset() {
  return useMutation({
    mutationFn: (email: string) => api("/auth/request-password-reset", { method: "POST", body: { email, redirectTo: "/reset-password" } }),
  });
}

/** Sets a new password with the token from the mailed link. */
export function useResetPassword() {
  return useMutation({
    mutationFn: (input: { token: string; newPassword: string }) => api("/auth/reset-password", { method: "POST", body: input }),
  });
}
