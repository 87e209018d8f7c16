import { useCallback, useMemo } from "react";
import { useSearchParams } from "react-router";
import { readReportParams, reportQueryString, type ReportKind, type ReportParams } from "./report-params";

/**
 * The report's parameters from the address, and a setter that writes every effective value back
 * (defaults included), so the address always says the whole question.
 */
export function useReportParams(kind: ReportKind) {
  const [searchParams, setSearchParams] = useSearchParams();
  const params = useMemo(() => readReportParams(kind, searchParams), [kind, searchParams]);
  const query = useMemo(() => reportQueryString(kind, params), [kind, params]);
  const update = useCallback(
    (patch: Partial<Record<string, string | undefined>>) => {
      setSearchParams(
        (prev) => {
          const next: ReportParams = { ...readReportParams(kind, prev) };
          for (const [k, v] of Object.entries(patch)) {
            if (v === undefined || v === "") delete next[k];
            else next[k] = v;
          }
          return new URLSearchParams(reportQueryString(kind, next));
        },
        { replace: true },
      );
    },
    [kind, setSearchParams],
  );
  return { params, query, update };
}
