import { queryOptions } from "@tanstack/react-query";
import { z } from "zod";
import { aboutSchema, plantSummarySchema, slabHitSchema } from "@shared/api/plant";
import { api } from "@/lib/api-client";

export const plantKeys = {
  all: ["plant"] as const,
  about: () => queryOptions({ queryKey: [...plantKeys.all, "about"] as const, queryFn: () => api("/about", { schema: aboutSchema }), staleTime: Infinity }),
  summary: () =>
    queryOptions({ queryKey: [...plantKeys.all, "summary"] as const, queryFn: () => api("/plant/summary", { schema: plantSummarySchema }) }),
  slabSearch: (q: string) =>
    queryOptions({
      queryKey: [...plantKeys.all, "slab-search", q] as const,
      queryFn: ({ signal }) => api("/slabs/search", { query: { q }, signal, schema: z.object({ slabs: z.array(slabHitSchema) }) }),
      enabled: q.trim().length > 0,
      staleTime: 10_000,
    }),
};
