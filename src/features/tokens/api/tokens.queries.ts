import { queryOptions, useMutation, useQueryClient } from "@tanstack/react-query";
import { z } from "zod";
import { apiTokenCreatedSchema, apiTokenSchema, type ApiTokenCreate } from "@shared/api/tokens";
import { api } from "@/lib/api-client";

export const tokenKeys = {
  all: ["tokens"] as const,
  list: () =>
    queryOptions({
      queryKey: [...tokenKeys.all, "list"] as const,
      queryFn: ({ signal }) => api("/admin/tokens", { signal, schema: z.object({ tokens: z.array(apiTokenSchema) }) }),
    }),
};

export function useCreateToken() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: ApiTokenCreate) => api("/admin/tokens", { method: "POST", body: input, schema: apiTokenCreatedSchema }),
    onSuccess: () => qc.invalidateQueries({ queryKey: tokenKeys.all }),
  });
}

export function useRevokeToken() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => api(`/admin/tokens/${id}`, { method: "DELETE", schema: apiTokenSchema }),
    onSuccess: () => qc.invalidateQueries({ queryKey: tokenKeys.all }),
  });
}
