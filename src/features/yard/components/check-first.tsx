import { Trans, useTranslation } from "react-i18next";
import { Link } from "react-router";
import type { YardSlab } from "@shared/api/yard";
import { BAND_RANK, BAND_STYLE } from "@/features/risk/bands";
import { count, pct } from "@/lib/format";

/** The waiting slabs that carry a risk, riskiest first: band, then risk. */
export function checkFirstOrder(waiting: readonly YardSlab[]): YardSlab[] {
  return waiting.filter((s) => s.risk).sort((a, b) => BAND_RANK[b.risk!.band] - BAND_RANK[a.risk!.band] || b.risk!.risk - a.risk!.risk);
}

/**
 * The inspector's "check first" list: the slabs waiting for inspection in order of risk under the
 * plant's active risk models, with the reasons in words and where that defect usually sits. The
 * order is a suggestion; every slab is inspected.
 */
export function CheckFirst({ ordered, shown = 8 }: { ordered: readonly YardSlab[]; shown?: number }) {
  const { t, i18n } = useTranslation("yard");
  // German writes nouns (a defect type's name) with their capital inside a sentence.
  const inSentence = (name: string) => (i18n.language === "de" ? name : name.toLowerCase());
  if (ordered.length === 0) return null;
  return (
    <div className="space-y-3">
      <p className="text-sm text-ink-800" data-testid="check-first-caution">
        <Trans t={t} i18nKey="checkFirst.caution" components={{ 1: <strong /> }} />
      </p>
      <ol className="space-y-2" aria-label={t("checkFirst.listLabel")} data-testid="check-first">
        {ordered.slice(0, shown).map((s, i) => {
          const r = s.risk!;
          return (
            <li key={s.slabId}>
              <Link
                to={`/yard/slabs/${encodeURIComponent(s.slabId)}`}
                className={`block rounded-md border border-ink-300 px-4 py-2 hover:bg-strand-50 ${BAND_STYLE[r.band]}`}
              >
                <span className="flex flex-wrap items-baseline gap-x-3">
                  <span className="text-sm font-semibold text-ink-700">{i + 1}.</span>
                  <span className="text-lg font-semibold tabular-nums text-ink-900">{s.slabId}</span>
                  <span className="text-sm font-semibold text-ink-900">
                    {t(`checkFirst.band.${r.band}`, { target: inSentence(r.target), risk: pct(r.risk, 0) })}
                  </span>
                </span>
                {r.reasons.length ? <span className="block text-sm text-ink-800">{t("checkFirst.because", { reasons: r.reasons.join("; ") })}</span> : null}
                {r.usualPlace ? <span className="block text-sm text-ink-700">{t("checkFirst.lookFirst", { place: r.usualPlace })}</span> : null}
              </Link>
            </li>
          );
        })}
      </ol>
      {ordered.length > shown ? (
        <p className="text-sm text-ink-700">{t("checkFirst.more", { count: ordered.length - shown, n: count(ordered.length - shown) })}</p>
      ) : null}
    </div>
  );
}
