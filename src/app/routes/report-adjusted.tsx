import { useTranslation } from "react-i18next";
import { useTerms } from "@/i18n/terms";
import { AdjustedSettings, AdjustedView } from "@/features/reports/components/adjusted-view";
import { describeFilters, listOf } from "@/features/reports/components/report-params";
import { ReportPage, ReportResult } from "@/features/reports/components/report-page";
import { useReportScreen } from "../report-frame";
import { RouteError } from "./route-error";

const KIND = "adjusted" as const;

export function Component() {
  const { t } = useTranslation("analysis");
  const { variable } = useTerms();
  const { params, query, update, choices, report } = useReportScreen(KIND);
  const examined = listOf(params.variables).map(variable).join(", ");
  const adjust = listOf(params.adjustFor)
    .filter((k) => k !== "none")
    .map(variable)
    .join(", ");
  const filters = describeFilters(params);
  return (
    <ReportPage
      kind={KIND}
      params={params}
      query={query}
      choices={choices}
      onChange={update}
      suggestedName={adjust ? t("adjusted.suggestedName", { examined, adjust, filters }) : t("adjusted.suggestedNameCrude", { examined, filters })}
      canExport={report.isSuccess}
      settings={<AdjustedSettings params={params} onChange={update} />}
    >
      <ReportResult query={report}>{(data) => <AdjustedView data={data} />}</ReportResult>
    </ReportPage>
  );
}

export const ErrorBoundary = RouteError;
