import { keepPreviousData, queryOptions } from "@tanstack/react-query";
import { z } from "zod";
import {
  adjustedSchema,
  beforeAfterSchema,
  controlChartSchema,
  overviewSchema,
  processWindowSchema,
  rateByVariableSchema,
  screeningSchema,
  slabPositionsSchema,
} from "@shared/api/reports";
import { api, ApiError, type SchemaSource } from "@/lib/api-client";
import { reportQueryString, type ReportKind, type ReportParams } from "../components/report-params";

// Its module (the cause tags' schemas) comes with its answer: no other report's first view needs it.
const causeParetoSchema = () => import("@shared/api/causes").then((m) => m.causeParetoSchema);

const SCHEMAS = {
  overview: overviewSchema,
  "rate-by-variable": rateByVariableSchema,
  screening: screeningSchema,
  "process-window": processWindowSchema,
  "control-chart": controlChartSchema,
  "before-after": beforeAfterSchema,
  "slab-positions": slabPositionsSchema,
  "cause-pareto": causeParetoSchema,
  adjusted: adjustedSchema,
} as const satisfies Record<ReportKind, SchemaSource<unknown>>;

type Parsed<S> = S extends z.ZodType ? z.infer<S> : S extends () => Promise<infer Z extends z.ZodType> ? z.infer<Z> : never;
export type ReportResult<K extends ReportKind> = Parsed<(typeof SCHEMAS)[K]>;

/** The server's answer while the reports' slab data load after a start: 503 "reports_warming_up". */
export function isWarmingUp(err: unknown): err is ApiError {
  return err instanceof ApiError && err.status === 503 && err.code === "reports_warming_up";
}

/** The server's estimate of the seconds left (its `details.secondsLeft`), when it gave one. */
export function warmingSecondsLeft(err: ApiError): number | null {
  const s = (err.details as { secondsLeft?: unknown } | undefined)?.secondsLeft;
  return typeof s === "number" && Number.isFinite(s) && s > 0 ? Math.round(s) : null;
}

/** A report still warming up is asked again for up to about half an hour (then the screen offers a button). */
const WARMING_TRIES = 180;

/** Ask again at the pace the server gives (Retry-After, 2–10 s); other errors as every query does. */
function retryReport(count: number, err: Error) {
  if (isWarmingUp(err)) return count < WARMING_TRIES;
  // The app's default (src/lib/query-client.ts): network trouble twice, never a 4xx, not when surely offline.
  return !(err instanceof ApiError && err.status >= 400 && err.status < 500) && count < 2 && (typeof navigator === "undefined" || navigator.onLine !== false);
}
function retryDelay(count: number, err: Error) {
  if (isWarmingUp(err)) {
    const s = (err.details as { retryAfterSeconds?: unknown } | undefined)?.retryAfterSeconds;
    return Math.min(10, Math.max(2, typeof s === "number" && Number.isFinite(s) ? s : 3)) * 1000;
  }
  return Math.min(1000 * 2 ** count, 30_000);
}

export const reportKeys = {
  all: ["reports"] as const,
  /** One report for one query string: the key is the canonical query, so equal questions share one answer. */
  report: <K extends ReportKind>(kind: K, params: ReportParams, enabled = true) =>
    queryOptions({
      queryKey: [...reportKeys.all, kind, reportQueryString(kind, params)] as const,
      queryFn: ({ signal }) =>
        api(`/reports/${kind}?${reportQueryString(kind, params)}`, { signal, schema: SCHEMAS[kind] as unknown as SchemaSource<ReportResult<K>> }),
      // Keep the last answer on screen while a changed filter is asked: the chart does not jump away.
      placeholderData: keepPreviousData,
      staleTime: 60_000,
      retry: retryReport,
      retryDelay,
      enabled,
    }),
};
