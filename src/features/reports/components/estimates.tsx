import type { ReactNode } from "react";
import { sig } from "@/lib/format";
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

/** The two kinds of standard errors, in words a quality engineer reads once and remembers. */
export const SE_WORDS: Record<SeMethod, { short: string; long: string }> = {
  cluster: {
    short: "Heat-clustered",
    long: "the slabs of one heat share its conditions, so they count as one cluster (cluster-robust standard errors), not as independent evidence. Honest intervals when whole heats differ; wider than the model-based ones.",
  },
  model: {
    short: "Model-based",
    long: "every slab taken as independent (the inverse of the model's information). Narrower intervals, too narrow when the slabs of a heat move together, as heat-level conditions make them.",
  },
};

/** Heat-clustered (default) or model-based standard errors, with what each means under the choice. */
export function SeChoice({ value, onChange, testId = "se-select" }: { value: string; onChange: (v: string) => void; testId?: string }) {
  const v: SeMethod = value === "model" ? "model" : "cluster";
  return (
    <Choice
      label="Standard errors"
      testId={testId}
      value={v}
      options={[
        { value: "cluster", label: "Heat-clustered" },
        { value: "model", label: "Model-based" },
      ]}
      onChange={onChange}
      hint={v === "cluster" ? "the default: slabs of a heat count as one cluster" : "every slab taken as independent: narrower, often too narrow"}
    />
  );
}

/** The plain sentence when crude and adjusted disagree by more than a tenth (a shape and a word, not colour). */
export function ChangeSentence({ children, testId = "change-sentence" }: { children: ReactNode; testId?: string }) {
  return (
    <p className="flex gap-2 rounded-md border-l-4 border-strand-600 bg-strand-50 px-3 py-2 text-sm font-semibold text-ink-900" data-testid={testId}>
      <svg viewBox="0 0 16 16" className="mt-0.5 h-4 w-4 shrink-0 text-strand-700" aria-hidden>
        {/* two arrows apart: the estimate moved */}
        <path d="M2 5h9m-3-3 3 3-3 3M14 11H5m3-3-3 3 3 3" fill="none" stroke="currentColor" strokeWidth="1.7" strokeLinecap="round" strokeLinejoin="round" />
      </svg>
      <span>
        <span className="sr-only">Crude and adjusted differ: </span>
        {children}
      </span>
    </p>
  );
}

const COLLINEARITY_LOOK = {
  low: { label: "low", cls: "text-ink-600", shape: "ring" },
  notable: { label: "notable", cls: "text-brass-700", shape: "triangle" },
  serious: { label: "serious", cls: "text-alarm-700", shape: "octagon" },
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
      {look.label}
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
export const points = (v: number | null, signed = false) => (v === null ? "—" : `${v > 0 && signed ? "+" : v < 0 ? "−" : ""}${Math.abs(v * 100).toFixed(2)}`);
