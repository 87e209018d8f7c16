import { Link } from "react-router";
import type { YardSlab } from "@shared/api/yard";
import { BAND_RANK, BAND_STYLE, BAND_WORDS } from "@/features/risk/components/risk-band";
import { pct } from "@/lib/format";

/** The waiting slabs that carry a risk, riskiest first: band, then risk. */
export function checkFirstOrder(waiting: readonly YardSlab[]): YardSlab[] {
  return waiting.filter((s) => s.risk).sort((a, b) => BAND_RANK[b.risk!.band] - BAND_RANK[a.risk!.band] || b.risk!.risk - a.risk!.risk);
}

/**
 * The inspector's "check first" list: the slabs waiting for inspection in order of risk under the
 * plant's active risk models, with the reasons in words and where that defect usually sits. The
 * order is a suggestion; every slab is inspected.
 */
export function CheckFirst({ ordered, shown = 8 }: { ordered: readonly YardSlab[]; shown?: number }) {
  if (ordered.length === 0) return null;
  return (
    <div className="space-y-3">
      <p className="text-sm text-ink-800" data-testid="check-first-caution">
        <strong>Every slab is inspected as the plant's procedure requires.</strong> This order is only a suggestion, learnt from the plant's history: a risk is
        an association, not a cause, and a slab lower down or not listed is not cleared.
      </p>
      <ol className="space-y-2" aria-label="Slabs to check first, riskiest first" data-testid="check-first">
        {ordered.slice(0, shown).map((s, i) => {
          const r = s.risk!;
          return (
            <li key={s.slabId}>
              <Link
                to={`/yard/slabs/${encodeURIComponent(s.slabId)}`}
                className={`block rounded-md border border-ink-300 px-4 py-2 hover:bg-strand-50 ${BAND_STYLE[r.band]}`}
              >
                <span className="flex flex-wrap items-baseline gap-x-3">
                  <span className="text-sm font-semibold text-ink-700">{i + 1}.</span>
                  <span className="text-lg font-semibold tabular-nums text-ink-900">{s.slabId}</span>
                  <span className="text-sm font-semibold text-ink-900">
                    {BAND_WORDS[r.band]} of {r.target.toLowerCase()} ({pct(r.risk, 0)})
                  </span>
                </span>
                {r.reasons.length ? <span className="block text-sm text-ink-800">Because: {r.reasons.join("; ")}.</span> : null}
                {r.usualPlace ? <span className="block text-sm text-ink-700">Look first: {r.usualPlace}.</span> : null}
              </Link>
            </li>
          );
        })}
      </ol>
      {ordered.length > shown ? (
        <p className="text-sm text-ink-700">{ordered.length - shown} more slabs with a risk wait; the list above is the riskiest.</p>
      ) : null}
    </div>
  );
}
