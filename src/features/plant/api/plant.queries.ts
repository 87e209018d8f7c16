import { queryOptions } from "@tanstack/react-query";
import { z } from "zod";
import { aboutSchema, plantSetupSchema, plantSummarySchema, slabHitSchema } from "@shared/api/plant";
import { api } from "@/lib/api-client";
import { recordSchema } from "@/lib/record-schema";

// The formula settings' schema (with the heats' schemas) comes with the first answer that needs it
// (src/lib/record-schemas.ts): this module is in the app's first script.
const plantSettingsSchema = recordSchema("plantSettingsSchema");

export const plantKeys = {
  all: ["plant"] as const,
  about: () => queryOptions({ queryKey: [...plantKeys.all, "about"] as const, queryFn: () => api("/about", { schema: aboutSchema }), staleTime: Infinity }),
  summary: () => queryOptions({ queryKey: [...plantKeys.all, "summary"] as const, queryFn: () => api("/plant/summary", { schema: plantSummarySchema }) }),
  setup: () => queryOptions({ queryKey: [...plantKeys.all, "setup"] as const, queryFn: () => api("/plant/setup", { schema: plantSetupSchema }) }),
  /** The formula settings: liquidus coefficients, shell K, densities, liquid steel properties. */
  settings: () =>
    queryOptions({
      queryKey: [...plantKeys.all, "settings"] as const,
      queryFn: ({ signal }) => api("/plant/settings", { signal, schema: plantSettingsSchema }),
    }),
  slabSearch: (q: string) =>
    queryOptions({
      queryKey: [...plantKeys.all, "slab-search", q] as const,
      queryFn: ({ signal }) => api("/slabs/search", { query: { q }, signal, schema: z.object({ slabs: z.array(slabHitSchema) }) }),
      enabled: q.trim().length > 0,
      staleTime: 10_000,
    }),
};
