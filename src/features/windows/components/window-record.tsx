import type { WindowRecord as Record_, WindowShare } from "@shared/api/operating-windows";
import { day, num, pct, pctRange, plural } from "@/lib/format";

/** A difference of two shares in percentage points: "12.3 percentage points". */
const points = (d: number | null) =>
  d === null ? "—" : `${(d * 100).toLocaleString("en-GB", { minimumFractionDigits: 1, maximumFractionDigits: 1 })} percentage points`;

/** The verdict carries a word and a mark, never colour alone. */
const VERDICT_LOOK = {
  more: { mark: "▲", label: "Earns its keep", box: "border-strand-600 bg-strand-50" },
  less: { mark: "▼", label: "Flagged slabs fared better", box: "border-ink-400 bg-ink-50" },
  no_clear_difference: { mark: "=", label: "No clear difference", box: "border-ink-300 bg-white" },
  none: { mark: "–", label: "No verdict", box: "border-ink-300 bg-white" },
} as const;

function ShareCell({ title, s }: { title: string; s: WindowShare }) {
  return (
    <div className="rounded-md border border-ink-100 bg-ink-50 px-3 py-2">
      <div className="text-xs font-semibold uppercase tracking-wide text-ink-600">{title}</div>
      <div className="text-xl font-bold tabular-nums text-ink-900">{pct(s.share, 1)}</div>
      <div className="text-sm text-ink-700">
        {num(s.affected)} of {plural(s.slabs, "slab")} with the defect
      </div>
      <div className="text-xs text-ink-600">95 % interval {pctRange(s.lower, s.upper, 1)}</div>
    </div>
  );
}

/** A rule's record on history: flagged slabs against the rest, Wilson intervals, the verdict in words. */
export function WindowRecordView({ record }: { record: Record_ }) {
  const look = VERDICT_LOOK[record.verdict ?? "none"];
  return (
    <div className="space-y-2" data-testid="window-record">
      <p className="text-sm text-ink-700">
        Slabs cast {day(record.from)} – {day(record.to)}
        {record.unknown > 0 ? ` · ${plural(record.unknown, "slab")} missing a value the rule needs, left out` : ""}
      </p>
      <div className="grid grid-cols-2 gap-2">
        <ShareCell title={`Flagged · ${plural(record.flagged.slabs, "slab")}`} s={record.flagged} />
        <ShareCell title={`The rest · ${plural(record.rest.slabs, "slab")}`} s={record.rest} />
      </div>
      <div className={`flex gap-2 rounded-md border-l-4 px-3 py-2 text-sm ${look.box}`} data-testid="window-verdict">
        <span aria-hidden className="font-bold">
          {look.mark}
        </span>
        <div>
          <span className="font-semibold">{look.label}: </span>
          {record.verdictText}
          {record.difference !== null ? (
            <span className="block text-ink-700">
              Difference {points(record.difference)} (95 % interval {points(record.differenceLower)} to {points(record.differenceUpper)}).
            </span>
          ) : null}
        </div>
      </div>
      <details className="text-xs text-ink-700">
        <summary className="cursor-pointer font-semibold">Method</summary>
        <p className="mt-1">{record.method}</p>
      </details>
    </div>
  );
}
