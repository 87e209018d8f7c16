import { keepPreviousData, queryOptions } from "@tanstack/react-query";
import { heatDetailSchema, heatListSchema, heatSamplesSchema } from "@shared/api/heats";
import type { HeatListParams } from "@shared/heat-list-query";
import { api } from "@/lib/api-client";
import { readHeatListParams } from "../components/heat-list-params";

/** The list's query as it travels in the URL: everything optional, the server fills the defaults. */
export type { HeatListParams };

export const heatKeys = {
  all: ["heats"] as const,
  lists: () => [...heatKeys.all, "list"] as const,
  list: (params: HeatListParams) =>
    queryOptions({
      queryKey: [...heatKeys.lists(), params] as const,
      queryFn: ({ signal }) => api("/heats", { query: params, signal, schema: heatListSchema }),
      // Keep the previous page on screen while the next one loads: no jumping table.
      placeholderData: keepPreviousData,
    }),
  details: () => [...heatKeys.all, "detail"] as const,
  detail: (heatNo: string) =>
    queryOptions({
      queryKey: [...heatKeys.details(), heatNo] as const,
      queryFn: ({ signal }) => api(`/heats/${encodeURIComponent(heatNo)}`, { signal, schema: heatDetailSchema }),
    }),
  samples: (heatNo: string, maxPoints = 1500) =>
    queryOptions({
      queryKey: [...heatKeys.all, "samples", heatNo, maxPoints] as const,
      queryFn: ({ signal }) => api(`/heats/${encodeURIComponent(heatNo)}/samples`, { query: { maxPoints }, signal, schema: heatSamplesSchema }),
      staleTime: 5 * 60_000,
    }),
};

/** The list an address asks for (the heats list's early loader: src/app/routes/heats.loader.ts). */
export const heatListOf = (searchParams: URLSearchParams) => heatKeys.list(readHeatListParams(searchParams));
