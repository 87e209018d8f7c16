import { lazy, Suspense, useEffect, useState } from "react";
import { useTranslation } from "react-i18next";
import type { BeforeAfter } from "@shared/api/reports";
import { CATEGORICAL_KEYS } from "@shared/variables";
import { useTerms } from "@/i18n/terms";
import { Button } from "@/components/ui/button";
import { Card } from "@/components/ui/card";
import { Figure } from "./figure";
import { Spinner } from "@/components/ui/logo";
import { count, lowerFirst, pct, pctRange, pValue } from "@/lib/format";
import { BeforeAfterStrata } from "./before-after-strata";
import { points } from "./estimates";
import { inputClass, labelClass, labelText } from "./filter-bar";
import type { ReportParams } from "./report-params";
import { Choice, SettingsRow, VariableSelect, variableOf } from "./settings";
import { FEW_SLABS, SmallNWarning } from "./small-n";
import { DateField } from "@/components/ui/date-field";
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
  const { t, i18n } = useTranslation("analysis");
  const { variable } = useTerms();
  // English writes a label inside a sentence in small letters; German keeps its nouns' capitals.
  const inSentence = (label: string) => (i18n.language === "de" ? label : lowerFirst(label));
  const [draft, setDraft] = useState<Record<string, string>>({});
  useEffect(() => {
    setDraft(Object.fromEntries(RANGE_KEYS.map((k) => [k, params[k] ?? ""])));
  }, [params]);
  const periods = params.mode !== "variable";
  const v = variableOf(params.variable ?? "casting_speed_m_min");
  const field = (k: (typeof RANGE_KEYS)[number], label: string, type: "date" | "number") =>
    // A day as the filters above write it (in the person's language), not the browser's own date field.
    type === "date" ? (
      <DateField
        key={k}
        label={label}
        className={labelClass}
        labelClassName={labelText}
        inputClassName={inputClass}
        value={draft[k] ?? ""}
        onChange={(v) => setDraft((d) => ({ ...d, [k]: v }))}
        data-testid={`range-${k}`}
      />
    ) : (
      <label className={labelClass} key={k}>
        <span className={labelText}>{label}</span>
        <input
          type="number"
          step="any"
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
          label={t("beforeAfter.settings.compare")}
          value={params.mode ?? "periods"}
          options={[
            { value: "periods", label: t("beforeAfter.settings.twoPeriods") },
            { value: "variable", label: t("beforeAfter.settings.twoRanges") },
          ]}
          onChange={(m) => onChange({ mode: m, variable: m === "variable" ? (params.variable ?? "casting_speed_m_min") : undefined })}
        />
        {periods ? null : (
          <div className="col-span-2">
            <VariableSelect
              label={t("beforeAfter.settings.variable")}
              value={params.variable ?? "casting_speed_m_min"}
              onChange={(k) => onChange({ variable: k })}
            />
          </div>
        )}
        <Choice
          label={t("beforeAfter.settings.within")}
          testId="within-select"
          value={params.stratifyBy ?? ""}
          options={[
            { value: "", label: t("beforeAfter.settings.notSplit") },
            ...CATEGORICAL_KEYS.map((k) => ({ value: k, label: t("beforeAfter.settings.each", { what: inSentence(variable(k)) }) })),
          ]}
          onChange={(v) => onChange({ stratifyBy: v || undefined })}
          hint={t("beforeAfter.settings.withinHint")}
        />
      </SettingsRow>
      <div className="grid grid-cols-2 gap-3 md:grid-cols-5">
        {periods
          ? [
              field("aFrom", t("beforeAfter.settings.aFromDay"), "date"),
              field("aTo", t("beforeAfter.settings.aToDay"), "date"),
              field("bFrom", t("beforeAfter.settings.bFromDay"), "date"),
              field("bTo", t("beforeAfter.settings.bToDay"), "date"),
            ]
          : [
              field("aMin", t("beforeAfter.settings.aFrom", { unit }), "number"),
              field("aMax", t("beforeAfter.settings.aTo", { unit }), "number"),
              field("bMin", t("beforeAfter.settings.bFrom", { unit }), "number"),
              field("bMax", t("beforeAfter.settings.bTo", { unit }), "number"),
            ]}
        <div className="flex items-end">
          <Button type="submit" className="w-full">
            {t("beforeAfter.settings.submit")}
          </Button>
        </div>
      </div>
      <p className="text-xs text-ink-600">{periods ? t("beforeAfter.settings.periodsNote") : t("beforeAfter.settings.rangesNote")}</p>
    </form>
  );
}

export function BeforeAfterView({ data }: { data: BeforeAfter }) {
  const { t } = useTranslation("analysis");
  const rows = [
    { key: "A", ...data.a, label: `A: ${data.a.label}` },
    { key: "B", ...data.b, label: `B: ${data.b.label}` },
  ];
  const d = data.difference;
  return (
    <div className="space-y-5">
      <div className="grid grid-cols-2 gap-3 md:grid-cols-4" data-testid="before-after-summary">
        <Figure
          label={t("beforeAfter.a")}
          value={pct(data.a.rate)}
          note={t("beforeAfter.sideNote", { affected: data.a.affected, n: count(data.a.slabs), ci: pctRange(data.a.ciLower, data.a.ciUpper) })}
        />
        <Figure
          label={t("beforeAfter.b")}
          value={pct(data.b.rate)}
          note={t("beforeAfter.sideNote", { affected: data.b.affected, n: count(data.b.slabs), ci: pctRange(data.b.ciLower, data.b.ciUpper) })}
        />
        <Figure
          label={t("beforeAfter.difference")}
          value={points(d.value, true)}
          note={t("beforeAfter.pointsCi", { lower: points(d.lower), upper: points(d.upper) })}
        />
        {data.test.name === "none" ? (
          <Figure
            label={t("beforeAfter.noTest")}
            value={<span data-testid="test-p">—</span>}
            note={<span data-testid="test-reason">{data.test.reason ?? t("beforeAfter.nothingToCompare")}</span>}
          />
        ) : (
          <Figure
            label={data.test.name === "fisher" ? t("beforeAfter.fisher") : t("beforeAfter.chiSquare")}
            value={<span data-testid="test-p">{`p ${pValue(data.test.p)}`}</span>}
            note={t("beforeAfter.twoSided")}
          />
        )}
      </div>
      <SmallNWarning
        notes={[
          data.a.slabs === 0 || data.b.slabs === 0 ? t("beforeAfter.emptySide") : "",
          data.test.name === "none" && data.a.slabs > 0 && data.b.slabs > 0 && data.test.reason
            ? t("beforeAfter.noTestBecause", { reason: data.test.reason })
            : "",
          data.a.slabs > 0 && data.a.slabs < FEW_SLABS ? t("beforeAfter.aFew", { count: data.a.slabs, n: count(data.a.slabs) }) : "",
          data.b.slabs > 0 && data.b.slabs < FEW_SLABS ? t("beforeAfter.bFew", { count: data.b.slabs, n: count(data.b.slabs) }) : "",
          data.test.name === "fisher" && data.a.slabs > 0 && data.b.slabs > 0 ? t("beforeAfter.fisherNote") : "",
        ]}
      />
      <Card title={t("beforeAfter.aAgainstB")}>
        <Suspense fallback={<Spinner label={t("loadingChart")} />}>
          <CategoryRateChart rows={rows} fewN={FEW_SLABS} testId="before-after-chart" label={t("beforeAfter.chartLabel")} height={300} />
        </Suspense>
        <RateTable rows={rows} labelHeader={t("beforeAfter.side")} fewN={FEW_SLABS} testId="before-after-table" />
        <p className="mt-2 text-xs text-ink-600">
          {t("beforeAfter.read", {
            method: d.method.charAt(0).toUpperCase() + d.method.slice(1),
            test: data.test.name === "none" ? t("beforeAfter.noTest") : data.test.method,
          })}
        </p>
        {data.notes.length ? (
          <ul className="mt-2 list-disc space-y-0.5 pl-5 text-xs text-ink-700" data-testid="before-after-notes">
            {data.notes
              // Without a test the first note says why, which the line above says already.
              .filter((_, i) => !(data.test.name === "none" && i === 0))
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
