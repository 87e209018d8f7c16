import { queryOptions, useMutation, useQueryClient } from "@tanstack/react-query";
import type { z } from "zod";
import type { defectCategoryInputSchema, defectCategoryUpdateSchema, defectTypeInputSchema, defectTypeUpdateSchema } from "@shared/api/defects";
import { api } from "@/lib/api-client";
import { recordSchema } from "@/lib/record-schema";

// The schema comes with the first answer that needs it (src/lib/record-schemas.ts): this module is in the app's first script.
const catalogueSchema = recordSchema("catalogueSchema");

export const catalogueKeys = {
  all: ["defect-types"] as const,
  /** Active types for logging; with retired ones for the editor. */
  list: (includeRetired = false) =>
    queryOptions({
      queryKey: [...catalogueKeys.all, { includeRetired }] as const,
      queryFn: ({ signal }) => api("/defect-types", { query: includeRetired ? { includeRetired: true } : undefined, signal, schema: catalogueSchema }),
      // The yard needs it when the Wi-Fi drops: keep it for the shift.
      staleTime: 5 * 60_000,
      gcTime: 24 * 60 * 60_000,
    }),
};

/** After a change the list is read again: it carries the categories' names and the order. */
const invalidate = (qc: ReturnType<typeof useQueryClient>) => qc.invalidateQueries({ queryKey: catalogueKeys.all });

export function useCreateType() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: z.input<typeof defectTypeInputSchema>) => api("/defect-types", { method: "POST", body: input }),
    onSuccess: () => invalidate(qc),
  });
}

export function useUpdateType() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ code, changes }: { code: string; changes: z.input<typeof defectTypeUpdateSchema> }) =>
      api(`/defect-types/${encodeURIComponent(code)}`, { method: "PATCH", body: changes }),
    onSuccess: () => invalidate(qc),
  });
}

export function useCreateCategory() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: z.input<typeof defectCategoryInputSchema>) => api("/defect-categories", { method: "POST", body: input }),
    onSuccess: () => invalidate(qc),
  });
}

export function useUpdateCategory() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ code, changes }: { code: string; changes: z.input<typeof defectCategoryUpdateSchema> }) =>
      api(`/defect-categories/${encodeURIComponent(code)}`, { method: "PATCH", body: changes }),
    onSuccess: () => invalidate(qc),
  });
}
