import { CONDITION_SOURCE_LABELS, type ConditionSource } from "@shared/variables";
import { SEVERITY_LABELS, type Severity } from "@shared/domain";

/*
 * Small marks that carry a meaning by a word and a shape together, never by colour alone:
 * where a value came from, how severe a defect is, whether a slab is a transition slab.
 */

type Shape = "square" | "circle" | "triangle" | "ring" | "diamond" | "octagon";

function ShapeIcon({ shape, className = "" }: { shape: Shape; className?: string }) {
  return (
    <svg viewBox="0 0 12 12" className={`h-3 w-3 shrink-0 ${className}`} aria-hidden>
      {shape === "square" ? <rect x="1.5" y="1.5" width="9" height="9" fill="currentColor" /> : null}
      {shape === "circle" ? <circle cx="6" cy="6" r="4.6" fill="currentColor" /> : null}
      {shape === "ring" ? <circle cx="6" cy="6" r="4" fill="none" stroke="currentColor" strokeWidth="1.8" /> : null}
      {shape === "triangle" ? <path d="M6 1.2 11 10.6H1z" fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinejoin="round" /> : null}
      {shape === "diamond" ? <path d="M6 .8 11.2 6 6 11.2.8 6z" fill="currentColor" /> : null}
      {shape === "octagon" ? <path d="M3.8.8h4.4l3 3v4.4l-3 3H3.8l-3-3V3.8z" fill="currentColor" /> : null}
    </svg>
  );
}

const SOURCE_LOOK: Record<ConditionSource, { shape: Shape; short: string; color: string }> = {
  slab: { shape: "square", short: "slab", color: "text-strand-800" },
  samples: { shape: "circle", short: "samples", color: "text-ok-700" },
  heat: { shape: "triangle", short: "heat", color: "text-ember-700" },
};

/** Where a resolved condition came from: given for the slab, the process samples, or the heat's value. */
export function SourceMark({ source, full = false }: { source: ConditionSource | null | undefined; full?: boolean }) {
  if (!source) return <span className="text-xs text-ink-500">no value</span>;
  const look = SOURCE_LOOK[source];
  return (
    <span
      className={`inline-flex items-center gap-1 whitespace-nowrap text-xs font-semibold ${look.color}`}
      title={CONDITION_SOURCE_LABELS[source]}
      data-source={source}
    >
      <ShapeIcon shape={look.shape} />
      {full ? CONDITION_SOURCE_LABELS[source] : look.short}
    </span>
  );
}

/** The key to the source marks, for under a table. */
export function SourceLegend() {
  return (
    <p className="flex flex-wrap items-center gap-x-4 gap-y-1 text-xs text-ink-600">
      <span className="font-semibold">Source of each value:</span>
      {(Object.keys(SOURCE_LOOK) as ConditionSource[]).map((s) => (
        <span key={s} className="inline-flex items-center gap-1">
          <SourceMark source={s} /> = {CONDITION_SOURCE_LABELS[s]}
        </span>
      ))}
    </p>
  );
}

const SEVERITY_LOOK: Record<Severity, { shape: Shape; color: string }> = {
  1: { shape: "ring", color: "text-ink-600" },
  2: { shape: "square", color: "text-brass-700" },
  3: { shape: "triangle", color: "text-ember-700" },
  4: { shape: "octagon", color: "text-alarm-700" },
};

export function SeverityMark({ severity }: { severity: number }) {
  const s = (severity in SEVERITY_LOOK ? severity : 1) as Severity;
  const look = SEVERITY_LOOK[s];
  return (
    <span className={`inline-flex items-center gap-1.5 whitespace-nowrap text-sm font-semibold ${look.color}`} data-severity={s}>
      <ShapeIcon shape={look.shape} className="h-3.5 w-3.5" />
      {SEVERITY_LABELS[s]} ({s})
    </span>
  );
}

/** A slab cut across a ladle change: mixed steel, more inclusions. */
export function TransitionMark({ transition }: { transition: boolean }) {
  return transition ? (
    <span className="inline-flex items-center gap-1 whitespace-nowrap text-xs font-semibold text-ember-700" title="Cut across a ladle change (mixed steel)">
      <ShapeIcon shape="diamond" /> transition
    </span>
  ) : (
    <span className="text-xs text-ink-500">no</span>
  );
}
