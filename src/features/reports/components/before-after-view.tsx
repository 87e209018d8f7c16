import { lazy, Suspense, useEffect, useState } from "react";
import type { BeforeAfter } from "@shared/api/reports";
import { CATEGORICAL_KEYS, CATEGORICAL_LABELS } from "@shared/variables";
import { Button } from "@/components/ui/button";
import { Card } from "@/components/ui/card";
import { Figure } from "./figure";
import { Spinner } from "@/components/ui/logo";
import { lowerFirst, pct, pctRange, plural, pValue } from "@/lib/format";
import { BeforeAfterStrata } from "./before-after-strata";
import { points } from "./estimates";
import { inputClass, labelClass, labelText } from "./filter-bar";
import type { ReportParams } from "./report-params";
import { Choice, SettingsRow, VariableSelect, variableOf } from "./settings";
import { FEW_SLABS, SmallNWarning } from "./small-n";
import { RateTable } from "./tables";

const CategoryRateChart = lazy(() => import("./charts/category-rate-chart"));

const RANGE_KEYS = ["aFrom", "aTo", "bFrom", "bTo", "aMin", "aMax", "bMin", "bMax"] as const;

/** Whether the parameters name both sides of the comparison. */
export function beforeAfterReady(p: ReportParams): boolean {
  if (p.mode === "variable") return Boolean(p.variable && p.aMin && p.aMax && p.bMin && p.bMax);
  return Boolean(p.aFrom && p.aTo && p.bFrom && p.bTo);
}

/**
 * The two sides of the comparison, typed then applied together (a half-typed range would ask the
 * server a question nobody meant).
 */
export function BeforeAfterSettings({ params, onChange }: { params: ReportParams; onChange: (patch: Partial<Record<string, string | undefined>>) => void }) {
  const [draft, setDraft] = useState<Record<string, string>>({});
  useEffect(() => {
    setDraft(Object.fromEntries(RANGE_KEYS.map((k) => [k, params[k] ?? ""])));
  }, [params]);
  const periods = params.mode !== "variable";
  const v = variableOf(params.variable ?? "casting_speed_m_min");
  const field = (k: (typeof RANGE_KEYS)[number], label: string, type: "date" | "number") => (
    <label className={labelClass} key={k}>
      <span className={labelText}>{label}</span>
      <input
        type={type}
        step={type === "number" ? "any" : undefined}
        value={draft[k] ?? ""}
        onChange={(e) => setDraft((d) => ({ ...d, [k]: e.target.value }))}
        className={inputClass}
        data-testid={`range-${k}`}
      />
    </label>
  );
  const unit = v && v.unit !== "–" ? ` (${v.unit})` : "";
  return (
    <form
      className="space-y-3"
      onSubmit={(e) => {
        e.preventDefault();
        const keys = periods ? (["aFrom", "aTo", "bFrom", "bTo"] as const) : (["aMin", "aMax", "bMin", "bMax"] as const);
        onChange(Object.fromEntries(keys.map((k) => [k, draft[k]?.trim() || undefined])));
      }}
    >
      <SettingsRow>
        <Choice
          label="Compare"
          value={params.mode ?? "periods"}
          options={[
            { value: "periods", label: "Two periods" },
            { value: "variable", label: "Two ranges of a variable" },
          ]}
          onChange={(m) => onChange({ mode: m, variable: m === "variable" ? (params.variable ?? "casting_speed_m_min") : undefined })}
        />
        {periods ? null : (
          <div className="col-span-2">
            <VariableSelect label="Variable" value={params.variable ?? "casting_speed_m_min"} onChange={(k) => onChange({ variable: k })} />
          </div>
        )}
        <Choice
          label="Compare within"
          testId="within-select"
          value={params.stratifyBy ?? ""}
          options={[
            { value: "", label: "Not split (all slabs together)" },
            ...CATEGORICAL_KEYS.map((k) => ({ value: k, label: `Each ${lowerFirst(CATEGORICAL_LABELS[k])}` })),
          ]}
          onChange={(v) => onChange({ stratifyBy: v || undefined })}
          hint="A against B inside each group, then pooled (Mantel–Haenszel)"
        />
      </SettingsRow>
      <div className="grid grid-cols-2 gap-3 md:grid-cols-5">
        {periods
          ? [
              field("aFrom", "A (before) from", "date"),
              field("aTo", "A to (whole day)", "date"),
              field("bFrom", "B (after) from", "date"),
              field("bTo", "B to (whole day)", "date"),
            ]
          : [
              field("aMin", `A from${unit}`, "number"),
              field("aMax", `A to${unit}`, "number"),
              field("bMin", `B from${unit}`, "number"),
              field("bMax", `B to${unit}`, "number"),
            ]}
        <div className="flex items-end">
          <Button type="submit" className="w-full">
            Compare A and B
          </Button>
        </div>
      </div>
      <p className="text-xs text-ink-600">
        {periods
          ? "The filters above apply to both periods, except their dates: each side takes its own."
          : "Both ends of a range are included, so the two ranges may not meet or overlap: a slab counts in one group only."}
      </p>
    </form>
  );
}

export function BeforeAfterView({ data }: { data: BeforeAfter }) {
  const rows = [
    { key: "A", ...data.a, label: `A: ${data.a.label}` },
    { key: "B", ...data.b, label: `B: ${data.b.label}` },
  ];
  const d = data.difference;
  return (
    <div className="space-y-5">
      <div className="grid grid-cols-2 gap-3 md:grid-cols-4" data-testid="before-after-summary">
        <Figure
          label="A (before)"
          value={pct(data.a.rate)}
          note={`${data.a.affected} of n = ${data.a.slabs.toLocaleString("en-GB")} · CI ${pctRange(data.a.ciLower, data.a.ciUpper)}`}
        />
        <Figure
          label="B (after)"
          value={pct(data.b.rate)}
          note={`${data.b.affected} of n = ${data.b.slabs.toLocaleString("en-GB")} · CI ${pctRange(data.b.ciLower, data.b.ciUpper)}`}
        />
        <Figure label="Difference B − A" value={points(d.value, true)} note={`percentage points · 95 % CI ${points(d.lower)} to ${points(d.upper)}`} />
        {data.test.name === "none" ? (
          <Figure
            label="No test"
            value={<span data-testid="test-p">—</span>}
            note={<span data-testid="test-reason">{data.test.reason ?? "nothing to compare"}</span>}
          />
        ) : (
          <Figure
            label={data.test.name === "fisher" ? "Fisher's exact test" : "Chi-square test"}
            value={<span data-testid="test-p">{`p ${pValue(data.test.p)}`}</span>}
            note="two-sided"
          />
        )}
      </div>
      <SmallNWarning
        notes={[
          data.a.slabs === 0 || data.b.slabs === 0 ? "One side holds no slab: there is nothing to compare." : "",
          data.test.name === "none" && data.a.slabs > 0 && data.b.slabs > 0 && data.test.reason ? `No test: ${data.test.reason}.` : "",
          data.a.slabs > 0 && data.a.slabs < FEW_SLABS ? `A holds only ${plural(data.a.slabs, "slab")}.` : "",
          data.b.slabs > 0 && data.b.slabs < FEW_SLABS ? `B holds only ${plural(data.b.slabs, "slab")}.` : "",
          data.test.name === "fisher" && data.a.slabs > 0 && data.b.slabs > 0
            ? "An expected count is below 5: Fisher's exact test is used instead of chi-square."
            : "",
        ]}
      />
      <Card title="A against B">
        <Suspense fallback={<Spinner label="Loading the chart" />}>
          <CategoryRateChart
            rows={rows}
            fewN={FEW_SLABS}
            testId="before-after-chart"
            label="Share of slabs affected in A and in B, with 95 % intervals"
            height={300}
          />
        </Suspense>
        <RateTable rows={rows} labelHeader="Side" fewN={FEW_SLABS} testId="before-after-table" />
        <p className="mt-2 text-xs text-ink-600">
          {d.method.charAt(0).toUpperCase() + d.method.slice(1)}. {data.test.name === "none" ? "No test" : data.test.method}. A change between two periods may
          come from anything else that changed with them — grade mix, campaign, crew, measurement — not only from the change under study.
        </p>
        {data.notes.length ? (
          <ul className="mt-2 list-disc space-y-0.5 pl-5 text-xs text-ink-700" data-testid="before-after-notes">
            {data.notes
              .filter((n) => !n.startsWith("No test:"))
              .map((n) => (
                <li key={n}>{n}</li>
              ))}
          </ul>
        ) : null}
      </Card>
      {data.stratified ? <BeforeAfterStrata stratified={data.stratified} /> : null}
    </div>
  );
}
