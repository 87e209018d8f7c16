import { useTranslation } from "react-i18next";
import { termConflict } from "@shared/api/reports";
import { describeFilters, FILTER_KEYS, listOf, reportPath, reportQueryString, readReportParams } from "@/features/reports/components/report-params";
import { ReportPage, ReportResult } from "@/features/reports/components/report-page";
import { ScreeningSettings, ScreeningView } from "@/features/reports/components/screening-view";
import { useReportScreen } from "../report-frame";
import { RouteError } from "./route-error";

const KIND = "screening" as const;

export function Component() {
  const { t } = useTranslation("reports");
  const { params, query, update, choices, report } = useReportScreen(KIND);
  // A numeric variable opens in rate-against-a-variable with the same filters, adjusted for the same
  // terms when one model can hold them with it (not a derived value beside its raw input).
  const adjust = listOf(params.adjustFor).filter((k) => k !== "none");
  const linkFor = (key: string) => {
    const filters = Object.fromEntries(FILTER_KEYS.filter((k) => params[k]).map((k) => [k, params[k]!]));
    const carry = adjust.length && !termConflict([key, ...adjust]) ? { adjustFor: adjust.join(","), ...(params.se ? { se: params.se } : {}) } : {};
    const next = readReportParams("rate-by-variable", new URLSearchParams({ ...filters, variable: key, ...carry }));
    return reportPath("rate-by-variable", reportQueryString("rate-by-variable", next));
  };
  return (
    <ReportPage
      kind={KIND}
      params={params}
      query={query}
      choices={choices}
      onChange={update}
      suggestedName={t("screening.suggestedName", { filters: describeFilters(params) })}
      canExport={report.isSuccess}
      settings={<ScreeningSettings params={params} onChange={update} />}
    >
      <ReportResult query={report}>{(data) => <ScreeningView data={data} linkFor={linkFor} />}</ReportResult>
    </ReportPage>
  );
}

export const ErrorBoundary = RouteError;
