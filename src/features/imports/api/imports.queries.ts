import { queryOptions, useMutation, useQueryClient } from "@tanstack/react-query";
import { z } from "zod";
import { importResultSchema, importRunSchema, type ImportKind, type ImportResult } from "@shared/api/imports";
import { ApiError, apiUpload, api, type UploadProgress } from "@/lib/api-client";

export const importKeys = {
  all: ["imports"] as const,
  runs: () =>
    queryOptions({
      queryKey: [...importKeys.all, "runs"] as const,
      queryFn: ({ signal }) => api("/import/runs", { signal, schema: z.object({ runs: z.array(importRunSchema) }) }),
    }),
};

export const templateUrl = (kind: ImportKind) => `/api/import/templates/${kind}.xlsx`;

export type ImportOutcome =
  /** A dry run: what a real import would do, or the rows that stop it. */
  | { status: "checked"; result: ImportResult }
  | { status: "imported"; result: ImportResult }
  /** A real import refused because of bad rows; nothing was written. */
  | { status: "rejected"; result: ImportResult };

export interface ImportRequest {
  kind: ImportKind;
  file: File;
  dryRun: boolean;
  onProgress?: (p: UploadProgress) => void;
  signal?: AbortSignal;
}

/** Sends a workbook or CSV; a real import refreshes what the callers name (heats, slabs…) and the runs list. */
export function useImportFile({ onImported }: { onImported?: (result: ImportResult) => void } = {}) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: async ({ kind, file, dryRun, onProgress, signal }: ImportRequest): Promise<ImportOutcome> => {
      try {
        const result = await apiUpload(`/import/${kind}`, file, { query: { dryRun }, schema: importResultSchema, onProgress, signal });
        return { status: dryRun ? "checked" : "imported", result };
      } catch (err) {
        if (err instanceof ApiError && err.status === 422 && err.code === "import_rejected") {
          const parsed = importResultSchema.safeParse(err.details);
          if (parsed.success) return { status: "rejected", result: parsed.data };
        }
        throw err;
      }
    },
    onSuccess: (outcome) => {
      if (outcome.status === "checked") return;
      void qc.invalidateQueries({ queryKey: importKeys.all });
      if (outcome.status === "imported") onImported?.(outcome.result);
    },
  });
}
