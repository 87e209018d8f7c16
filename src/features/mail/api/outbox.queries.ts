import { keepPreviousData, queryOptions, useMutation, useQueryClient } from "@tanstack/react-query";
import { outboxMessageSchema, outboxPageSchema } from "@shared/api/mail";
import { api } from "@/lib/api-client";

export type OutboxParams = { status?: string; kind?: string; to?: string; page?: number; pageSize?: number };

export const outboxKeys = {
  all: ["outbox"] as const,
  page: (params: OutboxParams) =>
    queryOptions({
      queryKey: [...outboxKeys.all, "page", params] as const,
      queryFn: ({ signal }) => api("/admin/outbox", { query: params, signal, schema: outboxPageSchema }),
      placeholderData: keepPreviousData,
      // Mail moves on its own (the worker sends in the background): look again now and then.
      refetchInterval: 15_000,
    }),
};

export function useRetryMail() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => api(`/admin/outbox/${id}/retry`, { method: "POST", body: {}, schema: outboxMessageSchema }),
    onSuccess: () => qc.invalidateQueries({ queryKey: outboxKeys.all }),
  });
}
