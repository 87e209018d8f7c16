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
import { causeParetoSchema } from "@shared/api/causes";
import { api } from "@/lib/api-client";
import { reportQueryString, type ReportKind, type ReportParams } from "../components/report-params";

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
} as const satisfies Record<ReportKind, z.ZodType>;

export type ReportResult<K extends ReportKind> = z.infer<(typeof SCHEMAS)[K]>;

export const reportKeys = {
  all: ["reports"] as const,
  /** One report for one query string: the key is the canonical query, so equal questions share one answer. */
  report: <K extends ReportKind>(kind: K, params: ReportParams, enabled = true) =>
    queryOptions({
      queryKey: [...reportKeys.all, kind, reportQueryString(kind, params)] as const,
      queryFn: ({ signal }) =>
        api(`/reports/${kind}?${reportQueryString(kind, params)}`, { signal, schema: SCHEMAS[kind] as unknown as z.ZodType<ReportResult<K>> }),
      // Keep the last answer on screen while a changed filter is asked: the chart does not jump away.
      placeholderData: keepPreviousData,
      staleTime: 60_000,
      enabled,
    }),
};
