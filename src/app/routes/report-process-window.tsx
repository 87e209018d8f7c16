import { useTranslation } from "react-i18next";
import { useTerms } from "@/i18n/terms";
import { ProcessWindowView } from "@/features/reports/components/process-window-view";
import { describeFilters } from "@/features/reports/components/report-params";
import { ReportPage, ReportResult } from "@/features/reports/components/report-page";
import { Choice, minNOptions, numberOptions, SettingsRow, VariableSelect, variableOf } from "@/features/reports/components/settings";
import { makeReportLoader, useReportScreen } from "../report-frame";
import { RouteError } from "./route-error";

const KIND = "process-window" as const;

export const makeLoader = makeReportLoader(KIND, (p) => p.x !== p.y);

export function Component() {
  const { t } = useTranslation("reports");
  const { variable } = useTerms();
  const { params, query, update, choices, report } = useReportScreen(KIND, (p) => p.x !== p.y);
  const same = params.x === params.y;
  const x = variableOf(params.x);
  const y = variableOf(params.y);
  const bins = numberOptions([3, 4, 5, 6, 8, 10]);
  return (
    <ReportPage
      kind={KIND}
      params={params}
      query={query}
      choices={choices}
      onChange={update}
      suggestedName={t("window.suggestedName", {
        x: x ? variable(x.key) : params.x,
        y: y ? variable(y.key) : params.y,
        filters: describeFilters(params),
      })}
      canExport={report.isSuccess && !same}
      settings={
        <SettingsRow>
          <div className="col-span-2">
            <VariableSelect label={t("window.across")} value={params.x!} onChange={(v) => update({ x: v })} />
          </div>
          <div className="col-span-2">
            <VariableSelect label={t("window.up")} value={params.y!} onChange={(v) => update({ y: v })} />
          </div>
          <Choice label={t("window.binsAcross")} value={params.xBins!} options={bins} onChange={(v) => update({ xBins: v })} />
          <Choice label={t("window.binsUp")} value={params.yBins!} options={bins} onChange={(v) => update({ yBins: v })} />
          <Choice
            label={t("rbv.binning")}
            value={params.binning!}
            options={[
              { value: "quantile", label: t("rbv.equalCounts") },
              { value: "equal", label: t("rbv.equalWidth") },
            ]}
            onChange={(v) => update({ binning: v })}
          />
          <Choice label={t("window.greyBelow")} value={params.minN!} options={minNOptions(t)} onChange={(v) => update({ minN: v })} />
        </SettingsRow>
      }
    >
      {same ? (
        <p className="rounded-md border border-ink-300 bg-white px-4 py-3 text-sm">{t("window.chooseTwo")}</p>
      ) : (
        <ReportResult query={report}>{(data) => <ProcessWindowView data={data} xDigits={x?.digits ?? 2} yDigits={y?.digits ?? 2} />}</ReportResult>
      )}
    </ReportPage>
  );
}

export const ErrorBoundary = RouteError;
