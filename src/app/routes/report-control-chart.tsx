import { ControlChartView } from "@/features/reports/components/control-chart-view";
import { describeFilters } from "@/features/reports/components/report-params";
import { ReportPage, ReportResult } from "@/features/reports/components/report-page";
import { PeriodChoice, SettingsRow } from "@/features/reports/components/settings";
import { makeReportLoader, useReportScreen } from "../report-frame";
import { RouteError } from "./route-error";

const KIND = "control-chart" as const;

export const makeLoader = makeReportLoader(KIND);

export function Component() {
  const { params, query, update, choices, report } = useReportScreen(KIND);
  return (
    <ReportPage
      kind={KIND}
      params={params}
      query={query}
      choices={choices}
      onChange={update}
      suggestedName={`p-chart by ${params.period} — ${describeFilters(params)}`}
      canExport={report.isSuccess}
      settings={
        <SettingsRow>
          <PeriodChoice label="One point per" value={params.period!} months={false} onChange={(v) => update({ period: v })} />
        </SettingsRow>
      }
    >
      <ReportResult query={report}>{(data) => <ControlChartView data={data} />}</ReportResult>
    </ReportPage>
  );
}

export const ErrorBoundary = RouteError;
