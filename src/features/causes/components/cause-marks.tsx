import { useTranslation } from "react-i18next";
import type { CauseConfidence } from "@shared/domain";
import { useTerms } from "@/i18n/terms";

/*
 * How sure a tagging is, by a word and a shape together: a dotted ring for suspected, a half-filled
 * disc for probable, a filled disc with a tick for confirmed. Never colour alone.
 */
export function ConfidenceIcon({ confidence, className = "h-3.5 w-3.5" }: { confidence: CauseConfidence; className?: string }) {
  return (
    <svg viewBox="0 0 14 14" className={`shrink-0 ${className}`} aria-hidden>
      {confidence === "suspected" ? <circle cx="7" cy="7" r="5.4" fill="none" stroke="currentColor" strokeWidth="1.6" strokeDasharray="2.2 1.8" /> : null}
      {confidence === "probable" ? (
        <>
          <circle cx="7" cy="7" r="5.4" fill="none" stroke="currentColor" strokeWidth="1.6" />
          <path d="M7 1.6a5.4 5.4 0 0 1 0 10.8z" fill="currentColor" />
        </>
      ) : null}
      {confidence === "confirmed" ? (
        <>
          <circle cx="7" cy="7" r="6.2" fill="currentColor" />
          <path d="M4 7.2l2.1 2.1L10.2 5" fill="none" stroke="#fff" strokeWidth="1.8" strokeLinecap="round" strokeLinejoin="round" />
        </>
      ) : null}
    </svg>
  );
}

const TONE: Record<CauseConfidence, string> = {
  suspected: "border-ink-300 bg-white text-ink-800",
  probable: "border-strand-600 bg-strand-50 text-ink-900",
  confirmed: "border-strand-800 bg-strand-100 text-ink-900",
};

/** One live cause of a defect: the tag's name and the confidence in words. */
export function CauseChip({ tagName, tag, confidence }: { tagName: string; tag: string; confidence: CauseConfidence }) {
  const { term } = useTerms();
  return (
    <span
      className={`inline-flex min-h-8 items-center gap-1.5 rounded-md border px-2 py-0.5 text-sm ${TONE[confidence]}`}
      data-testid="cause-chip"
      data-tag={tag}
      data-confidence={confidence}
      title={tag}
    >
      <ConfidenceIcon confidence={confidence} />
      <span className="font-semibold">{tagName}</span>
      <span className="text-xs text-ink-700">· {term("causeConfidence", confidence).toLowerCase()}</span>
    </span>
  );
}

export function CauseChips({ causes }: { causes: { tag: string; tagName: string; confidence: CauseConfidence }[] }) {
  const { t } = useTranslation("process");
  if (causes.length === 0)
    return (
      <span className="text-sm text-ink-600" data-testid="no-causes">
        {t("causes.noCause")}
      </span>
    );
  return (
    <span className="flex flex-wrap gap-1.5">
      {causes.map((c) => (
        <CauseChip key={c.tag} {...c} />
      ))}
    </span>
  );
}
