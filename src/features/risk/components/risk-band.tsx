import type { RiskBand, SlabRiskBrief } from "@shared/api/risk";
import { RISK_CAUTION } from "@shared/api/risk";
import { pct } from "@/lib/format";

/** The bands in order, their words and their look (a bar at the left, the strength of the tint). Shared by the yard, heats and slabs. */
export const BAND_RANK: Record<RiskBand, number> = { high: 2, raised: 1, usual: 0 };
export const BAND_STYLE: Record<RiskBand, string> = {
  high: "border-l-8 border-l-ember-700 bg-ember-100",
  raised: "border-l-8 border-l-ember-500 bg-ember-50",
  usual: "border-l-8 border-l-ink-300 bg-white",
};
export const BAND_WORDS: Record<RiskBand, string> = { high: "High risk", raised: "Raised risk", usual: "Usual risk" };

/** A compact mark for a table cell: band in words and the risk. */
export function RiskMark({ risk }: { risk: Pick<SlabRiskBrief, "band" | "risk" | "target"> | null }) {
  if (!risk) return <span className="text-ink-500">—</span>;
  return (
    <span
      className={`inline-block whitespace-nowrap rounded-sm px-1.5 py-0.5 text-xs font-semibold text-ink-900 ${BAND_STYLE[risk.band]} border-l-4`}
      title={`${BAND_WORDS[risk.band]} of ${risk.target.toLowerCase()}`}
    >
      {BAND_WORDS[risk.band].replace(" risk", "")} {pct(risk.risk, 0)}
    </span>
  );
}

/** A slab's risks under the switched-on models, with the reasons in words and the caution. */
export function SlabRisks({ risks }: { risks: SlabRiskBrief[] }) {
  if (risks.length === 0) return <p className="text-sm text-ink-700">No risk model is switched on, so this slab has no risk.</p>;
  return (
    <div className="space-y-3" data-testid="slab-risks">
      <ul className="space-y-2">
        {risks.map((r) => (
          <li key={r.modelId} className={`rounded-md border border-ink-300 px-4 py-2 ${BAND_STYLE[r.band]}`}>
            <p className="text-sm font-semibold text-ink-900">
              {BAND_WORDS[r.band]} of {r.target.toLowerCase()}: {pct(r.risk, 1)}{" "}
              <span className="font-normal text-ink-700">(model version {r.modelVersion})</span>
            </p>
            {r.reasons.length ? (
              <p className="text-sm text-ink-800">
                Raised by:{" "}
                {r.reasons
                  .slice(0, 3)
                  .map((x) => x.text)
                  .join("; ")}
                .
              </p>
            ) : (
              <p className="text-sm text-ink-800">Nothing about this slab raises its risk above the plant's typical slab.</p>
            )}
            {r.stored ? null : (
              <p className="text-xs text-ink-700">
                Reckoned for this page from the slab's conditions; the model scores and keeps the slabs of the last 90 days.
              </p>
            )}
          </li>
        ))}
      </ul>
      <p className="text-xs text-ink-700">{RISK_CAUTION}</p>
    </div>
  );
}
