import { Trans, useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import { Link } from "react-router";
import { Fact } from "@/components/ui/card";
import type { HeatDetail } from "@shared/api/heats";
import { VARIABLES } from "@shared/variables";
import { useTerms } from "@/i18n/terms";
import { dateTime, num, withUnit } from "@/lib/format";

const heatLink = (heatNo: string) => `/heats/${encodeURIComponent(heatNo)}`;

/** Grade, caster, the heat's place in its sequence with the heats before and after it, cast times. */
export function HeatFacts({ heat }: { heat: HeatDetail }) {
  const { t } = useTranslation("heats");
  const bold = <span className="font-semibold" />;
  return (
    <div className="space-y-4">
      <dl className="grid grid-cols-2 gap-x-6 gap-y-3 md:grid-cols-4">
        <Fact label={t("heatFacts.grade")} testId="heat-grade">
          {heat.grade.code} <span className="font-normal text-ink-700">— {heat.grade.name}</span>
          <div className="text-sm font-normal text-ink-700">
            {heat.grade.familyName} ({heat.grade.familyCode})
          </div>
        </Fact>
        <Fact label={t("heatFacts.caster")}>
          {heat.caster.code}
          <div className="text-sm font-normal text-ink-700">{heat.caster.name}</div>
        </Fact>
        <Fact label={t("heatFacts.cast")}>
          {dateTime(heat.castStart)}
          <div className="text-sm font-normal text-ink-700">{t("heatFacts.castTo", { end: dateTime(heat.castEnd) })}</div>
        </Fact>
        <Fact label={t("heatFacts.ladle")}>
          {withUnit(heat.ladleWeightT, "t", 1)}
          {heat.tundishChange ? <div className="text-sm font-semibold text-ember-700">{t("heatFacts.newTundish")}</div> : null}
        </Fact>
      </dl>
      <nav aria-label={t("heatFacts.sequenceNav")} className="flex flex-wrap items-center gap-3 rounded-md border border-ink-200 bg-ink-50 px-3 py-2">
        {heat.previousHeatNo ? (
          <Link
            to={heatLink(heat.previousHeatNo)}
            className="flex min-h-11 items-center rounded-md border border-ink-300 bg-white px-3 text-sm font-semibold text-strand-700 hover:bg-strand-50"
            rel="prev"
          >
            ← {heat.previousHeatNo}
          </Link>
        ) : (
          <span className="flex min-h-11 items-center px-3 text-sm text-ink-500">{t("heatFacts.firstOfSequence")}</span>
        )}
        <span className="flex-1 text-center text-sm" data-testid="heat-sequence">
          {heat.sequenceNo ? (
            <>
              {heat.sequencePosition ? (
                <Trans
                  t={t}
                  i18nKey={heat.sequenceHeats ? "heatFacts.sequencePositionOf" : "heatFacts.sequencePosition"}
                  values={{ sequence: heat.sequenceNo, position: String(heat.sequencePosition), heats: String(heat.sequenceHeats ?? "") }}
                  components={{ 1: bold, 3: bold }}
                />
              ) : (
                <Trans t={t} i18nKey="heatFacts.sequence" values={{ sequence: heat.sequenceNo }} components={{ 1: bold }} />
              )}
              {heat.sequencePosition === 1 ? <span className="ml-2 font-semibold text-ember-700">{t("heatFacts.sequenceStart")}</span> : null}
            </>
          ) : (
            t("heatFacts.noSequence")
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
          <span className="flex min-h-11 items-center px-3 text-sm text-ink-500">{t("heatFacts.lastOfSequence")}</span>
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
  const { t } = useTranslation("heats");
  const units = { "wt %": t("chemistry.weightPercent"), ppm: "ppm" };
  return (
    <div className="overflow-x-auto">
      <table className="w-full text-sm" data-testid="chemistry">
        <thead>
          <tr className="border-b border-ink-200 text-xs text-ink-600">
            <th className="py-1 pr-2 text-left font-semibold uppercase">{t("chemistry.element")}</th>
            {ELEMENTS.map((e) => (
              <th key={e.key} className="px-1.5 py-1 text-right text-sm font-bold text-ink-900">
                {e.symbol}
              </th>
            ))}
          </tr>
        </thead>
        <tbody>
          <tr className="border-b border-ink-100">
            <th className="py-2 pr-2 text-left text-xs font-semibold uppercase text-ink-600">{t("chemistry.content")}</th>
            {ELEMENTS.map((e) => (
              <td key={e.key} className="px-1.5 py-2 text-right tabular-nums" data-element={e.symbol}>
                {num(chemistry[e.key], e.digits)}
              </td>
            ))}
          </tr>
          <tr>
            <th className="py-1 pr-2 text-left text-xs font-semibold uppercase text-ink-600">{t("chemistry.unit")}</th>
            {ELEMENTS.map((e) => (
              <td key={e.key} className="px-1.5 py-1 text-right text-xs text-ink-600">
                {units[e.unit]}
              </td>
            ))}
          </tr>
        </tbody>
      </table>
    </div>
  );
}

function sourceText(t: TFunction<"heats">, source: string | null, what: string): string {
  if (!source) return "";
  if (source === "computed") return what === "liquidus" ? t("conditions.liquidusComputed") : t("conditions.superheatComputed");
  if (source === "given" || source === "import" || source === "imported") return t("conditions.givenInHeat");
  return source;
}

/** The heat's own casting conditions, liquidus and superheat with where they came from. */
export function HeatConditions({ heat }: { heat: HeatDetail }) {
  const { t } = useTranslation("heats");
  const { variable } = useTerms();
  const c = heat.conditions;
  const rows: { label: string; value: string; note?: string; testId?: string }[] = [
    { label: variable("casting_speed_m_min"), value: withUnit(c.castingSpeedMPerMin, "m/min", 2), testId: "cond-speed" },
    { label: t("conditions.tundishTemperature"), value: withUnit(c.tundishTempC, "°C", 1), testId: "cond-tundish" },
    { label: t("conditions.liquidus"), value: withUnit(c.liquidusC, "°C", 1), note: sourceText(t, c.liquidusSource, "liquidus"), testId: "cond-liquidus" },
    { label: variable("superheat_c"), value: withUnit(c.superheatC, "°C", 1), note: sourceText(t, c.superheatSource, "superheat"), testId: "cond-superheat" },
    { label: variable("embr_current_a"), value: c.embrCurrentA === 0 ? t("conditions.brakeOff") : withUnit(c.embrCurrentA, "A", 0), testId: "cond-brake" },
    { label: variable("sen_depth_mm"), value: withUnit(c.senDepthMm, "mm", 0), testId: "cond-sen" },
    { label: variable("argon_nl_min"), value: withUnit(c.argonNlPerMin, "NL/min", 1), testId: "cond-argon" },
    { label: t("conditions.moldLevelSd"), value: withUnit(c.moldLevelSdMm, "mm", 2), testId: "cond-mold-level" },
  ];
  return (
    <dl className="grid grid-cols-1 gap-x-6 sm:grid-cols-2">
      {rows.map((r) => (
        <div key={r.testId} className="flex items-baseline justify-between gap-3 border-b border-ink-100 py-2">
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
/** A row's label: a shared variable's (`variable`), or one of this catalogue's own (`text`). */
type DerivedLabel = { variable: string } | { text: "derived.moldDwell" | "derived.stuart" | "derived.hartmann" };
const DERIVED: { key: keyof HeatDetail["derived"][number]; label: DerivedLabel; unit: string; digits: number }[] = [
  { key: "widthMm", label: { variable: "width_mm" }, unit: "mm", digits: 0 },
  { key: "throughputTPerMin", label: { variable: "throughput_t_min" }, unit: v("throughput_t_min").unit, digits: v("throughput_t_min").digits },
  { key: "moldDwellMin", label: { text: "derived.moldDwell" }, unit: "min", digits: 2 },
  { key: "shellExitMm", label: { variable: "shell_exit_mm" }, unit: v("shell_exit_mm").unit, digits: v("shell_exit_mm").digits },
  {
    key: "metallurgicalLengthM",
    label: { variable: "metallurgical_length_m" },
    unit: v("metallurgical_length_m").unit,
    digits: v("metallurgical_length_m").digits,
  },
  { key: "embrFieldT", label: { variable: "embr_field_t" }, unit: v("embr_field_t").unit, digits: v("embr_field_t").digits },
  {
    key: "senPortVelocityMPerS",
    label: { variable: "sen_port_velocity_m_s" },
    unit: v("sen_port_velocity_m_s").unit,
    digits: v("sen_port_velocity_m_s").digits,
  },
  { key: "stuartNumber", label: { text: "derived.stuart" }, unit: "–", digits: 2 },
  { key: "hartmannNumber", label: { text: "derived.hartmann" }, unit: "–", digits: 0 },
];

/** Values derived at the heat's own conditions, one column per strand (each strand has its own mold and brake). */
export function DerivedTable({ derived }: { derived: HeatDetail["derived"] }) {
  const { t } = useTranslation("heats");
  const { variable } = useTerms();
  if (derived.length === 0) return <p className="text-sm text-ink-600">{t("derived.noSlabs")}</p>;
  const noWidth = derived.every((d) => d.widthMm === null);
  return (
    <div className="overflow-x-auto">
      {noWidth ? <p className="mb-2 text-sm text-ink-700">{t("derived.noWidth")}</p> : null}
      <table className="w-full text-sm" data-testid="derived">
        <thead>
          <tr className="border-b border-ink-200 text-left text-xs uppercase tracking-wide text-ink-600">
            <th className="py-2 pr-3">{t("derived.value")}</th>
            <th className="py-2 pr-3">{t("derived.unit")}</th>
            {derived.map((d) => (
              <th key={d.strandNo} className="py-2 pr-3 text-right">
                {t("derived.strand", { n: d.strandNo })}
              </th>
            ))}
          </tr>
        </thead>
        <tbody>
          {DERIVED.map((row) => (
            <tr key={row.key} className="border-b border-ink-100">
              <td className="py-2 pr-3">{"variable" in row.label ? variable(row.label.variable) : t(row.label.text)}</td>
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
