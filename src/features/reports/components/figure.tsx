import type { ReactNode } from "react";

/**
 * A headline figure with its label and its n. Like the shared Stat, but the label keeps its case:
 * report labels carry symbols and units (ρ, p̄, m/min, n) that capitals would change.
 */
export function Figure({ label, value, note, testId }: { label: ReactNode; value: ReactNode; note?: ReactNode; testId?: string }) {
  return (
    <div className="rounded-md border border-ink-100 bg-ink-50 px-3 py-2" data-testid={testId}>
      <div className="text-xs font-semibold text-ink-600">{label}</div>
      <div className="text-2xl font-bold tabular-nums text-ink-900">{value}</div>
      {note ? <div className="text-xs text-ink-600">{note}</div> : null}
    </div>
  );
}
