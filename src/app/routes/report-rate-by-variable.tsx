import { RateByVariableView } from "@/features/reports/components/rate-by-variable-view";
import { describeFilters } from "@/features/reports/components/report-params";
import { ReportPage, ReportResult } from "@/features/reports/components/report-page";
import { Choice, MIN_N_OPTIONS, numberOptions, SettingsRow, VariableSelect, variableOf } from "@/features/reports/components/settings";
import { makeReportLoader, useReportScreen } from "../report-frame";
import { RouteError } from "./route-error";

const KIND = "rate-by-variable" as const;

export const makeLoader = makeReportLoader(KIND);

export function Component() {
  const { params, query, update, choices, report } = useReportScreen(KIND);
  const variable = variableOf(params.variable);
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
            <VariableSelect label="Variable" value={params.variable!} onChange={(v) => update({ variable: v })} testId="variable-select" />
          </div>
          <Choice label="Bins" testId="bins-select" value={params.bins!} options={numberOptions([4, 5, 6, 8, 10, 12, 15, 20])} onChange={(v) => update({ bins: v })} />
          <Choice
            label="Binning"
            value={params.binning!}
            options={[
              { value: "equal", label: "Equal width" },
              { value: "quantile", label: "Equal counts (quantiles)" },
            ]}
            onChange={(v) => update({ binning: v })}
          />
          <Choice label="Least slabs in a bin" value={params.minN!} options={MIN_N_OPTIONS} onChange={(v) => update({ minN: v })} hint="smaller bins are merged with a neighbour" />
        </SettingsRow>
      }
    >
      <ReportResult query={report}>{(data) => <RateByVariableView data={data} digits={variable?.digits ?? 2} minN={Number(params.minN) || 30} />}</ReportResult>
    </ReportPage>
  );
}

export const ErrorBoundary = RouteError;
