import type { ReactNode } from "react";
import { useTranslation } from "react-i18next";
import { Notice } from "@/components/ui/notice";
import { i18n } from "@/i18n";

/** Below this many slabs a rate is shown greyed and marked: its interval is too wide to read much into. */
export const FEW_SLABS = 30;

/** The warnings of a report: the server's notes and the screen's own small-n findings. Nothing to warn of, nothing shown. */
export function SmallNWarning({ notes, children, title }: { notes: string[]; children?: ReactNode; title?: string }) {
  const { t } = useTranslation("reports");
  const items = notes.filter(Boolean);
  if (items.length === 0 && !children) return null;
  return (
    <div data-testid="small-n-warning">
      <Notice tone="caution" title={title ?? t("smallN.title")}>
        {items.length === 1 && !children ? (
          items[0]
        ) : (
          <ul className="mt-1 list-disc space-y-0.5 pl-5">
            {items.map((n) => (
              <li key={n}>{n}</li>
            ))}
            {children ? <li>{children}</li> : null}
          </ul>
        )}
      </Notice>
    </div>
  );
}

/** The mark beside a row with few slabs: a word and a shape, not a colour alone. */
export function FewMark({ label }: { label?: string }) {
  // No hook per row: the table around it redraws when the language changes.
  return (
    <span className="ml-1 inline-flex items-center gap-1 whitespace-nowrap text-xs font-semibold text-ember-700" data-few="true">
      <svg viewBox="0 0 12 12" className="h-3 w-3" aria-hidden>
        <path d="M6 1.2 11 10.6H1z" fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinejoin="round" />
      </svg>
      {label ?? i18n.t("reports:smallN.few")}
    </span>
  );
}
