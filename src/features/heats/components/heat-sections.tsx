import { Link } from "react-router";
import { Fact } from "@/components/ui/card";
import type { HeatDetail } from "@shared/api/heats";
import { VARIABLES } from "@shared/variables";
import { dateTime, num, withUnit } from "@/lib/format";

const heatLink = (heatNo: string) => `/heats/${encodeURIComponent(heatNo)}`;

/** Grade, caster, the heat's place in its sequence with the heats before and after it, cast times. */
export function HeatFacts({ heat }: { heat: HeatDetail }) {
  return (
    <div className="space-y-4">
      <dl className="grid grid-cols-2 gap-x-6 gap-y-3 md:grid-cols-4">
        <Fact label="Grade (family)" testId="heat-grade">
          {heat.grade.code} <span className="font-normal text-ink-700">— {heat.grade.name}</span>
          <div className="text-sm font-normal text-ink-700">
            {heat.grade.familyName} ({heat.grade.familyCode})
          </div>
        </Fact>
        <Fact label="Caster">
          {heat.caster.code}
          <div className="text-sm font-normal text-ink-700">{heat.caster.name}</div>
        </Fact>
        <Fact label="Cast">
          {dateTime(heat.castStart)}
          <div className="text-sm font-normal text-ink-700">to {dateTime(heat.castEnd)}</div>
        </Fact>
        <Fact label="Ladle">
          {withUnit(heat.ladleWeightT, "t", 1)}
          {heat.tundishChange ? <div className="text-sm font-semibold text-ember-700">◆ new tundish at this heat</div> : null}
        </Fact>
      </dl>
      <nav aria-label="Sequence" className="flex flex-wrap items-center gap-3 rounded-md border border-ink-200 bg-ink-50 px-3 py-2">
        {heat.previousHeatNo ? (
          <Link
            to={heatLink(heat.previousHeatNo)}
            className="flex min-h-11 items-center rounded-md border border-ink-300 bg-white px-3 text-sm font-semibold text-strand-700 hover:bg-strand-50"
            rel="prev"
          >
            ← {heat.previousHeatNo}
          </Link>
        ) : (
          <span className="flex min-h-11 items-center px-3 text-sm text-ink-500">first of the sequence</span>
        )}
        <span className="flex-1 text-center text-sm" data-testid="heat-sequence">
          {heat.sequenceNo ? (
            <>
              Sequence <span className="font-semibold">{heat.sequenceNo}</span>
              {heat.sequencePosition ? (
                <>
                  {" "}
                  · heat <span className="font-semibold">{heat.sequencePosition}</span>
                  {heat.sequenceHeats ? ` of ${heat.sequenceHeats}` : ""}
                </>
              ) : null}
              {heat.sequencePosition === 1 ? <span className="ml-2 font-semibold text-ember-700">◆ sequence start</span> : null}
            </>
          ) : (
            "Not part of a recorded sequence"
          )}
        </span>
        {heat.nextHeatNo ? (
          <Link
            to={heatLink(heat.nextHeatNo)}
            className="flex min-h-11 items-center rounded-md border border-ink-300 bg-white px-3 text-sm font-semibold text-strand-700 hover:bg-strand-50"
            rel="next"
          >
            {heat.nextHeatNo} →
          </Link>
        ) : (
          <span className="flex min-h-11 items-center px-3 text-sm text-ink-500">last of the sequence</span>
        )}
      </nav>
    </div>
  );
}

const ELEMENTS: { key: keyof HeatDetail["chemistry"]; symbol: string; unit: "wt %" | "ppm"; digits: number }[] = [
  { key: "cPct", symbol: "C", unit: "wt %", digits: 4 },
  { key: "siPct", symbol: "Si", unit: "wt %", digits: 3 },
  { key: "mnPct", symbol: "Mn", unit: "wt %", digits: 3 },
  { key: "pPct", symbol: "P", unit: "wt %", digits: 4 },
  { key: "sPct", symbol: "S", unit: "wt %", digits: 4 },
  { key: "alPct", symbol: "Al", unit: "wt %", digits: 4 },
  { key: "cuPct", symbol: "Cu", unit: "wt %", digits: 3 },
  { key: "niPct", symbol: "Ni", unit: "wt %", digits: 3 },
  { key: "crPct", symbol: "Cr", unit: "wt %", digits: 3 },
  { key: "moPct", symbol: "Mo", unit: "wt %", digits: 3 },
  { key: "tiPct", symbol: "Ti", unit: "wt %", digits: 4 },
  { key: "nbPct", symbol: "Nb", unit: "wt %", digits: 4 },
  { key: "vPct", symbol: "V", unit: "wt %", digits: 4 },
  { key: "nPpm", symbol: "N", unit: "ppm", digits: 0 },
];

/** The heat analysis; an element not analysed shows "—". */
export function ChemistryTable({ chemistry }: { chemistry: HeatDetail["chemistry"] }) {
  return (
    <div className="overflow-x-auto">
      <table className="w-full text-sm" data-testid="chemistry">
        <thead>
          <tr className="border-b border-ink-200 text-xs text-ink-600">
            <th className="py-1 pr-2 text-left font-semibold uppercase">Element</th>
            {ELEMENTS.map((e) => (
              <th key={e.key} className="px-1.5 py-1 text-right text-sm font-bold text-ink-900">
                {e.symbol}
              </th>
            ))}
          </tr>
        </thead>
        <tbody>
          <tr className="border-b border-ink-100">
            <th className="py-2 pr-2 text-left text-xs font-semibold uppercase text-ink-600">Content</th>
            {ELEMENTS.map((e) => (
              <td key={e.key} className="px-1.5 py-2 text-right tabular-nums" data-element={e.symbol}>
                {num(chemistry[e.key], e.digits)}
              </td>
            ))}
          </tr>
          <tr>
            <th className="py-1 pr-2 text-left text-xs font-semibold uppercase text-ink-600">Unit</th>
            {ELEMENTS.map((e) => (
              <td key={e.key} className="px-1.5 py-1 text-right text-xs text-ink-600">
                {e.unit}
              </td>
            ))}
          </tr>
        </tbody>
      </table>
    </div>
  );
}

function sourceText(source: string | null, what: string): string {
  if (!source) return "";
  if (source === "computed") return what === "liquidus" ? "computed from the chemistry" : "computed: tundish − liquidus";
  if (source === "given" || source === "import" || source === "imported") return "given in the heat record";
  return source;
}

/** The heat's own casting conditions, liquidus and superheat with where they came from. */
export function HeatConditions({ heat }: { heat: HeatDetail }) {
  const c = heat.conditions;
  const rows: { label: string; value: string; note?: string; testId?: string }[] = [
    { label: "Casting speed", value: withUnit(c.castingSpeedMPerMin, "m/min", 2), testId: "cond-speed" },
    { label: "Tundish temperature", value: withUnit(c.tundishTempC, "°C", 1), testId: "cond-tundish" },
    { label: "Liquidus", value: withUnit(c.liquidusC, "°C", 1), note: sourceText(c.liquidusSource, "liquidus"), testId: "cond-liquidus" },
    { label: "Superheat", value: withUnit(c.superheatC, "°C", 1), note: sourceText(c.superheatSource, "superheat"), testId: "cond-superheat" },
    { label: "EMBr current", value: c.embrCurrentA === 0 ? "0 A (brake off)" : withUnit(c.embrCurrentA, "A", 0), testId: "cond-brake" },
    { label: "SEN depth", value: withUnit(c.senDepthMm, "mm", 0), testId: "cond-sen" },
    { label: "Argon flow", value: withUnit(c.argonNlPerMin, "NL/min", 1), testId: "cond-argon" },
    { label: "Mold level s.d.", value: withUnit(c.moldLevelSdMm, "mm", 2), testId: "cond-mold-level" },
  ];
  return (
    <dl className="grid grid-cols-1 gap-x-6 sm:grid-cols-2">
      {rows.map((r) => (
        <div key={r.label} className="flex items-baseline justify-between gap-3 border-b border-ink-100 py-2">
          <dt className="text-sm text-ink-700">{r.label}</dt>
          <dd className="text-right">
            <span className="font-semibold tabular-nums" data-testid={r.testId}>
              {r.value}
            </span>
            {r.note ? <div className="text-xs text-ink-600">{r.note}</div> : null}
          </dd>
        </div>
      ))}
    </dl>
  );
}

const v = (key: string) => VARIABLES.find((x) => x.key === key)!;
const DERIVED: { key: keyof HeatDetail["derived"][number]; label: string; unit: string; digits: number }[] = [
  { key: "widthMm", label: "Slab width", unit: "mm", digits: 0 },
  { key: "throughputTPerMin", label: v("throughput_t_min").label, unit: v("throughput_t_min").unit, digits: v("throughput_t_min").digits },
  { key: "moldDwellMin", label: "Mold dwell time", unit: "min", digits: 2 },
  { key: "shellExitMm", label: v("shell_exit_mm").label, unit: v("shell_exit_mm").unit, digits: v("shell_exit_mm").digits },
  { key: "metallurgicalLengthM", label: v("metallurgical_length_m").label, unit: v("metallurgical_length_m").unit, digits: v("metallurgical_length_m").digits },
  { key: "embrFieldT", label: v("embr_field_t").label, unit: v("embr_field_t").unit, digits: v("embr_field_t").digits },
  { key: "senPortVelocityMPerS", label: v("sen_port_velocity_m_s").label, unit: v("sen_port_velocity_m_s").unit, digits: v("sen_port_velocity_m_s").digits },
  { key: "stuartNumber", label: "Stuart number N", unit: "–", digits: 2 },
  { key: "hartmannNumber", label: "Hartmann number Ha", unit: "–", digits: 0 },
];

/** Values derived at the heat's own conditions, one column per strand (each strand has its own mold and brake). */
export function DerivedTable({ derived }: { derived: HeatDetail["derived"] }) {
  if (derived.length === 0) return <p className="text-sm text-ink-600">No slabs yet: the derived values need a slab width.</p>;
  const noWidth = derived.every((d) => d.widthMm === null);
  return (
    <div className="overflow-x-auto">
      {noWidth ? <p className="mb-2 text-sm text-ink-700">Most of these need the slab width: they appear once the heat's slabs are on record.</p> : null}
      <table className="w-full text-sm" data-testid="derived">
        <thead>
          <tr className="border-b border-ink-200 text-left text-xs uppercase tracking-wide text-ink-600">
            <th className="py-2 pr-3">Value</th>
            <th className="py-2 pr-3">Unit</th>
            {derived.map((d) => (
              <th key={d.strandNo} className="py-2 pr-3 text-right">
                Strand {d.strandNo}
              </th>
            ))}
          </tr>
        </thead>
        <tbody>
          {DERIVED.map((row) => (
            <tr key={row.key} className="border-b border-ink-100">
              <td className="py-2 pr-3">{row.label}</td>
              <td className="py-2 pr-3 text-ink-600">{row.unit}</td>
              {derived.map((d) => (
                <td key={d.strandNo} className="py-2 pr-3 text-right tabular-nums">
                  {num(d[row.key] as number | null, row.digits)}
                </td>
              ))}
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
