import { queryOptions, useMutation, useQueryClient } from "@tanstack/react-query";
import { riskModelListSchema, riskModelSchema, type TrainRiskModelBody } from "@shared/api/risk";
import { api } from "@/lib/api-client";

export const riskKeys = {
  all: ["risk-models"] as const,
  /** While a training runs, the list is asked for every second: it carries the progress. */
  list: (polling = false) =>
    queryOptions({
      queryKey: [...riskKeys.all, "list"] as const,
      queryFn: ({ signal }) => api("/risk-models", { signal, schema: riskModelListSchema }),
      refetchInterval: polling ? 1000 : false,
    }),
  detail: (id: number) =>
    queryOptions({
      queryKey: [...riskKeys.all, "detail", id] as const,
      queryFn: ({ signal }) => api(`/risk-models/${id}`, { signal, schema: riskModelSchema }),
    }),
};

export function useTrainRiskModel() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: TrainRiskModelBody) => api("/risk-models", { method: "POST", body, schema: riskModelSchema }),
    onSettled: () => qc.invalidateQueries({ queryKey: riskKeys.all }),
  });
}

export function useActivateRiskModel() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (id: number) => api(`/risk-models/${id}/activate`, { method: "POST", schema: riskModelSchema }),
    onSettled: () => qc.invalidateQueries({ queryKey: riskKeys.all }),
  });
}
