import { useMemo } from "react";
import { useTranslation } from "react-i18next";
import { Link } from "react-router";
import type { HeatDetail } from "@shared/api/heats";
import type { ConditionSource } from "@shared/variables";
import { DISPOSITIONS } from "@shared/domain";
import { useTerms } from "@/i18n/terms";
import { SourceLegend, SourceMark, TransitionMark } from "@/components/ui/marks";
import { num } from "@/lib/format";
import { RiskMark } from "@/features/risk/components/risk-band";

type Slab = HeatDetail["slabs"][number];

function Valued({ value, digits, source }: { value: number | null | undefined; digits: number; source: ConditionSource | null }) {
  return (
    <span className="inline-flex flex-col items-end leading-tight">
      <span className="tabular-nums">{num(value, digits)}</span>
      <SourceMark source={source} />
    </span>
  );
}

/** The heat's slabs by strand and piece, each with its own resolved conditions and their source. */
export function HeatSlabsTable({ slabs }: { slabs: Slab[] }) {
  const { t } = useTranslation("heats");
  const { term } = useTerms();
  // Looked up once per draw, not per row.
  const dispositions = useMemo(() => new Map<string, string>(DISPOSITIONS.map((d) => [d, term("dispositions", d)])), [term]);
  const dispositionText = (d: string | null | undefined) => (d ? (dispositions.get(d) ?? d) : "—");
  if (slabs.length === 0) return <p className="text-sm text-ink-600">{t("heatSlabs.empty")}</p>;
  const outside = t("heatSlabs.outside");
  const windowFlagsTitle = t("heatSlabs.windowFlagsTitle");
  const sorted = [...slabs].sort((a, b) => a.strandNo - b.strandNo || a.pieceNo - b.pieceNo);
  const withRisk = slabs.some((s) => s.risk);
  return (
    <div className="space-y-3">
      <div className="overflow-x-auto">
        <table className="w-full text-sm" data-testid="heat-slabs">
          <thead>
            <tr className="border-b-2 border-ink-200 text-left text-xs uppercase tracking-wide text-ink-600">
              <th className="px-1 py-2 lg:px-2" title={t("columns.strandPieceTitle")}>
                {t("columns.strandPiece")}
              </th>
              <th className="px-1 py-2 lg:px-2">{t("columns.slab")}</th>
              <th className="px-1 py-2 lg:px-2 text-right">{t("columns.dimensions")}</th>
              <th className="px-1 py-2 lg:px-2 text-right">{t("columns.weight")}</th>
              <th className="px-1 py-2 lg:px-2">{t("columns.disposition")}</th>
              <th className="px-1 py-2 lg:px-2 text-right">{t("columns.defects")}</th>
              {withRisk ? <th className="px-1 py-2 lg:px-2">{t("columns.risk")}</th> : null}
              <th className="px-1 py-2 lg:px-2 text-right">{t("columns.speed")}</th>
              <th className="px-1 py-2 lg:px-2 text-right">{t("columns.superheat")}</th>
              <th className="px-1 py-2 lg:px-2 text-right">{t("columns.brake")}</th>
              <th className="px-1 py-2 lg:px-2 text-right">
                <abbr title={t("columns.samplesTitle")} className="no-underline">
                  n
                </abbr>
              </th>
            </tr>
          </thead>
          <tbody>
            {sorted.map((s) => (
              <tr key={s.slabId} className="border-b border-ink-100 align-top" data-testid="heat-slab-row">
                <td className="whitespace-nowrap px-1 py-2 lg:px-2 tabular-nums">
                  {s.strandNo} · {s.pieceNo}
                </td>
                <td className="px-1 py-2 lg:px-2">
                  <Link
                    to={`/slabs/${encodeURIComponent(s.slabId)}`}
                    className="whitespace-nowrap font-semibold text-strand-700 underline decoration-strand-300 underline-offset-2"
                  >
                    {s.slabId}
                  </Link>
                  {s.transition ? (
                    <div>
                      <TransitionMark transition />
                    </div>
                  ) : null}
                  {s.windowFlags.length ? (
                    <div className="text-xs font-semibold text-ember-700" title={windowFlagsTitle} data-testid="heat-slab-window-flags">
                      {outside} {s.windowFlags.join("; ")}
                    </div>
                  ) : null}
                </td>
                <td className="whitespace-nowrap px-1 py-2 lg:px-2 text-right tabular-nums">
                  {num(s.thicknessMm)}×{num(s.widthMm)}×{num(s.lengthMm)}
                </td>
                <td className="px-1 py-2 lg:px-2 text-right tabular-nums">{num(s.weightT, 2)}</td>
                <td className="px-1 py-2 lg:px-2">{dispositionText(s.disposition)}</td>
                <td className={`px-1 py-2 lg:px-2 text-right tabular-nums ${s.defects > 0 ? "font-semibold" : "text-ink-500"}`}>{s.defects}</td>
                {withRisk ? (
                  <td className="px-1 py-2 lg:px-2">
                    <RiskMark risk={s.risk} />
                  </td>
                ) : null}
                <td className="px-1 py-2 lg:px-2 text-right">
                  <Valued value={s.conditions?.castingSpeedMPerMin} digits={2} source={s.conditions?.castingSpeedSource ?? null} />
                </td>
                <td className="px-1 py-2 lg:px-2 text-right">
                  <Valued value={s.conditions?.superheatC} digits={1} source={s.conditions?.superheatSource ?? null} />
                </td>
                <td className="px-1 py-2 lg:px-2 text-right">
                  <Valued value={s.conditions?.embrCurrentA} digits={0} source={s.conditions?.embrCurrentSource ?? null} />
                </td>
                <td className="px-1 py-2 lg:px-2 text-right tabular-nums">{s.conditions?.sampleCount ?? 0}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      <div className="flex flex-wrap items-center gap-x-6 gap-y-1">
        <SourceLegend />
        <p className="flex items-center gap-1 text-xs text-ink-600">
          <TransitionMark transition /> {t("heatSlabs.legendTransition")} · {t("heatSlabs.legendSamples")}
          {slabs.some((s) => s.windowFlags.length) ? ` · ${t("heatSlabs.legendOutside")}` : ""}
          {withRisk ? ` · ${t("heatSlabs.legendRisk")}` : ""}
        </p>
      </div>
    </div>
  );
}
