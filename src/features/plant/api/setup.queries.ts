import { useMutation, useQueryClient } from "@tanstack/react-query";
import { z } from "zod";
import { gradeFamilyInputSchema, gradeInputSchema, gradeUpdateSchema, plantSettingsSchema, type PlantSettings, type StrandUpdate } from "@shared/api/heats";
import { api } from "@/lib/api-client";
import { plantKeys } from "./plant.queries";

const recomputed = z.object({ slabsResolved: z.number().int() });

type Options = { onRecomputed?: (slabs: number) => void };

/** Setup changes refresh the whole plant cache; the caller refreshes what else the recomputed slabs touch. */
function useSetupMutation<I, O>(fn: (input: I) => Promise<O>, { onRecomputed }: Options = {}) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: fn,
    onSuccess: (out) => {
      void qc.invalidateQueries({ queryKey: plantKeys.all });
      const n = (out as { slabsResolved?: number } | undefined)?.slabsResolved;
      if (typeof n === "number" && n > 0) onRecomputed?.(n);
    },
  });
}

export function useSaveSettings(opts?: Options) {
  return useSetupMutation(
    (settings: PlantSettings) => api("/plant/settings", { method: "PUT", body: settings, schema: recomputed.extend({ settings: plantSettingsSchema }) }),
    opts,
  );
}

export function useUpdateStrand(opts?: Options) {
  return useSetupMutation(
    ({ id, ...change }: StrandUpdate & { id: number }) =>
      // The answer's `strand` is not read: the setup list is fetched again instead.
      api(`/plant/strands/${id}`, { method: "PATCH", body: change, schema: recomputed }),
    opts,
  );
}

export function useCreateFamily() {
  return useSetupMutation((input: z.input<typeof gradeFamilyInputSchema>) => api("/plant/grade-families", { method: "POST", body: input }));
}

export function useUpdateFamily() {
  return useSetupMutation(({ code, ...change }: { code: string; name?: string; description?: string | null }) =>
    api(`/plant/grade-families/${encodeURIComponent(code)}`, { method: "PATCH", body: change }),
  );
}

export function useCreateGrade() {
  return useSetupMutation((input: z.input<typeof gradeInputSchema>) => api("/plant/grades", { method: "POST", body: input }));
}

export function useUpdateGrade(opts?: Options) {
  return useSetupMutation(
    ({ code, ...change }: z.input<typeof gradeUpdateSchema> & { code: string }) =>
      api(`/plant/grades/${encodeURIComponent(code)}`, { method: "PATCH", body: change }),
    opts,
  );
}
