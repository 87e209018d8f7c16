import { useTranslation } from "react-i18next";
import type { ACTION_STATUS_LABELS, HYPOTHESIS_STATUS_LABELS, INVESTIGATION_STATUS_LABELS } from "@shared/api/investigations";
import { useTerms } from "@/i18n/terms";

type IStatus = keyof typeof INVESTIGATION_STATUS_LABELS;
type AStatus = keyof typeof ACTION_STATUS_LABELS;
type HStatus = keyof typeof HYPOTHESIS_STATUS_LABELS;

const stroke = { fill: "none", stroke: "currentColor", strokeWidth: 1.8, strokeLinecap: "round" as const, strokeLinejoin: "round" as const };

/** Open: an empty circle; under way: a circle with a hand; closed: a filled square with a tick. */
export function InvestigationStatusMark({ status }: { status: IStatus }) {
  const { term } = useTerms();
  const color = status === "closed" ? "text-ink-700" : status === "in_progress" ? "text-strand-800" : "text-brass-700";
  return (
    <span
      className={`inline-flex items-center gap-1.5 whitespace-nowrap text-sm font-semibold ${color}`}
      data-status={status}
      data-testid="investigation-status"
    >
      <svg viewBox="0 0 16 16" className="h-4 w-4 shrink-0" aria-hidden>
        {status === "open" ? <circle cx="8" cy="8" r="6" {...stroke} /> : null}
        {status === "in_progress" ? (
          <>
            <circle cx="8" cy="8" r="6" {...stroke} />
            <path d="M8 4.5V8l2.5 1.8" {...stroke} />
          </>
        ) : null}
        {status === "closed" ? (
          <>
            <rect x="2" y="2" width="12" height="12" rx="1.5" fill="currentColor" />
            <path d="M5 8.2l2 2 4-4.4" stroke="#fff" strokeWidth="1.8" fill="none" strokeLinecap="round" strokeLinejoin="round" />
          </>
        ) : null}
      </svg>
      {term("investigationStatus", status)}
    </span>
  );
}

/** An action past its due date and not done: a word and a warning triangle, never a colour alone. */
export function OverdueMark({ label }: { label?: string }) {
  const { t } = useTranslation("process");
  return (
    <span className="inline-flex items-center gap-1 whitespace-nowrap text-sm font-bold text-alarm-700" data-testid="overdue-mark">
      <svg viewBox="0 0 16 16" className="h-4 w-4 shrink-0" aria-hidden>
        <path d="M8 1.5 15 14H1z" fill="currentColor" />
        <path d="M8 6v4" stroke="#fff" strokeWidth="1.8" strokeLinecap="round" />
        <circle cx="8" cy="12" r="0.9" fill="#fff" />
      </svg>
      {label ?? t("investigations.overdue")}
    </span>
  );
}

export function ActionStatusMark({ status }: { status: AStatus }) {
  const { term } = useTerms();
  return (
    <span className="inline-flex items-center gap-1.5 whitespace-nowrap text-sm font-semibold text-ink-800" data-status={status}>
      <svg viewBox="0 0 16 16" className="h-4 w-4 shrink-0" aria-hidden>
        {status === "open" ? <rect x="2.5" y="2.5" width="11" height="11" rx="1" {...stroke} /> : null}
        {status === "in_progress" ? (
          <>
            <rect x="2.5" y="2.5" width="11" height="11" rx="1" {...stroke} />
            <path d="M2.5 13.5 13.5 2.5V13.5z" fill="currentColor" />
          </>
        ) : null}
        {status === "done" ? (
          <>
            <rect x="2" y="2" width="12" height="12" rx="1" fill="currentColor" />
            <path d="M5 8.2l2 2 4-4.4" stroke="#fff" strokeWidth="1.8" fill="none" strokeLinecap="round" strokeLinejoin="round" />
          </>
        ) : null}
        {status === "cancelled" ? (
          <>
            <rect x="2.5" y="2.5" width="11" height="11" rx="1" {...stroke} />
            <path d="M5 11 11 5" {...stroke} />
          </>
        ) : null}
      </svg>
      {term("actionStatus", status)}
    </span>
  );
}

export function HypothesisStatusMark({ status }: { status: HStatus }) {
  const { term } = useTerms();
  const color = status === "supported" ? "text-ok-700" : status === "rejected" ? "text-ink-600" : "text-brass-700";
  return (
    <span className={`inline-flex items-center gap-1.5 whitespace-nowrap text-sm font-semibold ${color}`} data-status={status} data-testid="hypothesis-status">
      <svg viewBox="0 0 16 16" className="h-4 w-4 shrink-0" aria-hidden>
        {status === "open" ? <path d="M6 6a2 2 0 1 1 2.8 1.8C8.2 8.1 8 8.6 8 9.3M8 12v.1" {...stroke} /> : null}
        {status === "supported" ? <path d="M2.5 8.5l3.5 3.5 7.5-8" {...stroke} strokeWidth={2.2} /> : null}
        {status === "rejected" ? <path d="M3.5 3.5l9 9M12.5 3.5l-9 9" {...stroke} strokeWidth={2} /> : null}
      </svg>
      {term("hypothesisStatus", status)}
    </span>
  );
}
