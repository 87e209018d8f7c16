import { queryOptions, useMutation, useQueryClient, type QueryKey } from "@tanstack/react-query";
import { z } from "zod";
import type { BulkTag, TagDefect } from "@shared/api/causes";
import { api } from "@/lib/api-client";

// The schemas come with the first answer that needs them (src/lib/api-client.ts): a report screen's
// first view needs none of them (the filter bar's cause tags are read after it).
const schemas = () => import("@shared/api/causes");
const bulkTagResultSchema = () => schemas().then((m) => m.bulkTagResultSchema);
const causeTagSchema = () => schemas().then((m) => m.causeTagSchema);
const causeTaxonomySchema = () => schemas().then((m) => m.causeTaxonomySchema);
const defectCausesSchema = () => schemas().then((m) => m.defectCausesSchema);

export const causeKeys = {
  all: ["causes"] as const,
  /** The groups and their tags; with retired ones for the editor and for reading old taggings. */
  taxonomy: (includeRetired = false) =>
    queryOptions({
      queryKey: [...causeKeys.all, "taxonomy", { includeRetired }] as const,
      queryFn: ({ signal }) => api("/cause-tags", { query: includeRetired ? { includeRetired: "true" } : undefined, signal, schema: causeTaxonomySchema }),
      staleTime: 5 * 60_000,
    }),
  defect: (defectId: number) =>
    queryOptions({
      queryKey: [...causeKeys.all, "defect", defectId] as const,
      queryFn: ({ signal }) => api(`/defects/${defectId}/causes`, { signal, schema: defectCausesSchema }),
    }),
};

/**
 * A tagging changes what other screens show (a slab's chips, a heat's defects, the cause Pareto):
 * the screen that offers the change names those screens' keys, so this feature need not know them.
 */
type Affects = { affects?: readonly QueryKey[] };

function useInvalidate(affects: readonly QueryKey[] = []) {
  const qc = useQueryClient();
  return () => Promise.all([causeKeys.all, ...affects].map((queryKey) => qc.invalidateQueries({ queryKey })));
}

export type CauseTagInput = { code: string; name: string; group: string; description?: string | null };
export type CauseTagChanges = { name?: string; group?: string; description?: string | null; retired?: boolean };

export function useCreateCauseTag() {
  const invalidate = useInvalidate();
  return useMutation({
    mutationFn: (input: CauseTagInput) => api("/cause-tags", { method: "POST", body: input, schema: causeTagSchema }),
    onSuccess: invalidate,
  });
}

export function useUpdateCauseTag({ affects }: Affects = {}) {
  const invalidate = useInvalidate(affects);
  return useMutation({
    mutationFn: ({ code, changes }: { code: string; changes: CauseTagChanges }) =>
      api(`/cause-tags/${encodeURIComponent(code)}`, { method: "PATCH", body: changes, schema: causeTagSchema }),
    onSuccess: invalidate,
  });
}

export function useDeleteCauseTag() {
  const invalidate = useInvalidate();
  return useMutation({
    mutationFn: (code: string) =>
      api(`/cause-tags/${encodeURIComponent(code)}`, { method: "DELETE", schema: z.object({ code: z.string(), deleted: z.literal(true) }) }),
    onSuccess: invalidate,
  });
}

export function useTagDefect(defectId: number, { affects }: Affects = {}) {
  const invalidate = useInvalidate(affects);
  return useMutation({
    mutationFn: (input: TagDefect) => api(`/defects/${defectId}/causes`, { method: "POST", body: input, schema: defectCausesSchema }),
    onSuccess: invalidate,
  });
}

export function useUntagDefect(defectId: number, { affects }: Affects = {}) {
  const invalidate = useInvalidate(affects);
  return useMutation({
    mutationFn: ({ linkId, reason }: { linkId: number; reason?: string }) =>
      api(`/defects/${defectId}/causes/${linkId}`, { method: "DELETE", body: reason ? { reason } : {}, schema: defectCausesSchema }),
    onSuccess: invalidate,
  });
}

/** The dry run writes nothing, so only the real run refreshes other screens. */
export function useBulkTag({ affects }: Affects = {}) {
  const invalidate = useInvalidate(affects);
  return useMutation({
    mutationFn: (input: BulkTag) => api("/causes/bulk", { method: "POST", body: input, schema: bulkTagResultSchema }),
    onSuccess: (result) => (result.dryRun ? undefined : invalidate()),
  });
}
