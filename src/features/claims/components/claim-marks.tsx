import type { TermList, Terms } from "@/i18n/terms";
import { DASH } from "@/lib/format";
import type { ClaimStatus } from "@shared/domain";

const stroke = { fill: "none", stroke: "currentColor", strokeWidth: 1.8, strokeLinecap: "round" as const, strokeLinejoin: "round" as const };

const COLOR: Record<ClaimStatus, string> = {
  new: "text-brass-700",
  under_review: "text-strand-800",
  accepted: "text-ember-700",
  rejected: "text-ink-700",
  closed: "text-ink-700",
};

/**
 * A claim's status by a word and a shape: new a hollow diamond, under review
 * a lens, accepted a filled disc with a tick, rejected a ring struck through, closed a filled square.
 * The word comes from the caller (term("claimStatus", status)), worked out once per list rather than per row.
 */
export function ClaimStatusMark({ status, label }: { status: ClaimStatus; label: string }) {
  return (
    <span
      className={`inline-flex items-center gap-1.5 whitespace-nowrap text-sm font-semibold ${COLOR[status]}`}
      data-status={status}
      data-testid="claim-status"
    >
      <svg viewBox="0 0 16 16" className="h-4 w-4 shrink-0" aria-hidden>
        {status === "new" ? <path d="M8 1.8 14.2 8 8 14.2 1.8 8z" {...stroke} /> : null}
        {status === "under_review" ? (
          <>
            <circle cx="6.8" cy="6.8" r="4.3" {...stroke} />
            <path d="M10 10l4 4" {...stroke} strokeWidth={2.2} />
          </>
        ) : null}
        {status === "accepted" ? (
          <>
            <circle cx="8" cy="8" r="6.8" fill="currentColor" />
            <path d="M4.6 8.3l2.3 2.3 4.5-5" stroke="#fff" strokeWidth="1.9" fill="none" strokeLinecap="round" strokeLinejoin="round" />
          </>
        ) : null}
        {status === "rejected" ? (
          <>
            <circle cx="8" cy="8" r="6" {...stroke} />
            <path d="M3.8 12.2l8.4-8.4" {...stroke} />
          </>
        ) : null}
        {status === "closed" ? <rect x="2" y="2" width="12" height="12" rx="1.5" fill="currentColor" /> : null}
      </svg>
      {label}
    </span>
  );
}

/**
 * Whether a related record is on the very heat or only on another heat of its sequence; the words
 * ("this heat", "same sequence") come from the caller, once per list.
 */
export function SameHeatMark({ sameHeat, words }: { sameHeat: boolean; words: { thisHeat: string; sameSequence: string } }) {
  return sameHeat ? (
    <span className="inline-flex items-center gap-1 whitespace-nowrap text-xs font-bold text-ink-900" data-testid="relation" data-same-heat="true">
      <svg viewBox="0 0 12 12" className="h-3 w-3 shrink-0" aria-hidden>
        <circle cx="6" cy="6" r="4.8" fill="currentColor" />
      </svg>
      {words.thisHeat}
    </span>
  ) : (
    <span className="inline-flex items-center gap-1 whitespace-nowrap text-xs font-semibold text-ink-600" data-testid="relation" data-same-heat="false">
      <svg viewBox="0 0 12 12" className="h-3 w-3 shrink-0" aria-hidden>
        <circle cx="6" cy="6" r="4.2" fill="none" stroke="currentColor" strokeWidth="1.6" strokeDasharray="2 1.6" />
      </svg>
      {words.sameSequence}
    </span>
  );
}

/**
 * A shared list's words looked up once per table rather than once per cell (wrap in useMemo on
 * `term`): an unknown code shows as it is, none as "—".
 */
export function listWords(term: Terms["term"], list: TermList, keys: readonly string[]) {
  const words = new Map(keys.map((k) => [k, term(list, k)]));
  return (key: string | null | undefined) => (key ? (words.get(key) ?? key) : DASH);
}
