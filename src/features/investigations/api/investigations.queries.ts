import { queryOptions, useMutation, useQueryClient } from "@tanstack/react-query";
import { z } from "zod";
import { investigationSchema, investigationSummarySchema, personSchema, type Investigation, type InvestigationCreate } from "@shared/api/investigations";
import { api, apiUpload, type UploadProgress } from "@/lib/api-client";

export type InvestigationListParams = { status?: "open" | "in_progress" | "closed" | "active"; heatNo?: string };

export const investigationKeys = {
  all: ["investigations"] as const,
  lists: () => [...investigationKeys.all, "list"] as const,
  list: (params: InvestigationListParams = {}) =>
    queryOptions({
      queryKey: [...investigationKeys.lists(), params] as const,
      queryFn: ({ signal }) => api("/investigations", { query: params, signal, schema: z.object({ items: z.array(investigationSummarySchema) }) }),
    }),
  detail: (id: number) =>
    queryOptions({
      queryKey: [...investigationKeys.all, "detail", id] as const,
      queryFn: ({ signal }) => api(`/investigations/${id}`, { signal, schema: investigationSchema }),
    }),
  people: () =>
    queryOptions({
      queryKey: [...investigationKeys.all, "people"] as const,
      queryFn: ({ signal }) => api("/investigations/people", { signal, schema: z.object({ people: z.array(personSchema) }) }),
      staleTime: 5 * 60_000,
    }),
};

export function useCreateInvestigation() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: InvestigationCreate) => api("/investigations", { method: "POST", body: input, schema: investigationSchema }),
    onSuccess: (inv) => {
      qc.setQueryData(investigationKeys.detail(inv.id).queryKey, inv);
      return qc.invalidateQueries({ queryKey: investigationKeys.lists() });
    },
  });
}

type Method = "POST" | "PATCH";

/**
 * Every change to an investigation answers with the whole investigation: it replaces the cached
 * one, and the lists (counts, overdue actions) are asked again.
 */
export function useInvestigationChange(id: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ path, method = "POST", body }: { path: string; method?: Method; body: unknown }) =>
      api(`/investigations/${id}${path}`, { method, body, schema: investigationSchema }),
    onSuccess: (inv) => {
      qc.setQueryData(investigationKeys.detail(id).queryKey, inv);
      return qc.invalidateQueries({ queryKey: investigationKeys.lists() });
    },
  });
}

/** Attachments go up one file at a time, each with its own progress; the last answer is the investigation. */
export function useUploadAttachments(id: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: async ({ files, onProgress }: { files: File[]; onProgress: (index: number, p: UploadProgress) => void }) => {
      let last: Investigation | undefined;
      for (const [i, file] of files.entries()) {
        last = await apiUpload(`/investigations/${id}/attachments`, file, { field: "files", schema: investigationSchema, onProgress: (p) => onProgress(i, p) });
        qc.setQueryData(investigationKeys.detail(id).queryKey, last);
      }
      return last!;
    },
    onSettled: () => qc.invalidateQueries({ queryKey: investigationKeys.all }),
  });
}
