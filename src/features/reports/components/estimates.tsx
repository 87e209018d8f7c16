import type { ReactNode } from "react";
import { useTranslation } from "react-i18next";
import { i18n } from "@/i18n";
import { num, sig } from "@/lib/format";
import { Choice } from "./settings";

/*
 * Pieces shared by the screens that put a crude and an adjusted estimate side by side: the odds
 * ratio with its interval, the standard errors in words, the change-in-estimate sentence, and the
 * collinearity mark.
 */

/** An odds ratio's 95 % interval: "0.966–1.15". */
export const ratioRange = (lo: number | null | undefined, hi: number | null | undefined) =>
  lo === null || lo === undefined || hi === null || hi === undefined || !Number.isFinite(lo) || !Number.isFinite(hi) ? "—" : `${sig(lo, 3)}–${sig(hi, 3)}`;

export type SeMethod = "cluster" | "model";

/** The words of one kind, read in the language shown when asked for (a screen reading them redraws on a change). */
const seWords = (method: SeMethod) => ({
  get short() {
    return i18n.t(`reports:se.${method}.short`);
  },
  get long() {
    return i18n.t(`reports:se.${method}.long`);
  },
});

/** The two kinds of standard errors, in words a quality engineer reads once and remembers. */
export const SE_WORDS: Record<SeMethod, { readonly short: string; readonly long: string }> = {
  cluster: seWords("cluster"),
  model: seWords("model"),
};

/** Heat-clustered (default) or model-based standard errors, with what each means under the choice. */
export function SeChoice({ value, onChange, testId = "se-select" }: { value: string; onChange: (v: string) => void; testId?: string }) {
  const { t } = useTranslation("reports");
  const v: SeMethod = value === "model" ? "model" : "cluster";
  return (
    <Choice
      label={t("se.label")}
      testId={testId}
      value={v}
      options={[
        { value: "cluster", label: t("se.cluster.short") },
        { value: "model", label: t("se.model.short") },
      ]}
      onChange={onChange}
      hint={v === "cluster" ? t("se.cluster.hint") : t("se.model.hint")}
    />
  );
}

/** The plain sentence when crude and adjusted disagree by more than a tenth (a shape and a word, not colour). */
export function ChangeSentence({ children, testId = "change-sentence" }: { children: ReactNode; testId?: string }) {
  const { t } = useTranslation("reports");
  return (
    <p className="flex gap-2 rounded-md border-l-4 border-strand-600 bg-strand-50 px-3 py-2 text-sm font-semibold text-ink-900" data-testid={testId}>
      <svg viewBox="0 0 16 16" className="mt-0.5 h-4 w-4 shrink-0 text-strand-700" aria-hidden>
        {/* two arrows apart: the estimate moved */}
        <path d="M2 5h9m-3-3 3 3-3 3M14 11H5m3-3-3 3 3 3" fill="none" stroke="currentColor" strokeWidth="1.7" strokeLinecap="round" strokeLinejoin="round" />
      </svg>
      <span>
        <span className="sr-only">{t("estimates.differ")} </span>
        {children}
      </span>
    </p>
  );
}

const COLLINEARITY_LOOK = {
  low: { cls: "text-ink-600", shape: "ring" },
  notable: { cls: "text-brass-700", shape: "triangle" },
  serious: { cls: "text-alarm-700", shape: "octagon" },
} as const;

/** How collinear a term is with the others (GVIF against √5 and √10): a word and a shape. */
export function CollinearityMark({ level }: { level: "low" | "notable" | "serious" | null | undefined }) {
  if (!level) return <span className="text-xs text-ink-500">—</span>;
  const look = COLLINEARITY_LOOK[level];
  return (
    <span className={`inline-flex items-center gap-1 whitespace-nowrap text-xs font-semibold ${look.cls}`} data-collinearity={level}>
      <svg viewBox="0 0 12 12" className="h-3 w-3 shrink-0" aria-hidden>
        {look.shape === "ring" ? <circle cx="6" cy="6" r="4" fill="none" stroke="currentColor" strokeWidth="1.6" /> : null}
        {look.shape === "triangle" ? <path d="M6 1.2 11 10.6H1z" fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinejoin="round" /> : null}
        {look.shape === "octagon" ? <path d="M3.8.8h4.4l3 3v4.4l-3 3H3.8l-3-3V3.8z" fill="currentColor" /> : null}
      </svg>
      {/* No hook per row: the table around it redraws when the language changes. */}
      {i18n.t(`reports:estimates.collinearity.${level}`)}
    </span>
  );
}

/** "−18 %": a relative change as a signed percentage with a true minus sign. */
export function relChange(v: number | null | undefined): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return "—";
  const r = Math.round(v * 100);
  return `${r > 0 ? "+" : r < 0 ? "−" : ""}${Math.abs(r)} %`;
}

/** A difference of two rates in percentage points, with a true minus sign. */
export const points = (v: number | null, signed = false) => (v === null ? "—" : `${v > 0 && signed ? "+" : v < 0 ? "−" : ""}${num(Math.abs(v * 100), 2)}`);
