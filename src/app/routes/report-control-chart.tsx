import { ControlChartSettings, ControlChartView } from "@/features/reports/components/control-chart-view";
import { describeFilters } from "@/features/reports/components/report-params";
import { ReportPage, ReportResult } from "@/features/reports/components/report-page";
import { useReportScreen } from "../report-frame";
import { RouteError } from "./route-error";

const KIND = "control-chart" as const;

const CHART_NAMES: Record<string, string> = { p: "p-chart", laney: "Laney p′ chart", u: "u-chart" };

export function Component() {
  const { params, query, update, choices, report } = useReportScreen(KIND);
  return (
    <ReportPage
      kind={KIND}
      params={params}
      query={query}
      choices={choices}
      onChange={update}
      suggestedName={`${CHART_NAMES[params.chart ?? "p"] ?? "p-chart"} by ${params.period}${params.baselineFrom ? `, baseline ${params.baselineFrom} to ${params.baselineTo}` : ""} — ${describeFilters(params)}`}
      canExport={report.isSuccess}
      settings={<ControlChartSettings params={params} onChange={update} />}
    >
      <ReportResult query={report}>{(data) => <ControlChartView data={data} onChange={update} />}</ReportResult>
    </ReportPage>
  );
}

export const ErrorBoundary = RouteError;
