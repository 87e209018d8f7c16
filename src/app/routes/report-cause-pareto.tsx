import { useState } from "react";
import { useQuery } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
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

const confidenceOptions = (t: TFunction) => [
  { value: "suspected", label: t("reports:causePareto.everyTagging") },
  { value: "probable", label: t("reports:causePareto.probableOrSurer") },
  { value: "confirmed", label: t("reports:causePareto.confirmedOnly") },
];

/** The report's filters as a bulk selection: the same question, so the same defects. */
const filtersOf = (p: ReportParams) => Object.fromEntries(FILTER_KEYS.filter((k) => p[k]).map((k) => [k, p[k]!]));

function TagThisFilter({ params }: { params: ReportParams }) {
  const { t } = useTranslation("reports");
  const [open, setOpen] = useState(false);
  const filters = filtersOf(params);
  const described = describeFilters(params);
  return (
    <Card title={t("causePareto.tagTitle")}>
      {open ? (
        <BulkTagPanel
          selection={{ kind: "filter", filters }}
          describe={t("causePareto.theFilter", { filter: described })}
          affects={[reportKeys.all, slabKeys.all, heatKeys.all, defectKeys.all]}
          onClose={() => setOpen(false)}
        />
      ) : (
        <div className="flex flex-wrap items-center gap-3">
          <Button variant="secondary" onClick={() => setOpen(true)} data-testid="bulk-tag-filter">
            {t("causePareto.tagTitle")}
          </Button>
          <p className="text-sm text-ink-600">{t("causePareto.tagExplain", { filter: described })}</p>
        </div>
      )}
    </Card>
  );
}

export function Component() {
  const { t } = useTranslation("reports");
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
      suggestedName={
        minConfidence === "suspected"
          ? t("causePareto.suggestedName", { filters: describeFilters(params) })
          : t("causePareto.suggestedNameSurer", {
              level: t(`describe.confidence.${minConfidence}`, { defaultValue: minConfidence }),
              filters: describeFilters(params),
            })
      }
      canExport={report.isSuccess}
      settings={
        <SettingsRow>
          <Choice
            label={t("causePareto.countTaggings")}
            value={minConfidence}
            options={confidenceOptions(t)}
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
