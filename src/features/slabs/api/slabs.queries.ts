import { queryOptions } from "@tanstack/react-query";
import { slabDetailSchema } from "@shared/api/heats";
import { api } from "@/lib/api-client";

export const slabKeys = {
  all: ["slabs"] as const,
  detail: (slabId: string) =>
    queryOptions({
      queryKey: [...slabKeys.all, "detail", slabId] as const,
      queryFn: ({ signal }) => api(`/slabs/${encodeURIComponent(slabId)}`, { signal, schema: slabDetailSchema }),
    }),
};
