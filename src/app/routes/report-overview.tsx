import { useTranslation } from "react-i18next";
import { OverviewView } from "@/features/reports/components/overview-view";
import { describeFilters } from "@/features/reports/components/report-params";
import { ReportPage, ReportResult } from "@/features/reports/components/report-page";
import { PeriodChoice, SettingsRow, StandardiseChoice } from "@/features/reports/components/settings";
import { useReportScreen } from "../report-frame";
import { RouteError } from "./route-error";

const KIND = "overview" as const;

export function Component() {
  const { t } = useTranslation("reports");
  const { params, query, update, choices, report } = useReportScreen(KIND);
  return (
    <ReportPage
      kind={KIND}
      params={params}
      query={query}
      choices={choices}
      onChange={update}
      suggestedName={t("overview.suggestedName", {
        period: t(`overview.periodName.${params.period}`, { defaultValue: params.period }),
        filters: describeFilters(params),
      })}
      canExport={report.isSuccess}
      settings={
        <SettingsRow>
          <PeriodChoice label={t("overview.ratesBy")} value={params.period!} months={true} onChange={(v) => update({ period: v })} />
          <div className="col-span-2">
            <StandardiseChoice value={params.standardise} onChange={(v) => update({ standardise: v })} />
          </div>
        </SettingsRow>
      }
    >
      <ReportResult query={report}>{(data) => <OverviewView data={data} />}</ReportResult>
    </ReportPage>
  );
}

export const ErrorBoundary = RouteError;
