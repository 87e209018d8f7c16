import { useTranslation } from "react-i18next";
import { CATEGORICAL_KEYS } from "@shared/variables";
import { useTerms } from "@/i18n/terms";
import { SeChoice } from "@/features/reports/components/estimates";
import { RateByVariableView } from "@/features/reports/components/rate-by-variable-view";
import { describeFilters, joinList, listOf } from "@/features/reports/components/report-params";
import { TermPick } from "@/features/reports/components/term-pick";
import { ReportPage, ReportResult } from "@/features/reports/components/report-page";
import { Choice, minNOptions, numberOptions, SettingsRow, VariableSelect, variableOf } from "@/features/reports/components/settings";
import { useReportScreen } from "../report-frame";
import { RouteError } from "./route-error";

const KIND = "rate-by-variable" as const;

export function Component() {
  const { t } = useTranslation("reports");
  const { variable: termWords } = useTerms();
  const { params, query, update, choices, report } = useReportScreen(KIND);
  const variable = variableOf(params.variable);
  const adjustFor = listOf(params.adjustFor).filter((k) => k !== "none");
  return (
    <ReportPage
      kind={KIND}
      params={params}
      query={query}
      choices={choices}
      onChange={update}
      suggestedName={t("rbv.suggestedName", { variable: variable ? termWords(variable.key) : params.variable, filters: describeFilters(params) })}
      canExport={report.isSuccess}
      settings={
        <SettingsRow>
          <div className="col-span-2">
            <VariableSelect
              label={t("rbv.variable")}
              value={params.variable!}
              // A condition cannot be adjusted for itself: it leaves the adjustment when chosen here.
              onChange={(v) => update({ variable: v, adjustFor: adjustFor.includes(v) ? joinList(adjustFor.filter((k) => k !== v)) : params.adjustFor })}
              testId="variable-select"
            />
          </div>
          <Choice
            label={t("rbv.bins")}
            testId="bins-select"
            value={params.bins!}
            options={numberOptions([4, 5, 6, 8, 10, 12, 15, 20])}
            onChange={(v) => update({ bins: v })}
          />
          <Choice
            label={t("rbv.binning")}
            value={params.binning!}
            options={[
              { value: "equal", label: t("rbv.equalWidth") },
              { value: "quantile", label: t("rbv.equalCounts") },
            ]}
            onChange={(v) => update({ binning: v })}
          />
          <Choice
            label={t("rbv.leastSlabs")}
            value={params.minN!}
            options={minNOptions(t)}
            onChange={(v) => update({ minN: v })}
            hint={t("rbv.leastSlabsHint")}
          />
          <div className="col-span-2">
            <TermPick
              label={t("rbv.adjustFor")}
              testId="adjust-pick"
              value={adjustFor}
              emptyLabel={t("rbv.nothingCrude")}
              taken={params.variable ? { [params.variable]: t("rbv.theVariable") } : {}}
              hint={t("rbv.adjustHint")}
              // The standard errors go with the adjusted and split answers: without either, nothing to choose.
              onChange={(keys) => update({ adjustFor: joinList(keys), se: keys.length || params.stratifyBy ? params.se : undefined })}
            />
          </div>
          <Choice
            label={t("rbv.splitBy")}
            testId="split-select"
            value={params.stratifyBy ?? ""}
            options={[{ value: "", label: t("rbv.notSplit") }, ...CATEGORICAL_KEYS.map((k) => ({ value: k, label: termWords(k) }))]}
            onChange={(v) => update({ stratifyBy: v || undefined, se: v || adjustFor.length ? params.se : undefined })}
            hint={t("rbv.splitHint")}
          />
          {adjustFor.length || params.stratifyBy ? <SeChoice value={params.se ?? "cluster"} onChange={(v) => update({ se: v })} /> : null}
        </SettingsRow>
      }
    >
      <ReportResult query={report}>{(data) => <RateByVariableView data={data} digits={variable?.digits ?? 2} minN={Number(params.minN) || 30} />}</ReportResult>
    </ReportPage>
  );
}

export const ErrorBoundary = RouteError;
