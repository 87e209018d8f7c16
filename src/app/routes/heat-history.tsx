import type { ReactNode } from "react";
import { useQuery, type QueryClient } from "@tanstack/react-query";
import { Link, useParams, type LoaderFunctionArgs } from "react-router";
import { Button } from "@/components/ui/button";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { historyKeys } from "@/features/claims/api/claims.queries";
import { HistoryWorkbookButton } from "@/features/claims/components/history-actions";
import {
  AuditTable,
  CausesTable,
  ChemistryTable,
  ConditionsTable,
  DefectsList,
  HistoryFacts,
  PrintUrl,
  RelatedRecords,
  SamplesLine,
  SlabConditionsTable,
  SlabsTable,
} from "@/features/claims/components/history-sections";
import { dateTime, plural } from "@/lib/format";
import { causeChips } from "../cause-chips";
import { requireCapability } from "../guard";
import { RouteError } from "./route-error";

export function makeLoader(qc: QueryClient) {
  return async ({ params }: LoaderFunctionArgs) => {
    await requireCapability(qc, "history.export");
    await qc.ensureQueryData(historyKeys.heat(params.heatNo ?? ""));
    return null;
  };
}

/** One part of the paper: a heading and its records; on paper each part starts clear of the last. */
function Part({ n, title, children, pageBreak = false }: { n: number; title: string; children: ReactNode; pageBreak?: boolean }) {
  return (
    <section className={`rounded-lg border border-ink-200 bg-white p-4 print:rounded-none print:border-0 print:p-0 ${pageBreak ? "print:break-before-page" : ""}`} data-testid="history-part">
      <h2 className="mb-3 border-b-2 border-ink-800 pb-1 text-base font-bold text-ink-900 print:break-after-avoid">
        {n}. {title}
      </h2>
      {children}
    </section>
  );
}

/** The heat history laid out for paper: the same records, in the same order, as the workbook's ten sheets. */
export function Component() {
  const { heatNo = "" } = useParams();
  const hist = useQuery(historyKeys.heat(heatNo));
  if (hist.isPending) return <Spinner label="Loading the heat's history" />;
  if (hist.isError) return <Notice tone="error">{hist.error.message}</Notice>;
  const h = hist.data;
  const heatPath = `/heats/${encodeURIComponent(h.heat.heatNo)}`;
  return (
    <article className="printable-history mx-auto max-w-5xl space-y-5 print:max-w-none print:space-y-4" data-testid="printable-history">
      <div className="flex flex-wrap items-center gap-3 print:hidden">
        <Link to={heatPath} className="text-sm font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2">
          Heat {h.heat.heatNo}
        </Link>
        <span className="text-ink-400">·</span>
        <Link to={`/trace?q=${encodeURIComponent(h.heat.heatNo)}`} className="text-sm font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2">
          Trace
        </Link>
        <div className="ml-auto flex flex-wrap items-start gap-2">
          <Button onClick={() => window.print()} data-testid="print-history">
            <svg viewBox="0 0 16 16" className="h-4 w-4" aria-hidden>
              <path d="M4 6V2h8v4M4 12H2V7h12v5h-2M4 10h8v4H4z" fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinejoin="round" />
            </svg>
            Print or save as PDF
          </Button>
          <HistoryWorkbookButton heatNo={h.heat.heatNo} label="The same as a workbook (.xlsx)" />
        </div>
      </div>
      <header className="border-b-4 border-ink-900 pb-3">
        <div className="text-xs font-semibold uppercase tracking-widest text-ink-600">Strandsight · heat history</div>
        <h1 className="text-3xl font-bold tracking-tight text-ink-900">Heat {h.heat.heatNo}</h1>
        <p className="mt-1 text-sm text-ink-700">
          Prepared {dateTime(h.generatedAt)} (times in this computer's time zone; the workbook gives UTC). Record:{" "}
          <Link to={heatPath} className="font-semibold text-strand-700 underline">
            heat page
          </Link>
          <PrintUrl path={heatPath} />
        </p>
      </header>
      <Notice tone="caution" title="Procedure">
        This record states what was cast, found and decided. Dispositions and claims follow the plant's quality procedures and the
        customer's specification.
      </Notice>
      <Part n={1} title="Summary">
        <HistoryFacts history={h} />
      </Part>
      <div className="grid gap-5 md:grid-cols-2 print:grid-cols-2">
        <Part n={2} title="Chemistry">
          <ChemistryTable history={h} />
        </Part>
        <Part n={3} title="Casting conditions of the heat">
          <ConditionsTable history={h} />
        </Part>
      </div>
      <Part n={4} title="Process samples">
        <SamplesLine history={h} />
      </Part>
      <Part n={5} title={`Slabs (${h.slabs.length})`}>
        <SlabsTable history={h} />
        <h3 className="mb-2 mt-4 text-sm font-bold">Each slab's conditions</h3>
        <div className="overflow-x-auto print:overflow-visible">
          <SlabConditionsTable history={h} />
        </div>
      </Part>
      <Part n={6} title={`Defects (${h.defects.length})`} pageBreak={h.defects.length > 0}>
        <DefectsList history={h} renderCauses={causeChips} />
      </Part>
      <Part n={7} title={`Causes (${plural(h.causes.length, "tagging")}, removed ones included)`}>
        <div className="overflow-x-auto print:overflow-visible">
          <CausesTable history={h} />
        </div>
      </Part>
      <Part n={8} title={`Investigations (${h.investigations.length}, this heat or its sequence)`}>
        <RelatedRecords history={h} show="investigations" />
      </Part>
      <Part n={9} title={`Claims (${h.claims.length}, this heat or its sequence)`}>
        <RelatedRecords history={h} show="claims" />
      </Part>
      <Part n={10} title={`Audit trail (${h.audit.length})`} pageBreak={h.audit.length > 10}>
        <div className="overflow-x-auto print:overflow-visible">
          <AuditTable history={h} />
        </div>
      </Part>
      <footer className="border-t border-ink-300 pt-2 text-xs text-ink-600">Strandsight · heat {h.heat.heatNo} · prepared {dateTime(h.generatedAt)}</footer>
    </article>
  );
}

export const ErrorBoundary = RouteError;
