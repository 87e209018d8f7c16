import { queryOptions, useMutation, useQueryClient } from "@tanstack/react-query";
import { adminSignInSchema, type SignInSettings } from "@shared/api/sign-in-admin";
import { plantKeys } from "@/features/plant/api/plant.queries";
import { api } from "@/lib/api-client";

export const signInKeys = {
  all: ["sign-in-settings"] as const,
  settings: () => queryOptions({ queryKey: [...signInKeys.all] as const, queryFn: () => api("/admin/sign-in", { schema: adminSignInSchema }) }),
};

export function useSaveSignInSettings() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: SignInSettings) => api("/admin/sign-in", { method: "PUT", body: input, schema: adminSignInSchema }),
    onSuccess: (data) => {
      qc.setQueryData(signInKeys.settings().queryKey, data);
      // The sign-in page's offer (about) follows the password rule.
      void qc.invalidateQueries({ queryKey: plantKeys.about().queryKey });
    },
  });
}
