import { queryOptions } from "@tanstack/react-query";
import { riskDriftSchema } from "@shared/api/risk-drift";
import { api } from "@/lib/api-client";

/** A model version's drift, month by month (reckoned by the server on each request). */
export const riskDriftKeys = {
  all: ["risk-models", "drift"] as const,
  detail: (id: number) =>
    queryOptions({
      queryKey: [...riskDriftKeys.all, id] as const,
      queryFn: ({ signal }) => api(`/risk-models/${id}/drift`, { signal, schema: riskDriftSchema }),
      staleTime: 5 * 60_000,
    }),
};
