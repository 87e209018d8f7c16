import { queryOptions, useMutation, useQueryClient } from "@tanstack/react-query";
import { z } from "zod";
import { savedReportSchema, type savedReportInputSchema } from "@shared/api/reports";
import { api } from "@/lib/api-client";

export type SavedReport = z.infer<typeof savedReportSchema>;

export const savedReportKeys = {
  all: ["saved-reports"] as const,
  list: () =>
    queryOptions({
      queryKey: [...savedReportKeys.all, "list"] as const,
      queryFn: ({ signal }) => api("/saved-reports", { signal, schema: z.object({ reports: z.array(savedReportSchema) }) }),
    }),
};

export function useSaveReport() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: z.input<typeof savedReportInputSchema>) => api("/saved-reports", { method: "POST", body: input, schema: savedReportSchema }),
    onSuccess: () => qc.invalidateQueries({ queryKey: savedReportKeys.all }),
  });
}

export function useDeleteSavedReport() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => api(`/saved-reports/${id}`, { method: "DELETE" }),
    onSuccess: () => qc.invalidateQueries({ queryKey: savedReportKeys.all }),
  });
}
