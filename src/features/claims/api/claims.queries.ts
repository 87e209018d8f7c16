import { useState } from "react";
import { queryOptions, useMutation, useQueryClient } from "@tanstack/react-query";
import { z } from "zod";
import {
  claimSchema,
  claimSummarySchema,
  heatHistorySchema,
  traceSchema,
  type Claim,
  type ClaimCreate,
  type CustomerSection,
  type HistoryEdition,
} from "@shared/api/claims";
import type { ClaimStatus } from "@shared/domain";
import { api, apiUpload, type UploadProgress } from "@/lib/api-client";
import { downloadFile, type DownloadProgress } from "@/lib/download";

export type ClaimListParams = { status?: ClaimStatus; q?: string };

export const claimKeys = {
  all: ["claims"] as const,
  lists: () => [...claimKeys.all, "list"] as const,
  list: (params: ClaimListParams = {}) =>
    queryOptions({
      queryKey: [...claimKeys.lists(), params] as const,
      queryFn: ({ signal }) => api("/claims", { query: params, signal, schema: z.object({ items: z.array(claimSummarySchema) }) }),
    }),
  detail: (id: number) =>
    queryOptions({
      queryKey: [...claimKeys.all, "detail", id] as const,
      queryFn: ({ signal }) => api(`/claims/${id}`, { signal, schema: claimSchema }),
    }),
};

/** Which edition of a heat's history: the internal one unless the customer's is asked for. */
export type HistoryEditionChoice = { edition?: HistoryEdition; sections?: CustomerSection[]; claim?: number };
export const editionQuery = (e: HistoryEditionChoice) =>
  e.edition === "customer"
    ? { edition: "customer", ...(e.sections ? { sections: e.sections.join(",") } : {}), ...(e.claim ? { claim: String(e.claim) } : {}) }
    : e.claim
      ? { claim: String(e.claim) }
      : undefined;

/** The trace and a heat's history: read by claims work, changed by every other feature, so kept short-lived. */
export const historyKeys = {
  all: ["heat-history"] as const,
  trace: (q: string) =>
    queryOptions({
      queryKey: [...historyKeys.all, "trace", q.trim().toUpperCase()] as const,
      queryFn: ({ signal }) => api("/trace", { query: { q: q.trim() }, signal, schema: traceSchema }),
      staleTime: 10_000,
    }),
  /** The internal edition, or the customer edition with its parts and the claim's cover. */
  heat: (heatNo: string, edition: HistoryEditionChoice = {}) =>
    queryOptions({
      queryKey: [...historyKeys.all, "heat", heatNo, edition] as const,
      queryFn: ({ signal }) => api(`/heats/${encodeURIComponent(heatNo)}/history`, { query: editionQuery(edition), signal, schema: heatHistorySchema }),
      staleTime: 10_000,
    }),
};

export function useCreateClaim() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: ClaimCreate) => api("/claims", { method: "POST", body: input, schema: claimSchema }),
    onSuccess: (claim) => {
      qc.setQueryData(claimKeys.detail(claim.id).queryKey, claim);
      void qc.invalidateQueries({ queryKey: historyKeys.all });
      return qc.invalidateQueries({ queryKey: claimKeys.lists() });
    },
  });
}

/**
 * Every change to a claim answers with the whole claim: it replaces the cached one; the lists
 * (status, counts) and the heat histories (which list the claims on each heat) are asked again.
 */
export function useClaimChange(id: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ path = "", method, body }: { path?: string; method: "POST" | "PATCH" | "DELETE"; body?: unknown }) =>
      api(`/claims/${id}${path}`, { method, body, schema: claimSchema }),
    onSuccess: (claim) => {
      qc.setQueryData(claimKeys.detail(id).queryKey, claim);
      void qc.invalidateQueries({ queryKey: historyKeys.all });
      return qc.invalidateQueries({ queryKey: claimKeys.lists() });
    },
  });
}

/** Attachments go up one file at a time, each with its own progress; the last answer is the claim. */
export function useUploadClaimAttachments(id: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: async ({ files, onProgress }: { files: File[]; onProgress: (index: number, p: UploadProgress) => void }) => {
      let last: Claim | undefined;
      for (const [i, file] of files.entries()) {
        last = await apiUpload(`/claims/${id}/attachments`, file, { field: "files", schema: claimSchema, onProgress: (p) => onProgress(i, p) });
        qc.setQueryData(claimKeys.detail(id).queryKey, last);
      }
      return last!;
    },
    onSettled: () => qc.invalidateQueries({ queryKey: claimKeys.all }),
  });
}

export const sendHistoryAnswerSchema = z.object({ messageId: z.number().int(), claim: claimSchema });

/** Queues an e-mail with the heat's history workbook; the claim's history then records the sending. */
export function useSendHistory(id: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: { heatNo: string; to: string[]; message?: string; edition: HistoryEdition; sections?: CustomerSection[] }) =>
      api(`/claims/${id}/send-history`, { method: "POST", body: input, schema: sendHistoryAnswerSchema }),
    onSuccess: (answer) => {
      qc.setQueryData(claimKeys.detail(id).queryKey, answer.claim);
    },
  });
}

/** The heat history workbook as a download, with its progress while it comes. */
export function useHistoryWorkbook() {
  const [progress, setProgress] = useState<DownloadProgress | null>(null);
  const mutation = useMutation({
    mutationFn: ({ heatNo, edition = {} }: { heatNo: string; edition?: HistoryEditionChoice }) => {
      setProgress({ loaded: 0, fraction: null });
      const q = editionQuery(edition);
      const search = q ? `?${new URLSearchParams(q).toString()}` : "";
      return downloadFile(
        `/heats/${encodeURIComponent(heatNo)}/history.xlsx${search}`,
        `strandsight-heat-${heatNo}-history-${edition.edition === "customer" ? "customer" : "internal"}.xlsx`,
        setProgress,
      );
    },
    onSettled: () => setProgress(null),
  });
  return { ...mutation, progress };
}
