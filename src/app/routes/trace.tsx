import { useState } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
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
import { plural } from "@/lib/format";
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
  const [text, setText] = useState(initial);
  const [problem, setProblem] = useState<string | null>(null);
  return (
    <form
      role="search"
      aria-label="Trace an id"
      className="flex flex-wrap items-end gap-3"
      onSubmit={(e) => {
        e.preventDefault();
        const q = text.trim();
        if (!q) return setProblem("Enter a coil, plate, slab or heat id.");
        setProblem(null);
        onTrace(q);
      }}
    >
      <label className="flex min-w-64 flex-1 flex-col gap-1">
        <span className="text-sm font-semibold text-ink-800">Coil, plate, slab or heat id</span>
        <input
          value={text}
          onChange={(e) => setText(e.target.value)}
          maxLength={40}
          autoComplete="off"
          autoCapitalize="characters"
          spellCheck={false}
          enterKeyHint="search"
          placeholder="e.g. K26000004, L260001-104 or L260001"
          className="min-h-12 w-full rounded-md border border-ink-300 bg-white px-3 text-lg text-ink-900 placeholder:text-base placeholder:text-ink-400"
          data-testid="trace-input"
        />
      </label>
      <Button type="submit" className="min-h-12">
        Trace
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
  const [sp, setSp] = useSearchParams();
  const q = sp.get("q")?.trim() ?? "";
  const me = useQuery(authKeys.me());
  const trace = useQuery({ ...historyKeys.trace(q), enabled: q.length > 0 });
  const canExport = me.data ? can(me.data.roles, "history.export") : false;
  const t = trace.data;
  return (
    <div className="space-y-5">
      <PageHeader title="Trace" subtitle="From a coil, plate, slab or heat id to its slab, its heat and everything on record about that heat." />
      <Card>
        <TraceForm key={q} initial={q} onTrace={(next) => setSp({ q: next })} />
      </Card>
      {!q ? (
        <Notice tone="info" title="How the trace works">
          Coils and plates reach their slab through the rolling mill's list (imported on the Import screen as “coils and plates”); a slab id or heat number
          works directly.
        </Notice>
      ) : trace.isPending ? (
        <Spinner label={`Tracing ${q}`} />
      ) : trace.isError ? (
        <div data-testid="trace-error">
          <Notice tone="error" title="Not traced">
            {trace.error.message}
          </Notice>
        </div>
      ) : t ? (
        <>
          <Card
            title={`${t.query.toUpperCase()} is a ${t.found}`}
            actions={
              <div className="flex flex-wrap gap-2">
                {canExport ? <HistoryWorkbookButton heatNo={t.history.heat.heatNo} /> : null}
                {canExport ? <PrintableHistoryLink heatNo={t.history.heat.heatNo} /> : null}
              </div>
            }
          >
            <TraceChain trace={t} />
          </Card>
          <Notice tone="caution" title="Procedure">
            This page states what was cast, found and decided. Dispositions and claims follow the plant's quality procedures and the customer's specification.
          </Notice>
          <Card title={`Heat ${t.history.heat.heatNo}`}>
            <HistoryFacts history={t.history} />
          </Card>
          <div className="grid gap-5 xl:grid-cols-2">
            <Card title="Casting conditions (heat values, with their source)">
              <ConditionsTable history={t.history} />
            </Card>
            <Card title="Chemistry (heat analysis)">
              <ChemistryTable history={t.history} />
            </Card>
          </div>
          <Card title={`Every slab of the heat (${t.history.slabs.length})`} bodyClassName="px-2 py-3 md:p-4">
            <SlabsTable history={t.history} traced={t.slabId} />
          </Card>
          <Card title={`Defects (${plural(t.history.defects.length, "live defect")})`}>
            <DefectsList history={t.history} traced={t.slabId} renderCauses={causeChips} />
          </Card>
          <Card title="Investigations and claims on this heat or its sequence">
            <RelatedRecords history={t.history} />
          </Card>
        </>
      ) : null}
    </div>
  );
}

export const ErrorBoundary = RouteError;
