import { queryOptions, useMutation, useQueryClient } from "@tanstack/react-query";
import {
  operatingWindowSchema,
  retiredWindowSchema,
  windowFlagsSchema,
  windowListSchema,
  type CreateWindowBody,
  type UpdateWindowBody,
} from "@shared/api/operating-windows";
import { api } from "@/lib/api-client";

export const windowKeys = {
  all: ["operating-windows"] as const,
  /** The rules with their records on history; from/to: cast dates (YYYY-MM-DD), default the last 365 days. */
  list: (window: { from?: string; to?: string } = {}) =>
    queryOptions({
      queryKey: [...windowKeys.all, "list", window] as const,
      queryFn: ({ signal }) => api("/operating-windows", { query: window, signal, schema: windowListSchema }),
    }),
  /** The live rules flagging one slab (its plant id). */
  flags: (slabId: string) =>
    queryOptions({
      queryKey: [...windowKeys.all, "flags", slabId] as const,
      queryFn: ({ signal }) => api("/operating-windows/flags", { query: { slabIds: slabId }, signal, schema: windowFlagsSchema }),
      enabled: slabId !== "",
    }),
};

export function useCreateWindow() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: CreateWindowBody) => api("/operating-windows", { method: "POST", body, schema: operatingWindowSchema }),
    onSettled: () => qc.invalidateQueries({ queryKey: windowKeys.all }),
  });
}

export function useUpdateWindow() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, body }: { id: number; body: UpdateWindowBody }) =>
      api(`/operating-windows/${id}`, { method: "PATCH", body, schema: operatingWindowSchema }),
    onSettled: () => qc.invalidateQueries({ queryKey: windowKeys.all }),
  });
}

export function useRetireWindow() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => api(`/operating-windows/${id}`, { method: "DELETE", schema: retiredWindowSchema }),
    onSettled: () => qc.invalidateQueries({ queryKey: windowKeys.all }),
  });
}
