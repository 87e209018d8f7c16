import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import type { WindowRecord as Record_, WindowShare } from "@shared/api/operating-windows";
import { count, DASH, day, num, pct, pctRange } from "@/lib/format";

/** A difference of two shares in percentage points: "12.3 percentage points". */
const points = (t: TFunction, d: number | null) => (d === null ? DASH : t("windows.record.points", { value: num(d * 100, 1) }));

/** The verdict carries a word and a mark, never colour alone; its words are under windows.record.verdict. */
const VERDICT_LOOK = {
  more: { mark: "▲", box: "border-strand-600 bg-strand-50" },
  less: { mark: "▼", box: "border-ink-400 bg-ink-50" },
  no_clear_difference: { mark: "=", box: "border-ink-300 bg-white" },
  none: { mark: "–", box: "border-ink-300 bg-white" },
} as const;

function ShareCell({ title, s }: { title: string; s: WindowShare }) {
  const { t } = useTranslation("process");
  return (
    <div className="rounded-md border border-ink-100 bg-ink-50 px-3 py-2">
      <div className="text-xs font-semibold uppercase tracking-wide text-ink-600">{title}</div>
      <div className="text-xl font-bold tabular-nums text-ink-900">{pct(s.share, 1)}</div>
      <div className="text-sm text-ink-700">{t("windows.record.affected", { count: s.slabs, affected: num(s.affected), n: count(s.slabs) })}</div>
      <div className="text-xs text-ink-600">{t("windows.record.interval", { range: pctRange(s.lower, s.upper, 1) })}</div>
    </div>
  );
}

/** A rule's record on history: flagged slabs against the rest, Wilson intervals, the verdict in words. */
export function WindowRecordView({ record }: { record: Record_ }) {
  const { t } = useTranslation("process");
  const verdict = record.verdict ?? "none";
  const look = VERDICT_LOOK[verdict];
  return (
    <div className="space-y-2" data-testid="window-record">
      <p className="text-sm text-ink-700">
        {record.unknown > 0
          ? t("windows.record.castUnknown", { count: record.unknown, n: count(record.unknown), from: day(record.from), to: day(record.to) })
          : t("windows.record.cast", { from: day(record.from), to: day(record.to) })}
      </p>
      <div className="grid grid-cols-2 gap-2">
        <ShareCell title={t("windows.record.flagged", { count: record.flagged.slabs, n: count(record.flagged.slabs) })} s={record.flagged} />
        <ShareCell title={t("windows.record.rest", { count: record.rest.slabs, n: count(record.rest.slabs) })} s={record.rest} />
      </div>
      <div className={`flex gap-2 rounded-md border-l-4 px-3 py-2 text-sm ${look.box}`} data-testid="window-verdict">
        <span aria-hidden className="font-bold">
          {look.mark}
        </span>
        <div>
          <span className="font-semibold">{t("windows.record.verdictLabel", { verdict: t(`windows.record.verdict.${verdict}`) })}</span>
          {record.verdictText}
          {record.difference !== null ? (
            <span className="block text-ink-700">
              {t("windows.record.difference", {
                value: points(t, record.difference),
                lower: points(t, record.differenceLower),
                upper: points(t, record.differenceUpper),
              })}
            </span>
          ) : null}
        </div>
      </div>
      <details className="text-xs text-ink-700">
        <summary className="cursor-pointer font-semibold">{t("windows.record.method")}</summary>
        <p className="mt-1">{record.method}</p>
      </details>
    </div>
  );
}
