import { useTranslation } from "react-i18next";
import { Link } from "react-router";
import type { YardSlab } from "@shared/api/yard";
import { count, dateTime, num, time } from "@/lib/format";

const when = (iso: string | null) => (iso && new Date(iso).toDateString() === new Date().toDateString() ? time(iso) : dateTime(iso));

/** The slabs on this tablet that still wait for their inspection, longest waiting first (a few). */
export function WaitingSlabs({ waiting, shown = 6 }: { waiting: readonly YardSlab[]; shown?: number }) {
  const { t } = useTranslation("yard");
  if (waiting.length === 0) return <p className="text-base text-ink-600">{t("nextSlab.noneWaiting")}</p>;
  return (
    <div className="space-y-2">
      <p className="text-sm text-ink-700">{t("waitingSlabs.intro", { count: waiting.length, n: count(waiting.length) })}</p>
      <ul className="grid gap-2 sm:grid-cols-2" aria-label={t("waitingSlabs.listLabel")} data-testid="waiting-slabs">
        {waiting.slice(0, shown).map((s) => (
          <li key={s.slabId}>
            <Link
              to={`/yard/slabs/${encodeURIComponent(s.slabId)}`}
              className="flex min-h-14 flex-col justify-center rounded-md border border-ink-300 bg-white px-4 py-1 hover:bg-strand-50"
            >
              <span className="text-lg font-semibold tabular-nums text-ink-900">{s.slabId}</span>
              <span className="text-xs text-ink-700">
                {t("waitingSlabs.line", { strand: s.strandNo, piece: s.pieceNo, grade: s.gradeCode, width: num(s.widthMm), cast: when(s.castAt) })}
              </span>
            </Link>
          </li>
        ))}
      </ul>
    </div>
  );
}
