import { queryOptions } from "@tanstack/react-query";
import { api } from "@/lib/api-client";
import { recordSchema } from "@/lib/record-schema";

// The schema comes with the first answer that needs it (src/lib/record-schemas.ts): this module is in the app's first script.
const slabDetailSchema = recordSchema("slabDetailSchema");

export const slabKeys = {
  all: ["slabs"] as const,
  detail: (slabId: string) =>
    queryOptions({
      queryKey: [...slabKeys.all, "detail", slabId] as const,
      queryFn: ({ signal }) => api(`/slabs/${encodeURIComponent(slabId)}`, { signal, schema: slabDetailSchema }),
    }),
};
