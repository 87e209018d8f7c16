import type { ReactNode } from "react";
import { useTranslation } from "react-i18next";
import { Link } from "react-router";
import type { Trace } from "@shared/api/claims";
import { useTerms } from "@/i18n/terms";
import { count, DASH, dateTime, withUnit } from "@/lib/format";

const link = "font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2";

function Step({ kind, id, testId, children }: { kind: string; id: ReactNode; testId: string; children: ReactNode }) {
  return (
    <li className="min-w-0 flex-1 rounded-md border-2 border-ink-700 bg-white px-4 py-3" data-testid={testId}>
      <div className="text-xs font-semibold uppercase tracking-wide text-ink-600">{kind}</div>
      <div className="text-xl font-bold text-ink-900" data-field="id">
        {id}
      </div>
      <div className="mt-1 space-y-0.5 text-sm text-ink-800">{children}</div>
    </li>
  );
}

function Arrow() {
  return (
    <li aria-hidden className="flex items-center justify-center text-ink-500 max-md:rotate-90 print:rotate-0">
      <svg viewBox="0 0 24 24" className="h-7 w-7">
        <path d="M3 12h15M13 6l6 6-6 6" fill="none" stroke="currentColor" strokeWidth="2.4" strokeLinecap="round" strokeLinejoin="round" />
      </svg>
    </li>
  );
}

/** Product → slab → heat, as far as the id reaches: a heat id shows the heat alone. */
export function TraceChain({ trace }: { trace: Trace }) {
  const { t } = useTranslation("claims");
  const { term } = useTerms();
  const h = trace.history.heat;
  const slab = trace.slabId ? trace.history.slabs.find((s) => s.slabId === trace.slabId) : undefined;
  return (
    <ol
      className="flex flex-col gap-2 md:flex-row md:items-stretch print:flex-row"
      aria-label={t("traceChain.label")}
      data-testid="trace-chain"
      data-found={trace.found}
    >
      {trace.product ? (
        <>
          <Step kind={trace.product.kind === "plate" ? t("traceChain.plate") : t("traceChain.coil")} id={trace.product.productId} testId="chain-product">
            <div>{t("traceChain.rolled", { at: dateTime(trace.product.rolledAt) })}</div>
            <div>{withUnit(trace.product.weightT, "t", 2)}</div>
          </Step>
          <Arrow />
        </>
      ) : null}
      {trace.slabId ? (
        <>
          <Step
            kind={t("traceChain.slab")}
            id={
              <Link to={`/slabs/${encodeURIComponent(trace.slabId)}`} className={link}>
                {trace.slabId}
              </Link>
            }
            testId="chain-slab"
          >
            {slab ? (
              <>
                <div>{t("traceChain.strandPiece", { strand: slab.strand, piece: slab.pieceNo, weight: withUnit(slab.weightT, "t", 2) })}</div>
                <div>
                  {t("traceChain.defectsDisposition", {
                    count: slab.defects,
                    n: count(slab.defects),
                    disposition: slab.disposition ? term("dispositions", slab.disposition) : DASH,
                  })}
                </div>
              </>
            ) : (
              <div>{DASH}</div>
            )}
          </Step>
          <Arrow />
        </>
      ) : null}
      <Step
        kind={t("traceChain.heat")}
        id={
          <Link to={`/heats/${encodeURIComponent(h.heatNo)}`} className={link}>
            {h.heatNo}
          </Link>
        }
        testId="chain-heat"
      >
        <div>{t("traceChain.gradeOn", { grade: h.grade, caster: h.caster, sequence: h.sequenceNo ?? DASH })}</div>
        <div>{t("traceChain.cast", { at: dateTime(h.castStart) })}</div>
      </Step>
    </ol>
  );
}
