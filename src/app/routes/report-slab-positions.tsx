import { useTranslation } from "react-i18next";
import { describeFilters } from "@/features/reports/components/report-params";
import { ReportPage, ReportResult } from "@/features/reports/components/report-page";
import { Choice, numberOptions, SettingsRow } from "@/features/reports/components/settings";
import { SlabPositionsView } from "@/features/reports/components/slab-positions-view";
import { useReportScreen } from "../report-frame";
import { RouteError } from "./route-error";

const KIND = "slab-positions" as const;

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
      suggestedName={t("positions.suggestedName", { filters: describeFilters(params) })}
      canExport={report.isSuccess}
      settings={
        <SettingsRow>
          <Choice label={t("positions.alongBins")} value={params.alongBins!} options={numberOptions([5, 10, 20])} onChange={(v) => update({ alongBins: v })} />
          <Choice
            label={t("positions.acrossBins")}
            value={params.acrossBins!}
            options={numberOptions([3, 4, 5, 10])}
            onChange={(v) => update({ acrossBins: v })}
          />
        </SettingsRow>
      }
    >
      <ReportResult query={report}>{(data) => <SlabPositionsView data={data} />}</ReportResult>
    </ReportPage>
  );
}

export const ErrorBoundary = RouteError;
