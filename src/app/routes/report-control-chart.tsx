import { useTranslation } from "react-i18next";
import { ControlChartSettings, ControlChartView } from "@/features/reports/components/control-chart-view";
import { describeFilters } from "@/features/reports/components/report-params";
import { ReportPage, ReportResult } from "@/features/reports/components/report-page";
import { useReportScreen } from "../report-frame";
import { RouteError } from "./route-error";

const KIND = "control-chart" as const;

export function Component() {
  const { t } = useTranslation("analysis");
  const { params, query, update, choices, report } = useReportScreen(KIND);
  const chart = t(`chartNames.${params.chart ?? "p"}`, { defaultValue: t("chartNames.p") });
  const period = t(`periodWords.${params.period}`, { defaultValue: params.period });
  const filters = describeFilters(params);
  return (
    <ReportPage
      kind={KIND}
      params={params}
      query={query}
      choices={choices}
      onChange={update}
      suggestedName={
        params.baselineFrom
          ? t("controlChart.suggestedNameBaseline", { chart, period, from: params.baselineFrom, to: params.baselineTo, filters })
          : t("controlChart.suggestedName", { chart, period, filters })
      }
      canExport={report.isSuccess}
      settings={<ControlChartSettings params={params} onChange={update} />}
    >
      <ReportResult query={report}>{(data) => <ControlChartView data={data} onChange={update} />}</ReportResult>
    </ReportPage>
  );
}

export const ErrorBoundary = RouteError;
