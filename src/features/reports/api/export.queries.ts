import { useState } from "react";
import { useMutation } from "@tanstack/react-query";
import { ApiError } from "@/lib/api-client";
import type { ReportKind } from "../components/report-params";

export interface DownloadProgress {
  loaded: number;
  /** 0…1 when the server gave the size, else null. */
  fraction: number | null;
}

/**
 * Fetches a report's workbook (`/api/reports/<kind>.xlsx?<the screen's query>`) as a blob, reading
 * it in chunks to report progress, then hands it to the browser as a download. The same query string
 * as the screen's, so the workbook holds the numbers on screen.
 */
async function fetchWorkbook(kind: ReportKind, query: string, onProgress: (p: DownloadProgress) => void): Promise<{ name: string; size: number }> {
  let res: Response;
  try {
    res = await fetch(`/api/reports/${kind}.xlsx${query ? `?${query}` : ""}`, { credentials: "same-origin" });
  } catch {
    throw new ApiError(0, "network", "No connection to the server. Check the network and try again.");
  }
  if (!res.ok) {
    const body = (await res.json().catch(() => undefined)) as { error?: { code?: string; message?: string; details?: unknown } } | undefined;
    throw new ApiError(res.status, body?.error?.code ?? "http_error", body?.error?.message ?? `The server answered ${res.status}.`, body?.error?.details);
  }
  const total = Number(res.headers.get("content-length")) || 0;
  const chunks: Uint8Array<ArrayBuffer>[] = [];
  let loaded = 0;
  const reader = res.body?.getReader();
  if (reader) {
    for (;;) {
      const { done, value } = await reader.read();
      if (done) break;
      chunks.push(value);
      loaded += value.byteLength;
      onProgress({ loaded, fraction: total ? Math.min(1, loaded / total) : null });
    }
  } else {
    const buf = new Uint8Array(await res.arrayBuffer());
    chunks.push(buf);
    loaded = buf.byteLength;
  }
  const name = /filename="?([^";]+)"?/.exec(res.headers.get("content-disposition") ?? "")?.[1] ?? `strandsight-${kind}.xlsx`;
  const blob = new Blob(chunks, { type: res.headers.get("content-type") ?? "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet" });
  const url = URL.createObjectURL(blob);
  const a = document.createElement("a");
  a.href = url;
  a.download = name;
  document.body.appendChild(a);
  a.click();
  a.remove();
  // The browser has taken the file once the click returns; free the memory a moment later.
  setTimeout(() => URL.revokeObjectURL(url), 10_000);
  return { name, size: loaded };
}

/** The export as a mutation: its busy state and error show beside the button; a 401 ends the session as everywhere. */
export function useExportReport(kind: ReportKind) {
  const [progress, setProgress] = useState<DownloadProgress | null>(null);
  const mutation = useMutation({
    mutationFn: (query: string) => {
      setProgress({ loaded: 0, fraction: null });
      return fetchWorkbook(kind, query, setProgress);
    },
    onSettled: () => setProgress(null),
  });
  return { ...mutation, progress };
}
