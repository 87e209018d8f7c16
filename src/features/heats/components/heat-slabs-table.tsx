import { Link } from "react-router";
import type { HeatDetail } from "@shared/api/heats";
import type { ConditionSource } from "@shared/variables";
import { SourceLegend, SourceMark, TransitionMark } from "@/components/ui/marks";
import { num } from "@/lib/format";
import { dispositionLabel } from "@/lib/labels";
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
  if (slabs.length === 0) return <p className="text-sm text-ink-600">No slabs on record for this heat yet. Import them on the Import screen.</p>;
  const sorted = [...slabs].sort((a, b) => a.strandNo - b.strandNo || a.pieceNo - b.pieceNo);
  const withRisk = slabs.some((s) => s.risk);
  return (
    <div className="space-y-3">
      <div className="overflow-x-auto">
        <table className="w-full text-sm" data-testid="heat-slabs">
          <thead>
            <tr className="border-b-2 border-ink-200 text-left text-xs uppercase tracking-wide text-ink-600">
              <th className="px-1 py-2 lg:px-2" title="strand and piece">
                Strand · piece
              </th>
              <th className="px-1 py-2 lg:px-2">Slab</th>
              <th className="px-1 py-2 lg:px-2 text-right">T × W × L mm</th>
              <th className="px-1 py-2 lg:px-2 text-right">Weight t</th>
              <th className="px-1 py-2 lg:px-2">Disposition</th>
              <th className="px-1 py-2 lg:px-2 text-right">Defects</th>
              {withRisk ? <th className="px-1 py-2 lg:px-2">Risk</th> : null}
              <th className="px-1 py-2 lg:px-2 text-right">Speed m/min</th>
              <th className="px-1 py-2 lg:px-2 text-right">Superheat °C</th>
              <th className="px-1 py-2 lg:px-2 text-right">Brake A</th>
              <th className="px-1 py-2 lg:px-2 text-right">
                <abbr title="process samples cast while the slab passed the mold" className="no-underline">
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
                    <div className="text-xs font-semibold text-ember-700" title="cast outside these operating windows" data-testid="heat-slab-window-flags">
                      outside: {s.windowFlags.join("; ")}
                    </div>
                  ) : null}
                </td>
                <td className="whitespace-nowrap px-1 py-2 lg:px-2 text-right tabular-nums">
                  {num(s.thicknessMm)}×{num(s.widthMm)}×{num(s.lengthMm)}
                </td>
                <td className="px-1 py-2 lg:px-2 text-right tabular-nums">{num(s.weightT, 2)}</td>
                <td className="px-1 py-2 lg:px-2">{dispositionLabel(s.disposition)}</td>
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
          <TransitionMark transition /> = cut across a ladle change · n = process samples behind the slab's values
          {slabs.some((s) => s.windowFlags.length) ? " · outside = cast outside the named operating windows" : ""}
          {withRisk ? " · Risk = the slab's highest band under the switched-on risk models (an association learnt from history; it never clears a slab)" : ""}
        </p>
      </div>
    </div>
  );
}
