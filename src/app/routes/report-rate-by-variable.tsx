import { CATEGORICAL_KEYS, CATEGORICAL_LABELS } from "@shared/variables";
import { SeChoice } from "@/features/reports/components/estimates";
import { RateByVariableView } from "@/features/reports/components/rate-by-variable-view";
import { describeFilters, joinList, listOf } from "@/features/reports/components/report-params";
import { TermPick } from "@/features/reports/components/term-pick";
import { ReportPage, ReportResult } from "@/features/reports/components/report-page";
import { Choice, MIN_N_OPTIONS, numberOptions, SettingsRow, VariableSelect, variableOf } from "@/features/reports/components/settings";
import { useReportScreen } from "../report-frame";
import { RouteError } from "./route-error";

const KIND = "rate-by-variable" as const;

export function Component() {
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
      suggestedName={`${variable?.label ?? params.variable} — ${describeFilters(params)}`}
      canExport={report.isSuccess}
      settings={
        <SettingsRow>
          <div className="col-span-2">
            <VariableSelect
              label="Variable"
              value={params.variable!}
              // A condition cannot be adjusted for itself: it leaves the adjustment when chosen here.
              onChange={(v) => update({ variable: v, adjustFor: adjustFor.includes(v) ? joinList(adjustFor.filter((k) => k !== v)) : params.adjustFor })}
              testId="variable-select"
            />
          </div>
          <Choice
            label="Bins"
            testId="bins-select"
            value={params.bins!}
            options={numberOptions([4, 5, 6, 8, 10, 12, 15, 20])}
            onChange={(v) => update({ bins: v })}
          />
          <Choice
            label="Binning"
            value={params.binning!}
            options={[
              { value: "equal", label: "Equal width" },
              { value: "quantile", label: "Equal counts (quantiles)" },
            ]}
            onChange={(v) => update({ binning: v })}
          />
          <Choice
            label="Least slabs in a bin"
            value={params.minN!}
            options={MIN_N_OPTIONS}
            onChange={(v) => update({ minN: v })}
            hint="smaller bins are merged with a neighbour"
          />
          <div className="col-span-2">
            <TermPick
              label="Adjust for"
              testId="adjust-pick"
              value={adjustFor}
              emptyLabel="Nothing (crude only)"
              taken={params.variable ? { [params.variable]: "the variable itself" } : {}}
              hint="Adds the odds ratio adjusted for these terms beside the crude one. Grade family first: the grade mix confounds almost everything."
              // The standard errors go with the adjusted and split answers: without either, nothing to choose.
              onChange={(keys) => update({ adjustFor: joinList(keys), se: keys.length || params.stratifyBy ? params.se : undefined })}
            />
          </div>
          <Choice
            label="Split by"
            testId="split-select"
            value={params.stratifyBy ?? ""}
            options={[{ value: "", label: "Not split" }, ...CATEGORICAL_KEYS.map((k) => ({ value: k, label: CATEGORICAL_LABELS[k] }))]}
            onChange={(v) => update({ stratifyBy: v || undefined, se: v || adjustFor.length ? params.se : undefined })}
            hint="one curve and one odds ratio per group"
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
