/** A labelled progress bar; without a value it shows that work goes on with no known end. */
export function ProgressBar({ label, value, detail }: { label: string; value: number | null; detail?: string }) {
  const pct = value === null ? null : Math.max(0, Math.min(100, Math.round(value * 100)));
  return (
    <div className="space-y-1">
      <div className="flex items-baseline justify-between gap-3 text-sm">
        <span className="font-semibold text-ink-800">{label}</span>
        <span className="tabular-nums text-ink-600">{pct === null ? (detail ?? "") : `${pct} %${detail ? ` · ${detail}` : ""}`}</span>
      </div>
      <div
        role="progressbar"
        aria-label={label}
        aria-valuemin={0}
        aria-valuemax={100}
        aria-valuenow={pct ?? undefined}
        className="h-3 overflow-hidden rounded-full border border-ink-300 bg-ink-100"
      >
        {pct === null ? (
          <div className="h-full w-1/3 animate-pulse rounded-full bg-strand-600" />
        ) : (
          <div className="h-full rounded-full bg-strand-600 transition-[width] duration-150" style={{ width: `${pct}%` }} />
        )}
      </div>
    </div>
  );
}
