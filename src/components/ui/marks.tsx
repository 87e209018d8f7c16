import { useTranslation } from "react-i18next";
import type { ConditionSource } from "@shared/variables";
import type { Severity } from "@shared/domain";
import { useTerms } from "@/i18n/terms";

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
      {shape === "octagon" ? (
        <>
          <path d="M3.8.8h4.4l3 3v4.4l-3 3H3.8l-3-3V3.8z" fill="currentColor" />
          {/* a bar inside, so the octagon never reads as a plain dot at small sizes */}
          <path d="M3 6h6" stroke="#fff" strokeWidth="1.8" />
        </>
      ) : null}
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
  const { t } = useTranslation();
  const { term } = useTerms();
  if (!source) return <span className="text-xs text-ink-500">{t("marks.noValue")}</span>;
  const look = SOURCE_LOOK[source];
  return (
    <span
      className={`inline-flex items-center gap-1 whitespace-nowrap text-xs font-semibold ${look.color}`}
      title={term("conditionSources", source)}
      data-source={source}
    >
      <ShapeIcon shape={look.shape} />
      {full ? term("conditionSources", source) : t(`marks.sourceShort.${look.short}`)}
    </span>
  );
}

/** The key to the source marks, for under a table. */
export function SourceLegend() {
  const { t } = useTranslation();
  const { term } = useTerms();
  return (
    <p className="flex flex-wrap items-center gap-x-4 gap-y-1 text-xs text-ink-600">
      <span className="font-semibold">{t("marks.sourceLegend")}</span>
      {(Object.keys(SOURCE_LOOK) as ConditionSource[]).map((s) => (
        <span key={s} className="inline-flex items-center gap-1">
          <SourceMark source={s} /> = {term("conditionSources", s)}
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

export function SeverityMark({ severity, large = false }: { severity: number; large?: boolean }) {
  const s = (severity in SEVERITY_LOOK ? severity : 1) as Severity;
  const look = SEVERITY_LOOK[s];
  const { term } = useTerms();
  return (
    <span className={`inline-flex items-center gap-1.5 whitespace-nowrap font-semibold ${large ? "text-lg" : "text-sm"} ${look.color}`} data-severity={s}>
      <ShapeIcon shape={look.shape} className={large ? "h-5 w-5" : "h-3.5 w-3.5"} />
      {term("severities", s)} ({s})
    </span>
  );
}

/** A slab cut across a ladle change: mixed steel, more inclusions. */
export function TransitionMark({ transition }: { transition: boolean }) {
  const { t } = useTranslation();
  return transition ? (
    <span className="inline-flex items-center gap-1 whitespace-nowrap text-xs font-semibold text-ember-700" title={t("marks.transitionTitle")}>
      <ShapeIcon shape="diamond" /> {t("marks.transition")}
    </span>
  ) : (
    <span className="text-xs text-ink-500">{t("marks.no")}</span>
  );
}

/** The severity colours and shapes for SVG drawings (the same as SeverityMark's). */
export const SEVERITY_COLORS: Record<number, string> = { 1: "#4b5d6d", 2: "#7a5a10", 3: "#9a3412", 4: "#a61b1b" };

/**
 * A severity mark inside an SVG drawing, centred on (x, y), with a short label in it. A pending
 * entry (not yet on the server) is drawn dashed.
 */
export function SeverityGlyph({
  x,
  y,
  severity,
  label,
  r = 15,
  pending = false,
}: {
  x: number;
  y: number;
  severity: number;
  label?: string | number;
  r?: number;
  pending?: boolean;
}) {
  const c = SEVERITY_COLORS[severity] ?? SEVERITY_COLORS[1]!;
  const filled = !pending && (severity === 2 || severity >= 4);
  const common = { fill: filled ? c : "#fff", stroke: c, strokeWidth: 2.4, strokeLinejoin: "round" as const, strokeDasharray: pending ? "4 3" : undefined };
  const shape =
    severity >= 4 ? (
      <path
        d={`M${x - r * 0.41} ${y - r}h${r * 0.82}l${r * 0.59} ${r * 0.59}v${r * 0.82}l${-r * 0.59} ${r * 0.59}h${-r * 0.82}l${-r * 0.59} ${-r * 0.59}v${-r * 0.82}z`}
        {...common}
      />
    ) : severity === 3 ? (
      <path d={`M${x} ${y - r * 1.05}L${x + r * 1.05} ${y + r * 0.8}H${x - r * 1.05}z`} {...common} />
    ) : severity === 2 ? (
      <rect x={x - r * 0.82} y={y - r * 0.82} width={r * 1.64} height={r * 1.64} {...common} />
    ) : (
      <circle cx={x} cy={y} r={r * 0.85} {...common} />
    );
  return (
    <g data-severity={severity} pointerEvents="none">
      {shape}
      {label !== undefined ? (
        <text x={x} y={y + (severity === 3 ? r * 0.45 : r * 0.33)} textAnchor="middle" fontSize={r * 0.9} fontWeight={700} fill={filled ? "#fff" : c}>
          {label}
        </text>
      ) : null}
    </g>
  );
}

export type EntryStatus = "waiting" | "sending" | "retrying" | "blocked" | "signed-out" | "sent" | "photos-waiting" | "reviewed" | "rejected";

const STATUS_LOOK: Record<EntryStatus, { color: string }> = {
  waiting: { color: "text-brass-700" },
  sending: { color: "text-strand-700" },
  retrying: { color: "text-brass-700" },
  "signed-out": { color: "text-brass-700" },
  blocked: { color: "text-alarm-700" },
  "photos-waiting": { color: "text-brass-700" },
  sent: { color: "text-ink-700" },
  reviewed: { color: "text-ok-700" },
  rejected: { color: "text-ink-700" },
};

function StatusIcon({ status }: { status: EntryStatus }) {
  const s = { fill: "none", stroke: "currentColor", strokeWidth: 1.8, strokeLinecap: "round" as const, strokeLinejoin: "round" as const };
  return (
    <svg viewBox="0 0 16 16" className="h-4 w-4 shrink-0" aria-hidden>
      {status === "waiting" || status === "retrying" || status === "signed-out" || status === "photos-waiting" ? (
        // an hourglass
        <path d="M4 2h8M4 14h8M5 2c0 4 6 4 6 6s-6 2-6 6M11 2c0 4-6 4-6 6s6 2 6 6" {...s} />
      ) : null}
      {status === "sending" ? <path d="M8 13V3M4 7l4-4 4 4" {...s} strokeWidth={2.2} /> : null}
      {status === "blocked" ? (
        <>
          <circle cx="8" cy="8" r="7" fill="currentColor" />
          <path d="M8 4v5" stroke="#fff" strokeWidth="2.2" strokeLinecap="round" />
          <circle cx="8" cy="12" r="1.2" fill="#fff" />
        </>
      ) : null}
      {status === "sent" ? <path d="M2.5 8.5l3.5 3.5 7.5-8" {...s} strokeWidth={2.2} /> : null}
      {status === "reviewed" ? (
        <>
          <circle cx="8" cy="8" r="7" fill="currentColor" />
          <path d="M4.5 8.3l2.4 2.4 4.6-5" stroke="#fff" strokeWidth="2" fill="none" strokeLinecap="round" strokeLinejoin="round" />
        </>
      ) : null}
      {status === "rejected" ? (
        <>
          <circle cx="8" cy="8" r="6.2" {...s} />
          <path d="M3.6 12.4l8.8-8.8" {...s} />
        </>
      ) : null}
    </svg>
  );
}

/** Where an entry stands: on the tablet, on its way, on the server, reviewed — a shape and a word. */
export function StatusMark({ status, label }: { status: EntryStatus; label?: string }) {
  const look = STATUS_LOOK[status];
  const { t } = useTranslation();
  return (
    <span className={`inline-flex items-center gap-1.5 text-sm font-semibold ${label ? "" : "whitespace-nowrap"} ${look.color}`} data-status={status}>
      <StatusIcon status={status} />
      {label ?? t(`marks.status.${status}`)}
    </span>
  );
}

/** In use or retired (kept for the record, not offered for new entries). */
export function ActiveMark({ active }: { active: boolean }) {
  const { t } = useTranslation();
  return active ? (
    <span className="inline-flex items-center gap-1 whitespace-nowrap text-sm font-semibold text-ok-700" data-active="true">
      <ShapeIcon shape="circle" /> {t("marks.inUse")}
    </span>
  ) : (
    <span className="inline-flex items-center gap-1 whitespace-nowrap text-sm font-semibold text-ink-600" data-active="false">
      <svg viewBox="0 0 12 12" className="h-3 w-3 shrink-0" aria-hidden>
        <circle cx="6" cy="6" r="4.4" fill="none" stroke="currentColor" strokeWidth="1.6" />
        <path d="M2.9 9.1 9.1 2.9" stroke="currentColor" strokeWidth="1.6" />
      </svg>
      {t("marks.retired")}
    </span>
  );
}
