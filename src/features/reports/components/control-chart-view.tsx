import { lazy, Suspense, useEffect, useState } from "react";
import type { ControlChart } from "@shared/api/reports";
import { Button } from "@/components/ui/button";
import { Card } from "@/components/ui/card";
import { Notice } from "@/components/ui/notice";
import { Figure } from "./figure";
import { Spinner } from "@/components/ui/logo";
import { num, pct, plural, pValue } from "@/lib/format";
import { inputClass, labelClass, labelText } from "./filter-bar";
import type { ReportParams } from "./report-params";
import { Choice, PeriodChoice, SettingsRow, StandardiseChoice } from "./settings";
import { FEW_SLABS, FewMark, SmallNWarning } from "./small-n";
import { TableWrap, td, tdNum, th, thNum } from "./tables";

const PChart = lazy(() => import("./charts/p-chart"));

type Patch = Partial<Record<string, string | undefined>>;
type Point = ControlChart["points"][number];

const CHART_NAMES: Record<ControlChart["chart"], string> = { p: "p-chart", laney: "Laney p′ chart", u: "u-chart" };
const PHASE_WORDS: Record<Point["phase"], string> = { before: "before", baseline: "baseline", monitoring: "monitoring" };

/** The chart's settings: period, kind of chart, run rules, the grade-mix option, and the baseline (typed, then applied together). */
export function ControlChartSettings({ params, onChange }: { params: ReportParams; onChange: (patch: Patch) => void }) {
  const [draft, setDraft] = useState({ from: "", to: "" });
  useEffect(() => setDraft({ from: params.baselineFrom ?? "", to: params.baselineTo ?? "" }), [params.baselineFrom, params.baselineTo]);
  const u = params.chart === "u";
  const both = Boolean(draft.from && draft.to);
  const reversed = both && draft.from > draft.to;
  return (
    <div className="space-y-3">
      <SettingsRow>
        <PeriodChoice label="One point per" value={params.period!} months={false} onChange={(v) => onChange({ period: v })} />
        <Choice
          label="Chart"
          testId="chart-select"
          value={params.chart ?? "p"}
          options={[
            { value: "p", label: "p-chart" },
            { value: "laney", label: "Laney p′ chart" },
            { value: "u", label: "u-chart" },
          ]}
          hint={params.chart === "u" ? "defects per slab" : params.chart === "laney" ? "share affected, limits widened by σ_z" : "share of slabs affected"}
          // Standardised rates are shares of slabs: the u-chart has none.
          onChange={(v) => onChange({ chart: v, standardise: v === "u" ? undefined : params.standardise })}
        />
        <Choice
          label="Run rules"
          testId="rules-select"
          value={params.rules ?? "on"}
          options={[
            { value: "on", label: "On" },
            { value: "off", label: "Off" },
          ]}
          hint={params.rules === "off" ? "limits only" : "Western Electric rules 1–4"}
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
        aria-label="Baseline"
        onSubmit={(e) => {
          e.preventDefault();
          if (both && !reversed) onChange({ baselineFrom: draft.from, baselineTo: draft.to });
        }}
      >
        <label className={labelClass}>
          <span className={labelText}>Baseline from</span>
          <input
            type="date"
            className={inputClass}
            value={draft.from}
            max={draft.to || undefined}
            onChange={(e) => setDraft((d) => ({ ...d, from: e.target.value }))}
            data-testid="baseline-from"
          />
        </label>
        <label className={labelClass}>
          <span className={labelText}>Baseline to (whole day)</span>
          <input
            type="date"
            className={inputClass}
            value={draft.to}
            min={draft.from || undefined}
            onChange={(e) => setDraft((d) => ({ ...d, to: e.target.value }))}
            data-testid="baseline-to"
          />
        </label>
        <div className="flex items-end">
          <Button type="submit" className="w-full" disabled={!both || reversed} data-testid="baseline-apply">
            Use as baseline
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
            No baseline
          </Button>
        </div>
      </form>
      <p className="text-xs text-ink-600">
        {reversed
          ? "The baseline's first day comes after its last: swap them."
          : "Phase I: the centre line and limits are estimated on the baseline only, then applied unchanged to the later periods (Phase II) — a stable period you trust, not the one under study. Without a baseline, every period shown makes the limits."}
      </p>
    </div>
  );
}

function OutMark({ above }: { above: boolean }) {
  return (
    <span className="inline-flex items-center gap-1 whitespace-nowrap text-xs font-bold text-alarm-700" data-out="true">
      <svg viewBox="0 0 12 12" className="h-3 w-3" aria-hidden style={{ transform: above ? undefined : "rotate(180deg)" }}>
        <path d="M6 1 11.5 11H.5z" fill="currentColor" />
      </svg>
      {above ? "above UCL" : "below LCL"}
    </span>
  );
}

/** A Western Electric rule a point completes: a hollow square and the rule's number. */
function RuleMark({ rule, legend }: { rule: number; legend: string | undefined }) {
  return (
    <span className="inline-flex items-center gap-1 whitespace-nowrap text-xs font-bold text-brass-700" data-rule={rule} title={legend}>
      <svg viewBox="0 0 12 12" className="h-3 w-3" aria-hidden>
        <rect x="1.5" y="1.5" width="9" height="9" fill="none" stroke="currentColor" strokeWidth="2" />
      </svg>
      rule {rule}
    </span>
  );
}

/** The shaded phase of a point when a baseline is set: a word, and a bar of its own pattern. */
function PhaseMark({ phase }: { phase: Point["phase"] }) {
  const dash = phase === "baseline" ? undefined : phase === "before" ? "1 2" : "4 2";
  return (
    <span className="inline-flex items-center gap-1 whitespace-nowrap text-xs text-ink-700" data-phase={phase}>
      <svg viewBox="0 0 14 6" className="h-1.5 w-3.5" aria-hidden>
        <path d="M0 3h14" stroke="currentColor" strokeWidth="3" strokeDasharray={dash} />
      </svg>
      {PHASE_WORDS[phase]}
    </span>
  );
}

export function ControlChartView({ data, onChange }: { data: ControlChart; onChange?: (patch: Patch) => void }) {
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
  const name = CHART_NAMES[data.chart];
  const b = data.baseline;
  return (
    <div className="space-y-5">
      <div className="grid grid-cols-2 gap-3 md:grid-cols-4">
        <Figure
          label="Slabs (n)"
          value={data.slabs.toLocaleString("en-GB")}
          note={`in ${plural(data.points.length, word)}${u ? ` · ${data.defects.toLocaleString("en-GB")} defects` : ""}`}
        />
        <Figure
          label={u ? "ū (centre line, defects per slab)" : "p̄ (centre line)"}
          value={<span data-testid="centre">{text(data.centre)}</span>}
          note={
            b
              ? `from the baseline, ${b.firstPeriod ?? b.from} to ${b.lastPeriod ?? b.to}`
              : u
                ? `${data.defects.toLocaleString("en-GB")} defects on n = ${data.slabs.toLocaleString("en-GB")}`
                : `${data.affected.toLocaleString("en-GB")} affected of n = ${data.slabs.toLocaleString("en-GB")}`
          }
        />
        <Figure
          label="Out of control"
          value={<span data-testid="out-count">{out.length}</span>}
          note={`${out.filter((p) => (value(p) ?? 0) > p.ucl).length} above UCL, ${out.filter((p) => (value(p) ?? 0) < p.lcl).length} below LCL`}
        />
        <Figure
          label="Run-rule signals (rules 2–4)"
          value={<span data-testid="rule-count">{data.rules.on ? ruled.length : "off"}</span>}
          note={data.rules.on ? `${word}s completing a Western Electric pattern` : "switched off: limits only"}
        />
      </div>
      <SmallNWarning
        notes={[
          data.slabs > 0 && data.affected < 10
            ? `Only ${plural(data.affected, "affected slab")} in these filters: the limits are wide and an out-of-control period is hard to show.`
            : "",
          few ? `${plural(few, word)} with fewer than ${FEW_SLABS} slabs: the 3σ limits of the normal approximation are rough there.` : "",
          ...data.notes.filter((n) => od?.note !== n && !n.startsWith("By week, the baseline") && !n.startsWith("The limits are for the crude")),
        ]}
      />
      {od ? (
        <div data-testid="overdispersion">
          <Notice
            tone={od.applies && data.chart === "p" ? "caution" : "info"}
            title={od.applies ? (data.chart === "laney" ? "Overdispersion: the Laney p′ chart applies" : "Overdispersion") : "No overdispersion shown"}
          >
            {od.note}{" "}
            <span className="tabular-nums">
              (σ_z {num(od.sigmaZ, 2)}; χ² {num(od.chi2, 1)}, df {num(od.df, 0)}, p {pValue(od.p)})
            </span>
            {od.applies && data.chart === "p" && onChange ? (
              <span className="mt-2 block">
                <Button variant="secondary" onClick={() => onChange({ chart: "laney" })} data-testid="use-laney">
                  Draw the Laney p′ chart
                </Button>
              </span>
            ) : null}
          </Notice>
        </div>
      ) : null}
      {b ? (
        <p className="rounded-md border border-ink-200 bg-white px-4 py-2 text-sm" data-testid="baseline-words">
          <span className="font-semibold">Baseline (Phase I):</span> {b.from} to {b.to} — {plural(b.periods, word)}
          {b.firstPeriod && data.period === "week" ? ` (${b.firstPeriod} to ${b.lastPeriod})` : ""}, {b.slabs.toLocaleString("en-GB")} slabs. Its centre line
          and limits are applied unchanged to the {word}s after it (Phase II, monitoring)
          {data.points.some((p) => p.phase === "before") ? ` and to those before it` : ""}.
          {data.notes.find((n) => n.startsWith("By week, the baseline")) ? ` ${data.notes.find((n) => n.startsWith("By week, the baseline"))}` : ""}
        </p>
      ) : null}
      <Card title={`${name} by ${word}`}>
        <Suspense fallback={<Spinner label="Loading the chart" />}>
          <PChart data={data} />
        </Suspense>
        <p className="mt-1 text-xs text-ink-600">
          {data.method}. A point outside its limits is marked with a triangle and says which limit it crossed
          {data.rules.on ? "; a point completing a run rule carries a hollow square and the rule's number" : ""}
          {b ? "; the shaded bands name the phases" : ""}. A signal asks for a look at what was cast then; it does not say why.
          {std ? " The dashed line with diamonds is the share standardised to the grade mix; the limits are for the share as cast." : ""}
        </p>
        {data.rules.on ? (
          <ul className="mt-2 grid gap-1 text-xs text-ink-700 md:grid-cols-2" data-testid="rules-legend">
            {Object.entries(data.rules.legend).map(([k, v]) => (
              <li key={k} className="flex items-center gap-2">
                {k === "1" ? <OutMark above /> : <RuleMark rule={Number(k)} legend={v} />}
                <span>
                  Rule {k}: {v}
                </span>
              </li>
            ))}
          </ul>
        ) : null}
      </Card>
      <Card title={flagged.length ? `${plural(flagged.length, word)} signalled` : `Every ${word}`}>
        <div className="max-h-[28rem] overflow-y-auto">
          <TableWrap>
            <table className="w-full text-sm" data-testid="pchart-table">
              <thead className="sticky top-0 bg-white">
                <tr className="border-b-2 border-ink-200">
                  <th className={th}>{word === "day" ? "Day" : "ISO week"}</th>
                  {b ? <th className={th}>Phase</th> : null}
                  <th className={thNum}>Slabs (n)</th>
                  <th className={thNum}>{u ? "Defects" : "Affected"}</th>
                  <th className={thNum}>{u ? "u" : "p"}</th>
                  {std ? <th className={thNum}>Standardised</th> : null}
                  <th className={thNum}>LCL</th>
                  <th className={thNum}>UCL</th>
                  <th className={thNum}>z</th>
                  <th className={th}>Signal</th>
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
                        <PhaseMark phase={p.phase} />
                      </td>
                    ) : null}
                    <td className={tdNum} data-field="slabs">
                      {p.slabs.toLocaleString("en-GB")}
                    </td>
                    <td className={tdNum}>{(u ? p.defects : p.affected).toLocaleString("en-GB")}</td>
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
                        {p.outOfControl ? <OutMark above={(value(p) ?? 0) > p.ucl} /> : null}
                        {p.signals
                          .filter((s) => s !== 1 || !p.outOfControl)
                          .map((s) => (
                            <RuleMark key={s} rule={s} legend={data.rules.legend[String(s)]} />
                          ))}
                        {!p.outOfControl && p.signals.length === 0 ? <span className="text-xs text-ink-500">within limits</span> : null}
                      </span>
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </TableWrap>
        </div>
        {flagged.length ? <p className="mt-2 text-xs text-ink-600">Signalled {word}s first, then the rest in order.</p> : null}
      </Card>
      {data.standardisation ? (
        <p className="text-xs text-ink-700" data-testid="standardisation">
          <span className="font-semibold">Standardised to the grade mix:</span> {data.standardisation.reference} —{" "}
          {data.standardisation.referenceMix.map((m) => `${m.label} ${pct(m.share, 1)} (n = ${m.slabs.toLocaleString("en-GB")})`).join(", ")}.{" "}
          {data.standardisation.method}.
        </p>
      ) : null}
    </div>
  );
}
