import { lazy, Suspense, useEffect, useState } from "react";
import { Trans, useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import type { ControlChart } from "@shared/api/reports";
import { Button } from "@/components/ui/button";
import { Card } from "@/components/ui/card";
import { Notice } from "@/components/ui/notice";
import { Figure } from "./figure";
import { Spinner } from "@/components/ui/logo";
import { count, num, pct, pValue } from "@/lib/format";
import { inputClass, labelClass, labelText } from "./filter-bar";
import type { ReportParams } from "./report-params";
import { Choice, PeriodChoice, SettingsRow, StandardiseChoice } from "./settings";
import { FEW_SLABS, FewMark, SmallNWarning } from "./small-n";
import { TableWrap, td, tdNum, th, thNum } from "./tables";
import { DateField } from "@/components/ui/date-field";

const PChart = lazy(() => import("./charts/p-chart"));

type Patch = Partial<Record<string, string | undefined>>;
type Point = ControlChart["points"][number];

/** The chart's settings: period, kind of chart, run rules, the grade-mix option, and the baseline (typed, then applied together). */
export function ControlChartSettings({ params, onChange }: { params: ReportParams; onChange: (patch: Patch) => void }) {
  const { t } = useTranslation("analysis");
  const [draft, setDraft] = useState({ from: "", to: "" });
  useEffect(() => setDraft({ from: params.baselineFrom ?? "", to: params.baselineTo ?? "" }), [params.baselineFrom, params.baselineTo]);
  const u = params.chart === "u";
  const both = Boolean(draft.from && draft.to);
  const reversed = both && draft.from > draft.to;
  return (
    <div className="space-y-3">
      <SettingsRow>
        <PeriodChoice label={t("controlChart.settings.onePointPer")} value={params.period!} months={false} onChange={(v) => onChange({ period: v })} />
        <Choice
          label={t("controlChart.settings.chart")}
          testId="chart-select"
          value={params.chart ?? "p"}
          options={[
            { value: "p", label: t("chartNames.p") },
            { value: "laney", label: t("chartNames.laney") },
            { value: "u", label: t("chartNames.u") },
          ]}
          hint={
            params.chart === "u"
              ? t("controlChart.settings.hintU")
              : params.chart === "laney"
                ? t("controlChart.settings.hintLaney")
                : t("controlChart.settings.hintP")
          }
          // Standardised rates are shares of slabs: the u-chart has none.
          onChange={(v) => onChange({ chart: v, standardise: v === "u" ? undefined : params.standardise })}
        />
        <Choice
          label={t("controlChart.settings.runRules")}
          testId="rules-select"
          value={params.rules ?? "on"}
          options={[
            { value: "on", label: t("controlChart.settings.on") },
            { value: "off", label: t("controlChart.settings.off") },
          ]}
          hint={params.rules === "off" ? t("controlChart.settings.limitsOnly") : t("controlChart.settings.westernElectric")}
          onChange={(v) => onChange({ rules: v })}
        />
        {u ? null : (
          <div className="col-span-2">
            <StandardiseChoice value={params.standardise} onChange={(v) => onChange({ standardise: v })} />
          </div>
        )}
      </SettingsRow>
      <form
        className="grid grid-cols-2 gap-3 md:grid-cols-4"
        aria-label={t("controlChart.settings.baseline")}
        onSubmit={(e) => {
          e.preventDefault();
          if (both && !reversed) onChange({ baselineFrom: draft.from, baselineTo: draft.to });
        }}
      >
        <DateField
          label={t("controlChart.settings.baselineFrom")}
          className={labelClass}
          labelClassName={labelText}
          inputClassName={inputClass}
          value={draft.from}
          max={draft.to || undefined}
          onChange={(v) => setDraft((d) => ({ ...d, from: v }))}
          data-testid="baseline-from"
        />
        <DateField
          label={t("controlChart.settings.baselineTo")}
          className={labelClass}
          labelClassName={labelText}
          inputClassName={inputClass}
          value={draft.to}
          min={draft.from || undefined}
          onChange={(v) => setDraft((d) => ({ ...d, to: v }))}
          data-testid="baseline-to"
        />
        <div className="flex items-end">
          <Button type="submit" className="w-full" disabled={!both || reversed} data-testid="baseline-apply">
            {t("controlChart.settings.useAsBaseline")}
          </Button>
        </div>
        <div className="flex items-end">
          <Button
            variant="ghost"
            className="w-full"
            disabled={!params.baselineFrom && !params.baselineTo}
            onClick={() => onChange({ baselineFrom: undefined, baselineTo: undefined })}
            data-testid="baseline-clear"
          >
            {t("controlChart.settings.noBaseline")}
          </Button>
        </div>
      </form>
      <p className="text-xs text-ink-600">{reversed ? t("controlChart.settings.reversed") : t("controlChart.settings.phaseWords")}</p>
    </div>
  );
}

/** The marks' words, looked up once per draw (no hook per row). */
interface MarkWords {
  above: string;
  below: string;
  rule: (rule: number) => string;
  phase: (phase: Point["phase"]) => string;
  within: string;
}

function markWordsOf(t: TFunction<"analysis">): MarkWords {
  const phases: Record<Point["phase"], string> = {
    before: t("controlChart.phases.before"),
    baseline: t("controlChart.phases.baseline"),
    monitoring: t("controlChart.phases.monitoring"),
  };
  const rules = new Map<number, string>();
  return {
    above: t("controlChart.aboveUcl"),
    below: t("controlChart.belowLcl"),
    rule: (rule) => {
      let words = rules.get(rule);
      if (words === undefined) rules.set(rule, (words = t("controlChart.ruleMark", { rule })));
      return words;
    },
    phase: (phase) => phases[phase],
    within: t("controlChart.withinLimits"),
  };
}

function OutMark({ above, words }: { above: boolean; words: MarkWords }) {
  return (
    <span className="inline-flex items-center gap-1 whitespace-nowrap text-xs font-bold text-alarm-700" data-out="true">
      <svg viewBox="0 0 12 12" className="h-3 w-3" aria-hidden style={{ transform: above ? undefined : "rotate(180deg)" }}>
        <path d="M6 1 11.5 11H.5z" fill="currentColor" />
      </svg>
      {above ? words.above : words.below}
    </span>
  );
}

/** A Western Electric rule a point completes: a hollow square and the rule's number. */
function RuleMark({ rule, legend, words }: { rule: number; legend: string | undefined; words: MarkWords }) {
  return (
    <span className="inline-flex items-center gap-1 whitespace-nowrap text-xs font-bold text-brass-700" data-rule={rule} title={legend}>
      <svg viewBox="0 0 12 12" className="h-3 w-3" aria-hidden>
        <rect x="1.5" y="1.5" width="9" height="9" fill="none" stroke="currentColor" strokeWidth="2" />
      </svg>
      {words.rule(rule)}
    </span>
  );
}

/** The shaded phase of a point when a baseline is set: a word, and a bar of its own pattern. */
function PhaseMark({ phase, words }: { phase: Point["phase"]; words: MarkWords }) {
  const dash = phase === "baseline" ? undefined : phase === "before" ? "1 2" : "4 2";
  return (
    <span className="inline-flex items-center gap-1 whitespace-nowrap text-xs text-ink-700" data-phase={phase}>
      <svg viewBox="0 0 14 6" className="h-1.5 w-3.5" aria-hidden>
        <path d="M0 3h14" stroke="currentColor" strokeWidth="3" strokeDasharray={dash} />
      </svg>
      {words.phase(phase)}
    </span>
  );
}

export function ControlChartView({ data, onChange }: { data: ControlChart; onChange?: (patch: Patch) => void }) {
  const { t } = useTranslation("analysis");
  const words = markWordsOf(t);
  const u = data.chart === "u";
  const value = (p: Point) => p.value ?? (u ? null : p.p);
  const text = (v: number | null | undefined) => (u ? num(v, 3) : pct(v));
  const out = data.points.filter((p) => p.outOfControl);
  const ruled = data.points.filter((p) => p.signals.some((s) => s !== 1));
  const flagged = data.points.filter((p) => p.outOfControl || p.signals.length > 0);
  const few = data.points.filter((p) => p.slabs < FEW_SLABS).length;
  const word = data.period === "day" ? "day" : "week";
  const od = data.overdispersion;
  const std = data.points.some((p) => p.standardised);
  const name = t(`chartNames.${data.chart}`);
  const b = data.baseline;
  const before = data.points.some((p) => p.phase === "before");
  // The server's notes in the reader's language: the week note comes first when the baseline is by
  // week, the note on standardised rates last when they are given (server/services/reports/control-chart.ts).
  const weekNote = b && data.period === "week" ? data.notes[0] : undefined;
  const crudeLimitsNote = data.standardisation ? data.notes[data.notes.length - 1] : undefined;
  const read = `controlChart.read.${data.rules.on ? (b ? "rulesPhases" : "rules") : b ? "phases" : "plain"}` as const;
  return (
    <div className="space-y-5">
      <div className="grid grid-cols-2 gap-3 md:grid-cols-4">
        <Figure
          label={t("controlChart.figures.slabs")}
          value={count(data.slabs)}
          note={
            u
              ? t(`controlChart.figures.slabsNoteU.${word}`, { count: data.points.length, n: count(data.points.length), defects: count(data.defects) })
              : t(`controlChart.figures.slabsNote.${word}`, { count: data.points.length, n: count(data.points.length) })
          }
        />
        <Figure
          label={u ? t("controlChart.figures.centreU") : t("controlChart.figures.centreP")}
          value={<span data-testid="centre">{text(data.centre)}</span>}
          note={
            b
              ? t("controlChart.figures.centreFromBaseline", { from: b.firstPeriod ?? b.from, to: b.lastPeriod ?? b.to })
              : u
                ? t("controlChart.figures.centreNoteU", { defects: count(data.defects), n: count(data.slabs) })
                : t("controlChart.figures.centreNoteP", { affected: count(data.affected), n: count(data.slabs) })
          }
        />
        <Figure
          label={t("controlChart.figures.outOfControl")}
          value={<span data-testid="out-count">{out.length}</span>}
          note={t("controlChart.figures.outNote", {
            above: out.filter((p) => (value(p) ?? 0) > p.ucl).length,
            below: out.filter((p) => (value(p) ?? 0) < p.lcl).length,
          })}
        />
        <Figure
          label={t("controlChart.figures.ruleSignals")}
          value={<span data-testid="rule-count">{data.rules.on ? ruled.length : t("controlChart.figures.rulesOff")}</span>}
          note={data.rules.on ? t(`controlChart.figures.ruleNote.${word}`) : t("controlChart.figures.rulesOffNote")}
        />
      </div>
      <SmallNWarning
        notes={[
          data.slabs > 0 && data.affected < 10 ? t("controlChart.fewAffected", { count: data.affected, n: count(data.affected) }) : "",
          few ? t(`controlChart.fewPeriods.${word}`, { count: few, n: count(few), min: FEW_SLABS }) : "",
          ...data.notes.filter((n) => od?.note !== n && n !== weekNote && n !== crudeLimitsNote),
        ]}
      />
      {od ? (
        <div data-testid="overdispersion">
          <Notice
            tone={od.applies && data.chart === "p" ? "caution" : "info"}
            title={
              od.applies
                ? data.chart === "laney"
                  ? t("controlChart.overdispersion.laneyApplies")
                  : t("controlChart.overdispersion.title")
                : t("controlChart.overdispersion.none")
            }
          >
            {od.note}{" "}
            <span className="tabular-nums">
              {t("controlChart.overdispersion.stats", { sigmaZ: num(od.sigmaZ, 2), chi2: num(od.chi2, 1), df: num(od.df, 0), p: pValue(od.p) })}
            </span>
            {od.applies && data.chart === "p" && onChange ? (
              <span className="mt-2 block">
                <Button variant="secondary" onClick={() => onChange({ chart: "laney" })} data-testid="use-laney">
                  {t("controlChart.overdispersion.drawLaney")}
                </Button>
              </span>
            ) : null}
          </Notice>
        </div>
      ) : null}
      {b ? (
        <p className="rounded-md border border-ink-200 bg-white px-4 py-2 text-sm" data-testid="baseline-words">
          <Trans
            t={t}
            i18nKey={`controlChart.baselineWords.${word === "day" ? "day" : b.firstPeriod ? "weekRange" : "week"}${before ? "Before" : ""}`}
            count={b.periods}
            values={{ from: b.from, to: b.to, n: count(b.periods), first: b.firstPeriod, last: b.lastPeriod, slabs: count(b.slabs) }}
            components={{ 1: <span className="font-semibold" /> }}
          />
          {weekNote ? ` ${weekNote}` : ""}
        </p>
      ) : null}
      <Card title={t(`controlChart.chartBy.${word}`, { chart: name })}>
        <Suspense fallback={<Spinner label={t("loadingChart")} />}>
          <PChart data={data} />
        </Suspense>
        <p className="mt-1 text-xs text-ink-600">
          {t(read, { method: data.method })}
          {std ? ` ${t("controlChart.read.standardised")}` : ""}
        </p>
        {data.rules.on ? (
          <ul className="mt-2 grid gap-1 text-xs text-ink-700 md:grid-cols-2" data-testid="rules-legend">
            {Object.entries(data.rules.legend).map(([k, v]) => (
              <li key={k} className="flex items-center gap-2">
                {k === "1" ? <OutMark above words={words} /> : <RuleMark rule={Number(k)} legend={v} words={words} />}
                <span>{t("controlChart.ruleLegend", { rule: k, text: v })}</span>
              </li>
            ))}
          </ul>
        ) : null}
      </Card>
      <Card title={flagged.length ? t(`controlChart.signalled.${word}`, { count: flagged.length, n: count(flagged.length) }) : t(`controlChart.every.${word}`)}>
        <div className="max-h-[28rem] overflow-y-auto">
          <TableWrap>
            <table className="w-full text-sm" data-testid="pchart-table">
              <thead className="sticky top-0 bg-white">
                <tr className="border-b-2 border-ink-200">
                  <th className={th}>{word === "day" ? t("controlChart.cols.day") : t("controlChart.cols.isoWeek")}</th>
                  {b ? <th className={th}>{t("controlChart.cols.phase")}</th> : null}
                  <th className={thNum}>{t("controlChart.cols.slabs")}</th>
                  <th className={thNum}>{u ? t("controlChart.cols.defects") : t("controlChart.cols.affected")}</th>
                  <th className={thNum}>{u ? "u" : "p"}</th>
                  {std ? <th className={thNum}>{t("controlChart.cols.standardised")}</th> : null}
                  <th className={thNum}>{t("controlChart.lcl")}</th>
                  <th className={thNum}>{t("controlChart.ucl")}</th>
                  <th className={thNum}>z</th>
                  <th className={th}>{t("controlChart.cols.signal")}</th>
                </tr>
              </thead>
              <tbody>
                {(flagged.length ? [...flagged, ...data.points.filter((p) => !flagged.includes(p))] : data.points).map((p) => (
                  <tr
                    key={p.period}
                    className={`border-b border-ink-100 ${p.slabs < FEW_SLABS ? "bg-ink-50 text-ink-500" : ""}`}
                    data-testid="pchart-row"
                    data-period={p.period}
                    data-phase={p.phase}
                  >
                    <td className={`${td} whitespace-nowrap font-semibold`}>
                      <span data-field="period">{p.period}</span>
                      {p.slabs < FEW_SLABS ? <FewMark /> : null}
                    </td>
                    {b ? (
                      <td className={td} data-field="phase">
                        <PhaseMark phase={p.phase} words={words} />
                      </td>
                    ) : null}
                    <td className={tdNum} data-field="slabs">
                      {count(p.slabs)}
                    </td>
                    <td className={tdNum}>{count(u ? p.defects : p.affected)}</td>
                    <td className={tdNum} data-field="value">
                      {text(value(p))}
                    </td>
                    {std ? (
                      <td className={tdNum} data-field="standardised" title={p.standardised?.reason ?? undefined}>
                        {pct(p.standardised?.rate)}
                      </td>
                    ) : null}
                    <td className={tdNum} data-field="lcl">
                      {text(p.lcl)}
                    </td>
                    <td className={tdNum} data-field="ucl">
                      {text(p.ucl)}
                    </td>
                    <td className={tdNum} data-field="z">
                      {num(p.z, 2)}
                    </td>
                    <td className={td} data-field="signal">
                      <span className="flex flex-wrap gap-x-2 gap-y-0.5">
                        {p.outOfControl ? <OutMark above={(value(p) ?? 0) > p.ucl} words={words} /> : null}
                        {p.signals
                          .filter((s) => s !== 1 || !p.outOfControl)
                          .map((s) => (
                            <RuleMark key={s} rule={s} legend={data.rules.legend[String(s)]} words={words} />
                          ))}
                        {!p.outOfControl && p.signals.length === 0 ? <span className="text-xs text-ink-500">{words.within}</span> : null}
                      </span>
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </TableWrap>
        </div>
        {flagged.length ? <p className="mt-2 text-xs text-ink-600">{t(`controlChart.signalledFirst.${word}`)}</p> : null}
      </Card>
      {data.standardisation ? (
        <p className="text-xs text-ink-700" data-testid="standardisation">
          <span className="font-semibold">{t("controlChart.standardisedTo")}</span> {data.standardisation.reference} —{" "}
          {data.standardisation.referenceMix.map((m) => `${m.label} ${pct(m.share, 1)} (n = ${count(m.slabs)})`).join(", ")}. {data.standardisation.method}.
        </p>
      ) : null}
    </div>
  );
}
