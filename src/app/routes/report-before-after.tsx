import { useEffect } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import type { LoaderFunctionArgs } from "react-router";
import { plantKeys } from "@/features/plant/api/plant.queries";
import { BeforeAfterSettings, BeforeAfterView, beforeAfterReady } from "@/features/reports/components/before-after-view";
import { describeFilters } from "@/features/reports/components/report-params";
import { ReportPage, ReportResult } from "@/features/reports/components/report-page";
import { makeReportLoader, useReportScreen } from "../report-frame";
import { RouteError } from "./route-error";

const KIND = "before-after" as const;

const base = makeReportLoader(KIND, beforeAfterReady);
export function makeLoader(qc: QueryClient) {
  const inner = base(qc);
  return async (args: LoaderFunctionArgs) => {
    void qc.prefetchQuery(plantKeys.summary());
    return inner(args);
  };
}

const isoDay = (t: number) => new Date(t).toISOString().slice(0, 10);
const DAY = 86_400_000;

export function Component() {
  const { t } = useTranslation("analysis");
  const { params, query, update, choices, report } = useReportScreen(KIND, beforeAfterReady);
  const ready = beforeAfterReady(params);
  const summary = useQuery(plantKeys.summary());

  // Opened without periods: compare the last 30 days on record (B) with the 30 days before (A).
  const recent = summary.data?.recent;
  const needsPeriods = params.mode !== "variable" && !params.aFrom && !params.aTo && !params.bFrom && !params.bTo;
  useEffect(() => {
    if (!needsPeriods || !recent?.from || !recent.to) return;
    const bFrom = Date.parse(isoDay(Date.parse(recent.from)));
    update({ bFrom: isoDay(bFrom), bTo: isoDay(Date.parse(recent.to)), aFrom: isoDay(bFrom - 30 * DAY), aTo: isoDay(bFrom - DAY) });
  }, [needsPeriods, recent?.from, recent?.to, update]);

  return (
    <ReportPage
      kind={KIND}
      params={params}
      query={query}
      choices={choices}
      onChange={update}
      suggestedName={t("beforeAfter.suggestedName", { filters: describeFilters(params) })}
      canExport={ready && report.isSuccess}
      settings={<BeforeAfterSettings params={params} onChange={update} />}
    >
      {ready ? (
        <ReportResult query={report}>{(data) => <BeforeAfterView data={data} />}</ReportResult>
      ) : (
        <p className="rounded-md border border-ink-300 bg-white px-4 py-3 text-sm" data-testid="before-after-incomplete">
          {params.mode === "variable" ? t("beforeAfter.giveRanges") : t("beforeAfter.givePeriods")}
        </p>
      )}
    </ReportPage>
  );
}

export const ErrorBoundary = RouteError;
