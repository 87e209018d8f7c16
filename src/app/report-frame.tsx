import { useMemo } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import type { LoaderFunctionArgs } from "react-router";
import { firstViewDrawn, useFirstViewDrawn } from "@/components/ui/first-view";
import { causeKeys } from "@/features/causes/api/causes.queries";
import { catalogueKeys } from "@/features/defects/api/catalogue.queries";
import { plantKeys } from "@/features/plant/api/plant.queries";
import { reportKeys } from "@/features/reports/api/reports.queries";
import type { FilterChoices } from "@/features/reports/components/filter-bar";
import { readReportParams, type ReportKind, type ReportParams } from "@/features/reports/components/report-params";
import { useReportParams } from "@/features/reports/components/use-report-params";
import { requireCapability } from "./guard";

/*
 * Where the report screens meet the plant and defect features: the filter bar's choices come from
 * the plant setup and the defect catalogue (retired types and grades too — old slabs carry them).
 */

/** Reports whose view shows the filter choices too (the cause groups' names), not only the filter bar. */
const NAMES_CAUSE_GROUPS: ReadonlySet<ReportKind> = new Set(["cause-pareto"]);

export function makeReportLoader(kind: ReportKind, ready: (p: Record<string, string>) => boolean = () => true) {
  return (qc: QueryClient) =>
    async ({ request }: LoaderFunctionArgs) => {
      await requireCapability(qc, "reports.read");
      // The filter bar's choices: beside the report on a later screen; on the page's first screen
      // once its first view is drawn (useFilterChoices), so that their answers are not read and
      // drawn while the report's first table and chart are. The cause Pareto names its groups.
      const now = firstViewDrawn();
      if (now) void qc.prefetchQuery(plantKeys.setup());
      if (now) void qc.prefetchQuery(catalogueKeys.list(true));
      if (now || NAMES_CAUSE_GROUPS.has(kind)) void qc.prefetchQuery(causeKeys.taxonomy(true));
      const params = readReportParams(kind, new URL(request.url).searchParams);
      if (ready(params)) void qc.prefetchQuery(reportKeys.report(kind, params));
      // The chart code every report draws — the largest file of the screen, which the view would
      // otherwise ask for only once the answer has come and been drawn as a table — asked for only
      // once the role may read reports. Not on the page's first screen: that page names the chart
      // code itself (server/lib/screen-preload.ts), and evaluating it here, while the first table was
      // being drawn, held that table back; the view asks for it once the table is committed.
      if (now) void import("@/features/reports/components/charts/report-chart").catch(() => undefined);
      return null;
    };
}

export function useFilterChoices(kind: ReportKind): FilterChoices {
  const ready = useFirstViewDrawn();
  const setup = useQuery({ ...plantKeys.setup(), enabled: ready });
  const catalogue = useQuery({ ...catalogueKeys.list(true), enabled: ready });
  const causes = useQuery({ ...causeKeys.taxonomy(true), enabled: ready || NAMES_CAUSE_GROUPS.has(kind) });
  return useMemo(
    () => ({
      casters: (setup.data?.casters ?? []).map((c) => ({ code: c.code, strands: c.strands.map((s) => s.strandNo).sort((a, b) => a - b) })),
      families: (setup.data?.gradeFamilies ?? []).map((f) => ({ code: f.code, name: f.name, grades: f.grades })),
      categories: (catalogue.data?.categories ?? []).map((c) => ({
        code: c.code,
        name: c.name,
        types: (catalogue.data?.types ?? []).filter((t) => t.categoryCode === c.code).map((t) => ({ code: t.code, name: t.name, active: t.active })),
      })),
      causeGroups: (causes.data?.groups ?? []).map((g) => ({
        code: g.code,
        name: g.name,
        tags: g.tags.map((t) => ({ code: t.code, name: t.name, retired: t.retired })),
      })),
    }),
    [setup.data, catalogue.data, causes.data],
  );
}

/**
 * What every report screen starts from: its parameters out of the address (and their setter), the
 * filter bar's choices, and the report's answer — asked only once `ready(params)` holds.
 */
export function useReportScreen<K extends ReportKind>(kind: K, ready: (p: ReportParams) => boolean = () => true) {
  const { params, query, update } = useReportParams(kind);
  const choices = useFilterChoices(kind);
  const report = useQuery(reportKeys.report(kind, params, ready(params)));
  return { params, query, update, choices, report };
}
