import { useState } from "react";
import { useQuery } from "@tanstack/react-query";
import { can } from "@shared/roles";
import { Button } from "@/components/ui/button";
import { Card } from "@/components/ui/card";
import { authKeys } from "@/features/auth/api/session";
import { causeKeys } from "@/features/causes/api/causes.queries";
import { BulkTagPanel } from "@/features/causes/components/bulk-tag-panel";
import { defectKeys } from "@/features/defects/api/defects.queries";
import { heatKeys } from "@/features/heats/api/heats.queries";
import { reportKeys } from "@/features/reports/api/reports.queries";
import { CauseParetoView } from "@/features/reports/components/cause-pareto-view";
import { describeFilters, FILTER_KEYS, type ReportParams } from "@/features/reports/components/report-params";
import { ReportPage, ReportResult } from "@/features/reports/components/report-page";
import { Choice, SettingsRow } from "@/features/reports/components/settings";
import { slabKeys } from "@/features/slabs/api/slabs.queries";
import { useReportScreen } from "../report-frame";
import { RouteError } from "./route-error";

const KIND = "cause-pareto" as const;

const CONFIDENCE_OPTIONS = [
  { value: "suspected", label: "Every tagging" },
  { value: "probable", label: "Probable or surer" },
  { value: "confirmed", label: "Confirmed only" },
];

/** The report's filters as a bulk selection: the same question, so the same defects. */
const filtersOf = (p: ReportParams) => Object.fromEntries(FILTER_KEYS.filter((k) => p[k]).map((k) => [k, p[k]!]));

function TagThisFilter({ params }: { params: ReportParams }) {
  const [open, setOpen] = useState(false);
  const filters = filtersOf(params);
  const described = describeFilters(params);
  return (
    <Card title="Tag the defects of this filter">
      {open ? (
        <BulkTagPanel
          selection={{ kind: "filter", filters }}
          describe={`the filter “${described}”`}
          affects={[reportKeys.all, slabKeys.all, heatKeys.all, defectKeys.all]}
          onClose={() => setOpen(false)}
        />
      ) : (
        <div className="flex flex-wrap items-center gap-3">
          <Button variant="secondary" onClick={() => setOpen(true)} data-testid="bulk-tag-filter">
            Tag the defects of this filter
          </Button>
          <p className="text-sm text-ink-600">
            Every live defect passing the filters above ({described}) gets the same causes. You see the count before anything is written.
          </p>
        </div>
      )}
    </Card>
  );
}

export function Component() {
  const { params, query, update, choices, report } = useReportScreen(KIND);
  const me = useQuery(authKeys.me());
  // The taxonomy is the filter bar's too: keep it fresh after a tag is added elsewhere.
  useQuery(causeKeys.taxonomy(true));
  const minConfidence = params.minConfidence ?? "suspected";
  return (
    <ReportPage
      kind={KIND}
      params={params}
      query={query}
      choices={choices}
      onChange={update}
      suggestedName={`Cause Pareto${minConfidence === "suspected" ? "" : ` (${minConfidence} or surer)`} — ${describeFilters(params)}`}
      canExport={report.isSuccess}
      settings={
        <SettingsRow>
          <Choice
            label="Count taggings"
            value={minConfidence}
            options={CONFIDENCE_OPTIONS}
            onChange={(v) => update({ minConfidence: v })}
            testId="min-confidence"
          />
        </SettingsRow>
      }
    >
      <ReportResult query={report}>
        {(data) => <CauseParetoView data={data} minConfidence={minConfidence} groupName={(g) => choices.causeGroups.find((c) => c.code === g)?.name ?? g} />}
      </ReportResult>
      {me.data && can(me.data.roles, "causes.tag") ? <TagThisFilter params={params} /> : null}
    </ReportPage>
  );
}

export const ErrorBoundary = RouteError;
