import { useState } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import { useSearchParams, type LoaderFunctionArgs } from "react-router";
import { can } from "@shared/roles";
import { Button } from "@/components/ui/button";
import { Card, PageHeader } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { authKeys } from "@/features/auth/api/session";
import { historyKeys } from "@/features/claims/api/claims.queries";
import { HistoryWorkbookButton, PrintableHistoryLink } from "@/features/claims/components/history-actions";
import { ChemistryTable, ConditionsTable, DefectsList, HistoryFacts, RelatedRecords, SlabsTable } from "@/features/claims/components/history-sections";
import { TraceChain } from "@/features/claims/components/trace-chain";
import { count } from "@/lib/format";
import { causeChips } from "../cause-chips";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

export function makeLoader(qc: QueryClient) {
  return async ({ request }: LoaderFunctionArgs) => {
    await requireCapability(qc, "claims.read");
    const q = new URL(request.url).searchParams.get("q")?.trim();
    // Prefetch only: an unknown id is an answer the screen shows, not a failed screen.
    if (q) void qc.prefetchQuery(historyKeys.trace(q));
    return null;
  };
}

function TraceForm({ initial, onTrace }: { initial: string; onTrace: (q: string) => void }) {
  const { t } = useTranslation("claims");
  const [text, setText] = useState(initial);
  const [problem, setProblem] = useState<string | null>(null);
  return (
    <form
      role="search"
      aria-label={t("tracePage.formLabel")}
      className="flex flex-wrap items-end gap-3"
      onSubmit={(e) => {
        e.preventDefault();
        const q = text.trim();
        if (!q) return setProblem(t("tracePage.enterId"));
        setProblem(null);
        onTrace(q);
      }}
    >
      <label className="flex min-w-64 flex-1 flex-col gap-1">
        <span className="text-sm font-semibold text-ink-800">{t("tracePage.idLabel")}</span>
        <input
          value={text}
          onChange={(e) => setText(e.target.value)}
          maxLength={40}
          autoComplete="off"
          autoCapitalize="characters"
          spellCheck={false}
          enterKeyHint="search"
          placeholder={t("tracePage.idPlaceholder")}
          className="min-h-12 w-full rounded-md border border-ink-300 bg-white px-3 text-lg text-ink-900 placeholder:text-base placeholder:text-ink-400"
          data-testid="trace-input"
        />
      </label>
      <Button type="submit" className="min-h-12">
        {t("tracePage.submit")}
      </Button>
      {problem ? (
        <div className="w-full">
          <Notice tone="error">{problem}</Notice>
        </div>
      ) : null}
    </form>
  );
}

export function Component() {
  const { t } = useTranslation("claims");
  const [sp, setSp] = useSearchParams();
  const q = sp.get("q")?.trim() ?? "";
  const me = useQuery(authKeys.me());
  const trace = useQuery({ ...historyKeys.trace(q), enabled: q.length > 0 });
  const canExport = me.data ? can(me.data.roles, "history.export") : false;
  const traced = trace.data;
  return (
    <div className="space-y-5">
      <PageHeader title={t("tracePage.title")} subtitle={t("tracePage.subtitle")} />
      <Card>
        <TraceForm key={q} initial={q} onTrace={(next) => setSp({ q: next })} />
      </Card>
      {!q ? (
        <Notice tone="info" title={t("tracePage.howTitle")}>
          {t("tracePage.how")}
        </Notice>
      ) : trace.isPending ? (
        <Spinner label={t("tracePage.tracing", { q })} />
      ) : trace.isError ? (
        <div data-testid="trace-error">
          <Notice tone="error" title={t("tracePage.notTraced")}>
            {trace.error.message}
          </Notice>
        </div>
      ) : traced ? (
        <>
          <Card
            title={t(`tracePage.found.${traced.found}`, { q: traced.query.toUpperCase() })}
            actions={
              <div className="flex flex-wrap gap-2">
                {canExport ? <HistoryWorkbookButton heatNo={traced.history.heat.heatNo} /> : null}
                {canExport ? <PrintableHistoryLink heatNo={traced.history.heat.heatNo} /> : null}
              </div>
            }
          >
            <TraceChain trace={traced} />
          </Card>
          <Notice tone="caution" title={t("procedure.title")}>
            {t("procedure.traceText")}
          </Notice>
          <Card title={t("tracePage.heat", { heatNo: traced.history.heat.heatNo })}>
            <HistoryFacts history={traced.history} />
          </Card>
          <div className="grid gap-5 xl:grid-cols-2">
            <Card title={t("tracePage.conditions")}>
              <ConditionsTable history={traced.history} />
            </Card>
            <Card title={t("tracePage.chemistry")}>
              <ChemistryTable history={traced.history} />
            </Card>
          </div>
          <Card title={t("tracePage.slabs", { n: count(traced.history.slabs.length) })} bodyClassName="px-2 py-3 md:p-4">
            <SlabsTable history={traced.history} traced={traced.slabId} />
          </Card>
          <Card title={t("tracePage.defects", { count: traced.history.defects.length, n: count(traced.history.defects.length) })}>
            <DefectsList history={traced.history} traced={traced.slabId} renderCauses={causeChips} />
          </Card>
          <Card title={t("tracePage.related")}>
            <RelatedRecords history={traced.history} />
          </Card>
        </>
      ) : null}
    </div>
  );
}

export const ErrorBoundary = RouteError;
