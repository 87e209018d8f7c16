import { queryOptions, useMutation, useQueryClient } from "@tanstack/react-query";
import { yardSettingsSchema, yardSlabSchema, type YardSettings } from "@shared/api/yard";
import { api } from "@/lib/api-client";
import { readYardSet } from "../offline/yard-store";

export const yardKeys = {
  all: ["yard"] as const,
  /** The set kept on this tablet for the user (IndexedDB, not the network: it answers offline too). */
  set: (userId: string) =>
    queryOptions({
      queryKey: [...yardKeys.all, "set", userId] as const,
      queryFn: () => readYardSet(userId),
      networkMode: "always",
      staleTime: Infinity,
      gcTime: Infinity,
      retry: false,
    }),
  /** One slab as the set carries it, for a slab the tablet does not hold (online). */
  slab: (slabId: string) =>
    queryOptions({
      queryKey: [...yardKeys.all, "slab", slabId] as const,
      queryFn: ({ signal }) => api(`/yard/slabs/${encodeURIComponent(slabId)}`, { signal, schema: yardSlabSchema }),
      staleTime: 60_000,
    }),
  settings: () =>
    queryOptions({
      queryKey: [...yardKeys.all, "settings"] as const,
      queryFn: ({ signal }) => api("/yard/settings", { signal, schema: yardSettingsSchema }),
    }),
};

export function useSaveYardSettings() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (settings: YardSettings) => api("/yard/settings", { method: "PUT", body: settings, schema: yardSettingsSchema }),
    onSuccess: (saved) => qc.setQueryData(yardKeys.settings().queryKey, saved),
  });
}
