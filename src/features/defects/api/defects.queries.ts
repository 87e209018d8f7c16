import { queryOptions, useMutation, useQueryClient } from "@tanstack/react-query";
import type { DefectListQuery, DefectReview, DefectUpdate } from "@shared/api/defects";
import { api } from "@/lib/api-client";
import { recordSchema } from "@/lib/record-schema";

// The schemas come with the first answer that needs them (src/lib/record-schemas.ts): this module is in the app's first script.
const defectListSchema = recordSchema("defectListSchema");
const defectSchema = recordSchema("defectSchema");

/** The list's filters as the client sends them (the schema's input types page and pageSize loosely). */
export type DefectFilters = Omit<DefectListQuery, "page" | "pageSize" | "minSeverity"> & { page?: number; pageSize?: number; minSeverity?: number };

export const defectKeys = {
  all: ["defects"] as const,
  lists: () => [...defectKeys.all, "list"] as const,
  list: (filters: DefectFilters) =>
    queryOptions({
      queryKey: [...defectKeys.lists(), filters] as const,
      queryFn: ({ signal }) => api("/defects", { query: { ...filters }, signal, schema: defectListSchema }),
    }),
  /** The signed-in user's entries found since `from` (a date or a timestamp). */
  mine: (from: string) =>
    queryOptions({
      ...defectKeys.list({ mine: "true", from, sort: "newest", pageSize: 200 }),
      // The yard's list: refreshed often, kept while offline.
      staleTime: 10_000,
      gcTime: 24 * 60 * 60_000,
    }),
  detail: (id: number) =>
    queryOptions({
      queryKey: [...defectKeys.all, "detail", id] as const,
      queryFn: ({ signal }) => api(`/defects/${id}`, { signal, schema: defectSchema }),
    }),
};

export function useUpdateDefect() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, changes }: { id: number; changes: DefectUpdate }) => api(`/defects/${id}`, { method: "PATCH", body: changes }),
    onSuccess: () => qc.invalidateQueries({ queryKey: defectKeys.all }),
  });
}

export function useDeleteDefect() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => api(`/defects/${id}`, { method: "DELETE" }),
    onSuccess: () => qc.invalidateQueries({ queryKey: defectKeys.all }),
  });
}

export function useDeletePhoto() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (photoId: string) => api(`/photos/${encodeURIComponent(photoId)}`, { method: "DELETE" }),
    onSuccess: () => qc.invalidateQueries({ queryKey: defectKeys.all }),
  });
}

export function useReviewDefect() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, review }: { id: number; review: DefectReview }) => api(`/defects/${id}/review`, { method: "POST", body: review, schema: defectSchema }),
    onSuccess: () => qc.invalidateQueries({ queryKey: defectKeys.all }),
  });
}

/** "Today" is the tablet's own day: from its local midnight (the server takes a full timestamp). */
export function todayRange(now = new Date()) {
  const midnight = new Date(now.getFullYear(), now.getMonth(), now.getDate()).toISOString();
  return { from: midnight, since: midnight };
}
