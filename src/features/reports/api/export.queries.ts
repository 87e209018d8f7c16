import { useState } from "react";
import { useMutation } from "@tanstack/react-query";
import { downloadFile, type DownloadProgress } from "@/lib/download";
import type { ReportKind } from "../components/report-params";

export type { DownloadProgress };

/**
 * The export as a mutation: `/api/reports/<kind>.xlsx?<the screen's query>`, the same query string
 * as the screen's, so the workbook holds the numbers on screen. Its busy state and error show beside
 * the button; a 401 ends the session as everywhere.
 */
export function useExportReport(kind: ReportKind) {
  const [progress, setProgress] = useState<DownloadProgress | null>(null);
  const mutation = useMutation({
    mutationFn: (query: string) => {
      setProgress({ loaded: 0, fraction: null });
      return downloadFile(`/reports/${kind}.xlsx${query ? `?${query}` : ""}`, `strandsight-${kind}.xlsx`, setProgress);
    },
    onSettled: () => setProgress(null),
  });
  return { ...mutation, progress };
}
