import { Trans, useTranslation } from "react-i18next";
import type { SlabRiskBrief } from "@shared/api/risk";
import { pct } from "@/lib/format";
import { useTerms } from "@/i18n/terms";
import { BAND_STYLE } from "../bands";

/** A defect's name (the plant's catalogue) inside an English sentence starts small; in German it keeps its capital. */
const inSentence = (language: string, name: string) => (language === "de" ? name : name.toLowerCase());

/** A compact mark for a table cell: band in words and the risk. */
export function RiskMark({ risk }: { risk: Pick<SlabRiskBrief, "band" | "risk" | "target"> | null }) {
  const { t, i18n } = useTranslation("process");
  const { term } = useTerms();
  if (!risk) return <span className="text-ink-500">—</span>;
  return (
    <span
      className={`inline-block whitespace-nowrap rounded-sm px-1.5 py-0.5 text-xs font-semibold text-ink-900 ${BAND_STYLE[risk.band]} border-l-4`}
      title={t("risk.band.of", { band: t(`risk.band.words.${risk.band}`), target: inSentence(i18n.language, risk.target) })}
    >
      {term("riskBands", risk.band)} {pct(risk.risk, 0)}
    </span>
  );
}

/** A slab's risks under the switched-on models, with the reasons in words and the caution. */
export function SlabRisks({ risks }: { risks: SlabRiskBrief[] }) {
  const { t, i18n } = useTranslation("process");
  if (risks.length === 0) return <p className="text-sm text-ink-700">{t("risk.band.noModel")}</p>;
  return (
    <div className="space-y-3" data-testid="slab-risks">
      <ul className="space-y-2">
        {risks.map((r) => (
          <li key={r.modelId} className={`rounded-md border border-ink-300 px-4 py-2 ${BAND_STYLE[r.band]}`}>
            <p className="text-sm font-semibold text-ink-900">
              <Trans
                t={t}
                i18nKey="risk.band.slabRisk"
                values={{
                  band: t(`risk.band.words.${r.band}`),
                  target: inSentence(i18n.language, r.target),
                  risk: pct(r.risk, 1),
                  version: r.modelVersion,
                }}
                components={{ 1: <span className="font-normal text-ink-700" /> }}
              />
            </p>
            {r.reasons.length ? (
              <p className="text-sm text-ink-800">
                {t("risk.band.raisedBy", {
                  reasons: r.reasons
                    .slice(0, 3)
                    .map((x) => x.text)
                    .join("; "),
                })}
              </p>
            ) : (
              <p className="text-sm text-ink-800">{t("risk.band.nothingRaises")}</p>
            )}
            {r.stored ? null : <p className="text-xs text-ink-700">{t("risk.band.reckoned", { days: 90 })}</p>}
          </li>
        ))}
      </ul>
      <p className="text-xs text-ink-700">{t("risk.caution")}</p>
    </div>
  );
}
