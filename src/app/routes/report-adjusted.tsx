import { termLabel } from "@shared/api/reports";
import { AdjustedSettings, AdjustedView } from "@/features/reports/components/adjusted-view";
import { describeFilters, listOf } from "@/features/reports/components/report-params";
import { ReportPage, ReportResult } from "@/features/reports/components/report-page";
import { useReportScreen } from "../report-frame";
import { RouteError } from "./route-error";

const KIND = "adjusted" as const;

export function Component() {
  const { params, query, update, choices, report } = useReportScreen(KIND);
  const examined = listOf(params.variables).map(termLabel).join(", ");
  const adjust = listOf(params.adjustFor)
    .filter((k) => k !== "none")
    .map(termLabel)
    .join(", ");
  return (
    <ReportPage
      kind={KIND}
      params={params}
      query={query}
      choices={choices}
      onChange={update}
      suggestedName={`${examined} adjusted for ${adjust || "nothing"} — ${describeFilters(params)}`}
      canExport={report.isSuccess}
      settings={<AdjustedSettings params={params} onChange={update} />}
    >
      <ReportResult query={report}>{(data) => <AdjustedView data={data} />}</ReportResult>
    </ReportPage>
  );
}

export const ErrorBoundary = RouteError;
