import { useMemo } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import type { LoaderFunctionArgs } from "react-router";
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

export function makeReportLoader(kind: ReportKind, ready: (p: Record<string, string>) => boolean = () => true) {
  return (qc: QueryClient) =>
    async ({ request }: LoaderFunctionArgs) => {
      await requireCapability(qc, "reports.read");
      void qc.prefetchQuery(plantKeys.setup());
      void qc.prefetchQuery(catalogueKeys.list(true));
      void qc.prefetchQuery(causeKeys.taxonomy(true));
      const params = readReportParams(kind, new URL(request.url).searchParams);
      if (ready(params)) void qc.prefetchQuery(reportKeys.report(kind, params));
      return null;
    };
}

export function useFilterChoices(): FilterChoices {
  const setup = useQuery(plantKeys.setup());
  const catalogue = useQuery(catalogueKeys.list(true));
  const causes = useQuery(causeKeys.taxonomy(true));
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
  const choices = useFilterChoices();
  const report = useQuery(reportKeys.report(kind, params, ready(params)));
  return { params, query, update, choices, report };
}
