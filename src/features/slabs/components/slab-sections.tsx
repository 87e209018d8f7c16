import type { ReactNode } from "react";
import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import { Link } from "react-router";
import { Fact } from "@/components/ui/card";
import type { ResolvedConditions, SlabDetail } from "@shared/api/heats";
import { VARIABLES, type ConditionSource } from "@shared/variables";
import { useTerms } from "@/i18n/terms";
import { SeverityMark, SourceLegend, SourceMark, TransitionMark } from "@/components/ui/marks";
import { count, dateTime, DASH, num, withUnit } from "@/lib/format";

const weightSourceText = (t: TFunction<"heats">, s: string) =>
  s === "computed" ? t("slabFacts.weightComputed") : s === "given" ? t("slabFacts.weightGiven") : s;

/** A disposition's words in the language shown; none is "—", an unknown code shows as it is. */
const dispositionText = (term: ReturnType<typeof useTerms>["term"], d: string | null | undefined) => (d ? term("dispositions", d) : DASH);

/** What the slab is and where it sits: heat, strand, piece, dimensions, weight, position along the cast. */
export function SlabFacts({ slab }: { slab: SlabDetail }) {
  const { t } = useTranslation("heats");
  const { term } = useTerms();
  const start = slab.castLengthStartM;
  const end = start === null ? null : start + slab.lengthMm / 1000;
  return (
    <dl className="grid grid-cols-2 gap-x-6 gap-y-4 md:grid-cols-4">
      <Fact label={t("slabFacts.heat")}>
        <Link
          to={`/heats/${encodeURIComponent(slab.heatNo)}`}
          className="inline-flex min-h-12 items-center text-strand-700 underline decoration-strand-300 underline-offset-2"
          data-testid="slab-heat-link"
        >
          {slab.heatNo}
        </Link>
        <div className="text-sm font-normal text-ink-700">
          {slab.gradeCode} ({slab.familyCode})
        </div>
      </Fact>
      <Fact label={t("slabFacts.casterStrandPiece")}>
        {t("slabFacts.casterStrandPieceValue", { caster: slab.casterCode, strand: slab.strandNo, piece: slab.pieceNo })}
      </Fact>
      <Fact label={t("slabFacts.dimensions")} testId="slab-dimensions">
        {num(slab.thicknessMm)} × {num(slab.widthMm)} × {num(slab.lengthMm)} mm
      </Fact>
      <Fact label={t("slabFacts.weight")} testId="slab-weight">
        {withUnit(slab.weightT, "t", 2)}
        <div className="text-sm font-normal text-ink-700">{weightSourceText(t, slab.weightSource)}</div>
      </Fact>
      <Fact label={t("slabFacts.position")} testId="slab-position">
        {start === null ? DASH : `${num(start, 2)} – ${num(end, 2)} m`}
        <div className="text-sm font-normal text-ink-700">{t("slabFacts.positionNote")}</div>
      </Fact>
      <Fact label={t("slabFacts.castAt")}>{dateTime(slab.castAt)}</Fact>
      <Fact label={t("slabFacts.transition")}>
        <TransitionMark transition={slab.transition} />
        {slab.transition ? <div className="text-sm font-normal text-ink-700">{t("slabFacts.transitionNote")}</div> : null}
      </Fact>
      <Fact label={t("slabFacts.disposition")}>{dispositionText(term, slab.disposition)}</Fact>
    </dl>
  );
}

const spec = (key: string) => VARIABLES.find((v) => v.key === key)!;

type ConditionRow = {
  key: string;
  value: keyof ResolvedConditions;
  source: keyof ResolvedConditions;
  given: keyof SlabDetail["given"];
};
const CONDITION_ROWS: ConditionRow[] = [
  { key: "casting_speed_m_min", value: "castingSpeedMPerMin", source: "castingSpeedSource", given: "castingSpeedMPerMin" },
  { key: "superheat_c", value: "superheatC", source: "superheatSource", given: "superheatC" },
  { key: "embr_current_a", value: "embrCurrentA", source: "embrCurrentSource", given: "embrCurrentA" },
  { key: "sen_depth_mm", value: "senDepthMm", source: "senDepthSource", given: "senDepthMm" },
  { key: "argon_nl_min", value: "argonNlPerMin", source: "argonSource", given: "argonNlPerMin" },
  { key: "mold_level_sd_mm", value: "moldLevelSdMm", source: "moldLevelSdSource", given: "moldLevelSdMm" },
];

/**
 * The slab's resolved conditions: its own value where one was given, else the aggregate of the
 * process samples cast while it passed the mold, else the heat's value — each with its source.
 */
export function SlabConditionsTable({ slab }: { slab: SlabDetail }) {
  const { t } = useTranslation("heats");
  const { variable } = useTerms();
  const c = slab.conditions;
  if (!c) return <p className="text-sm text-ink-600">{t("slabConditions.notResolved")}</p>;
  return (
    <div className="space-y-3">
      <div className="overflow-x-auto">
        <table className="w-full text-sm" data-testid="slab-conditions">
          <thead>
            <tr className="border-b-2 border-ink-200 text-left text-xs uppercase tracking-wide text-ink-600">
              <th className="py-2 pr-3">{t("slabConditions.condition")}</th>
              <th className="py-2 pr-3 text-right">{t("slabConditions.value")}</th>
              <th className="py-2 pr-3">{t("slabConditions.source")}</th>
              <th className="py-2 text-right">{t("slabConditions.given")}</th>
            </tr>
          </thead>
          <tbody>
            {CONDITION_ROWS.map((row) => {
              const s = spec(row.key);
              const value = c[row.value] as number | null;
              const source = c[row.source] as ConditionSource | null;
              return (
                <tr key={row.key} className="border-b border-ink-100" data-testid={`condition-${row.key}`}>
                  <th scope="row" className="py-2.5 pr-3 text-left font-normal">
                    {variable(row.key)}
                    {row.key === "casting_speed_m_min" && c.speedMinMPerMin !== null ? (
                      <div className="text-xs text-ink-600">
                        {t("slabConditions.sampled", {
                          min: num(c.speedMinMPerMin, 2),
                          max: num(c.speedMaxMPerMin, 2),
                          change: withUnit(c.speedChangeMPerMin, "m/min", 2),
                        })}
                      </div>
                    ) : null}
                  </th>
                  <td className="py-2.5 pr-3 text-right font-semibold tabular-nums" data-testid="condition-value">
                    {withUnit(value, s.unit, s.digits)}
                  </td>
                  <td className="py-2.5 pr-3" data-testid="condition-source">
                    <SourceMark source={source} full />
                    {source === "samples" ? <span className="ml-1 text-xs text-ink-600">(n = {c.sampleCount})</span> : null}
                  </td>
                  <td className="py-2.5 text-right tabular-nums text-ink-700">{withUnit(slab.given[row.given], s.unit, s.digits)}</td>
                </tr>
              );
            })}
          </tbody>
        </table>
      </div>
      <p className="text-xs text-ink-600" data-testid="slab-sample-count">
        {c.sampleCount > 0 ? t("slabConditions.sampleCount", { count: c.sampleCount, n: count(c.sampleCount) }) : t("slabConditions.noSamples")}{" "}
        {t("slabConditions.order")}
      </p>
      <SourceLegend />
    </div>
  );
}

/** A row's label: a shared variable's (`variable`), or one of this catalogue's own (`text`). */
type DerivedLabel = { variable: string } | { text: "derived.moldDwell" | "derived.stuart" | "derived.hartmann" };
const DERIVED: { key: keyof ResolvedConditions; label: DerivedLabel; unit: string; digits: number }[] = [
  { key: "throughputTPerMin", label: { variable: "throughput_t_min" }, unit: "t/min", digits: 2 },
  { key: "moldDwellMin", label: { text: "derived.moldDwell" }, unit: "min", digits: 2 },
  { key: "shellExitMm", label: { variable: "shell_exit_mm" }, unit: "mm", digits: 1 },
  { key: "metallurgicalLengthM", label: { variable: "metallurgical_length_m" }, unit: "m", digits: 1 },
  { key: "embrFieldT", label: { variable: "embr_field_t" }, unit: "T", digits: 3 },
  { key: "senPortVelocityMPerS", label: { variable: "sen_port_velocity_m_s" }, unit: "m/s", digits: 2 },
  { key: "stuartNumber", label: { text: "derived.stuart" }, unit: "–", digits: 2 },
  { key: "hartmannNumber", label: { text: "derived.hartmann" }, unit: "–", digits: 0 },
];

export function SlabDerived({ conditions }: { conditions: ResolvedConditions | null }) {
  const { t } = useTranslation("heats");
  const { variable } = useTerms();
  if (!conditions) return <p className="text-sm text-ink-600">{t("derived.notComputed")}</p>;
  return (
    <dl className="grid grid-cols-1 gap-x-6 sm:grid-cols-2">
      {DERIVED.map((d) => (
        <div key={d.key} className="flex items-baseline justify-between gap-3 border-b border-ink-100 py-2">
          <dt className="text-sm text-ink-700">{"variable" in d.label ? variable(d.label.variable) : t(d.label.text)}</dt>
          <dd className="font-semibold tabular-nums">{withUnit(conditions[d.key] as number | null, d.unit, d.digits)}</dd>
        </div>
      ))}
    </dl>
  );
}

/** A defect's size and depth, each where measured. */
function sizeText(t: TFunction<"heats">, d: SlabDetail["defects"][number]): string {
  const depth = d.depthMm !== null ? withUnit(d.depthMm, "mm", 1) : null;
  if (d.lengthMm === null && d.widthMm === null) return depth ? t("slabDefects.sizeNotMeasuredDeep", { depth }) : t("slabDefects.sizeNotMeasured");
  const size = { length: num(d.lengthMm), width: num(d.widthMm) };
  return depth ? t("slabDefects.sizeDeep", { ...size, depth }) : t("slabDefects.size", size);
}

/**
 * The slab's defects; on a tablet each is a card, on a wide screen one table row. `photos` draws a
 * defect's photos, `more` what the screen adds under each (its causes, an investigation link).
 */
export function SlabDefects({
  defects,
  photos,
  more,
}: {
  defects: SlabDetail["defects"];
  photos?: (defectId: number) => ReactNode;
  more?: (defect: SlabDetail["defects"][number]) => ReactNode;
}) {
  const { t } = useTranslation("heats");
  const { term } = useTerms();
  if (defects.length === 0)
    return (
      <p className="text-sm text-ink-600" data-testid="slab-defects-empty">
        {t("slabDefects.empty")}
      </p>
    );
  return (
    <ul className="divide-y divide-ink-100" data-testid="slab-defects">
      {defects.map((d, i) => (
        <li key={d.id} className="grid gap-x-6 gap-y-2 py-3 md:grid-cols-[minmax(12rem,1.3fr)_1fr_1fr_1fr]" data-testid="slab-defect" data-defect-id={d.id}>
          <div>
            <div className="font-semibold">
              <span
                className="mr-2 inline-flex h-6 w-6 items-center justify-center rounded-full border border-ink-400 text-xs font-bold tabular-nums"
                aria-label={t("slabDefects.number", { n: i + 1 })}
              >
                {i + 1}
              </span>
              <span className="mr-2 rounded bg-ink-100 px-1.5 py-0.5 text-xs font-bold tracking-wide">{d.typeCode}</span>
              {d.typeName}
            </div>
            <div className="mt-1">
              <SeverityMark severity={d.severity} />
            </div>
          </div>
          <div className="text-sm">
            <div className="text-xs font-semibold uppercase text-ink-600">{t("slabDefects.where")}</div>
            <div>{term("faces", d.face)}</div>
            <div className="text-ink-700">
              {d.positionAcrossMm !== null
                ? t("slabDefects.positionAcross", { along: withUnit(d.positionAlongMm, "mm", 0), across: withUnit(d.positionAcrossMm, "mm", 0) })
                : t("slabDefects.position", { along: withUnit(d.positionAlongMm, "mm", 0) })}
            </div>
            <div className="text-ink-700">{sizeText(t, d)}</div>
          </div>
          <div className="text-sm">
            <div className="text-xs font-semibold uppercase text-ink-600">{t("slabDefects.found")}</div>
            <div>{term("stages", d.stage)}</div>
            <div className="text-ink-700">{dateTime(d.foundAt)}</div>
            <div className="text-ink-700">{d.createdByName ?? DASH}</div>
          </div>
          <div className="text-sm">
            <div className="text-xs font-semibold uppercase text-ink-600">{t("slabDefects.dispositionReview")}</div>
            <div>{dispositionText(term, d.disposition)}</div>
            <div className="text-ink-700">{t(`slabDefects.review.${d.reviewStatus}`, { defaultValue: d.reviewStatus })}</div>
            {d.photoCount > 0 ? <div className="text-ink-700">{t("slabDefects.photos", { count: d.photoCount, n: count(d.photoCount) })}</div> : null}
          </div>
          {d.note ? <p className="text-sm text-ink-700 md:col-span-4">“{d.note}”</p> : null}
          {d.photoCount > 0 && photos ? <div className="md:col-span-4">{photos(d.id)}</div> : null}
          {more ? <div className="md:col-span-4">{more(d)}</div> : null}
        </li>
      ))}
    </ul>
  );
}
