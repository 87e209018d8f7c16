import { lazy, memo, Suspense, useMemo, type ComponentProps } from "react";
import type { Overview } from "@shared/api/reports";
import { AfterFirstView, useHoldForChart, useModuleAfterCommit } from "@/components/ui/first-view";
import { Card } from "@/components/ui/card";
import { Figure } from "./figure";
import { Spinner } from "@/components/ui/logo";
import { count, num, pct, pctRange, plural } from "@/lib/format";
import { FEW_SLABS, FewMark, SmallNWarning } from "./small-n";
import { RateTable, TableWrap, td, tdNum, th, thNum } from "./tables";

const CategoryRateChart = lazy(() => import("./charts/category-rate-chart"));
const ParetoChart = lazy(() => import("./charts/pareto-chart"));

const PERIOD_WORD = { day: "day", week: "week", month: "month" } as const;

/** The chart's component once its code has arrived (FirstRateChart). */
let RateChart: typeof import("./charts/category-rate-chart").CategoryRateChart | undefined;
const loadRateChart = () => import("./charts/category-rate-chart").then((m) => (RateChart = m.CategoryRateChart));

/**
 * The first chart of the screen: its code (and the chart library) is evaluated once the table under
 * it has been committed, not while the screen is first drawn, and it shows without a Suspense
 * fallback in between (see useModuleAfterCommit). What waits for the first view waits for it too.
 */
function FirstRateChart(props: ComponentProps<typeof CategoryRateChart>) {
  useHoldForChart();
  const loaded = useModuleAfterCommit(loadRateChart);
  return loaded && RateChart ? <RateChart {...props} /> : <Spinner label="Loading the chart" />;
}

/**
 * The overview's figures, charts and tables. Drawn again only for a new answer: the filter bar's
 * choices (plant setup, catalogue, cause tags) arrive while the screen is first drawn, and each of
 * them drew every table and chart of the report again before its first chart was up.
 */
export const OverviewView = memo(function OverviewView({ data }: { data: Overview }) {
  const t = data.totals;
  const word = PERIOD_WORD[data.period];
  const fewPeriods = data.periods.filter((p) => p.slabs < FEW_SLABS).length;
  const fewGrades = data.byGrade.filter((g) => g.slabs < FEW_SLABS).length;
  const warnings = [
    ...data.notes,
    t.slabs === 0 ? "No slab matches these filters." : "",
    t.slabs > 0 && t.affected < 10 ? `Only ${plural(t.affected, "affected slab")} in these filters: every rate here has a wide interval.` : "",
    fewPeriods ? `${plural(fewPeriods, word)} with fewer than ${FEW_SLABS} slabs (shown hollow and greyed).` : "",
    fewGrades ? `${plural(fewGrades, "grade")} with fewer than ${FEW_SLABS} slabs (greyed).` : "",
  ];
  const paretoTotal = data.pareto.reduce((s, r) => s + r.defects, 0);
  const std = data.standardisation;
  const second = useMemo(
    () => (std ? { name: "Standardised to the grade mix", rates: data.periods.map((p) => p.standardised?.rate ?? null) } : undefined),
    [std, data.periods],
  );
  return (
    <div className="space-y-5">
      <div className="grid grid-cols-2 gap-3 md:grid-cols-4" data-testid="overview-summary">
        <Figure label="Slabs (n)" value={count(t.slabs)} note={`${num(t.tonnes, 0)} t cast`} />
        <Figure label="Share affected" value={pct(t.rate)} note={`${count(t.affected)} of n = ${count(t.slabs)} · 95 % CI ${pctRange(t.ciLower, t.ciUpper)}`} />
        <Figure label="Defects per 100 slabs" value={num(t.per100Slabs, 2)} note={`${count(t.defects)} defects on ${count(t.slabs)} slabs`} />
        <Figure label="Defects per 1000 t" value={num(t.per1000t, 2)} note={`${count(t.defects)} defects on ${num(t.tonnes, 0)} t`} />
      </div>
      <SmallNWarning notes={warnings} />
      <Card title={`Share of slabs affected by ${word}`}>
        <FirstRateChart
          rows={data.periods.map((p) => ({ ...p, label: p.period }))}
          mode="points"
          fewN={FEW_SLABS}
          testId="period-chart"
          label={`Share of slabs affected in ${plural(data.periods.length, word)}, with 95 % intervals`}
          xName={word === "week" ? "ISO week of casting" : `${word[0]!.toUpperCase()}${word.slice(1)} of casting`}
          second={second}
        />
        {std ? (
          <p className="mt-1 text-xs text-ink-700" data-testid="standardisation">
            <span className="font-semibold">Standardised to the grade mix</span> (dashed line, diamonds): each {word}'s rate as if it had cast {std.reference} —{" "}
            {std.referenceMix.map((m) => `${m.label} ${pct(m.share, 1)} (n = ${count(m.slabs)})`).join(", ")}. A {word} whose standardised rate differs from its
            crude one cast a different mix; compare {word}s on the standardised rate. {std.method.charAt(0).toUpperCase() + std.method.slice(1)}.
          </p>
        ) : null}
        <div className="mt-3 max-h-96 overflow-y-auto">
          <TableWrap>
            <table className="w-full text-sm" data-testid="periods-table">
              <thead className="sticky top-0 bg-white">
                <tr className="border-b-2 border-ink-200">
                  <th className={th}>{word === "week" ? "ISO week" : word === "day" ? "Day" : "Month"}</th>
                  <th className={thNum}>Slabs (n)</th>
                  <th className={thNum}>Affected</th>
                  <th className={thNum}>Share affected</th>
                  <th className={thNum}>95 % CI</th>
                  {std ? (
                    <>
                      <th className={`${thNum} border-l-2 border-ink-200`}>Standardised</th>
                      <th className={thNum}>95 % CI</th>
                    </>
                  ) : null}
                  <th className={thNum}>Defects</th>
                  <th className={thNum}>per 100 slabs</th>
                  <th className={thNum}>Tonnes</th>
                  <th className={thNum}>per 1000 t</th>
                </tr>
              </thead>
              <tbody>
                {data.periods.map((p) => {
                  const few = p.slabs < FEW_SLABS;
                  return (
                    <tr key={p.period} className={`border-b border-ink-100 ${few ? "bg-ink-50 text-ink-500" : ""}`} data-testid="period-row">
                      <td className={`${td} whitespace-nowrap font-semibold`}>
                        {p.period}
                        {few ? <FewMark /> : null}
                      </td>
                      <td className={tdNum} data-field="slabs">
                        {count(p.slabs)}
                      </td>
                      <td className={tdNum} data-field="affected">
                        {count(p.affected)}
                      </td>
                      <td className={tdNum} data-field="rate">
                        {pct(p.rate)}
                      </td>
                      <td className={tdNum}>{pctRange(p.ciLower, p.ciUpper)}</td>
                      {std ? (
                        <>
                          <td
                            className={`${tdNum} border-l-2 border-ink-200 font-semibold`}
                            data-field="standardised"
                            title={p.standardised?.reason ?? undefined}
                          >
                            {pct(p.standardised?.rate)}
                          </td>
                          <td className={tdNum} data-field="standardisedCi">
                            {p.standardised?.rate === null || !p.standardised ? (
                              <span className="text-xs">{p.standardised?.reason ?? "—"}</span>
                            ) : (
                              pctRange(p.standardised.ciLower, p.standardised.ciUpper)
                            )}
                          </td>
                        </>
                      ) : null}
                      <td className={tdNum}>{count(p.defects)}</td>
                      <td className={tdNum}>{num(p.per100Slabs, 2)}</td>
                      <td className={tdNum}>{num(p.tonnes, 0)}</td>
                      <td className={tdNum}>{num(p.per1000t, 2)}</td>
                    </tr>
                  );
                })}
              </tbody>
            </table>
          </TableWrap>
        </div>
      </Card>
      {/* Below the first view: drawn once the figures, the first chart and its table are on screen. */}
      <AfterFirstView>
        <Card title={`Pareto of defect types (n = ${count(paretoTotal)} defects)`}>
          {data.pareto.length === 0 ? (
            <p className="text-sm text-ink-600">No defect passes these filters.</p>
          ) : (
            <>
              <Suspense fallback={<Spinner label="Loading the chart" />}>
                <ParetoChart pareto={data.pareto} />
              </Suspense>
              <TableWrap caption="Shares are of the defects that pass the filters; a slab with two defects of a type counts twice under Defects, once under Slabs affected.">
                <table className="mt-3 w-full text-sm" data-testid="pareto-table">
                  <thead>
                    <tr className="border-b-2 border-ink-200">
                      <th className={th}>Type</th>
                      <th className={thNum}>Defects</th>
                      <th className={thNum}>Slabs affected</th>
                      <th className={thNum}>Share</th>
                      <th className={thNum}>Cumulative</th>
                    </tr>
                  </thead>
                  <tbody>
                    {data.pareto.map((r) => (
                      <tr key={r.code} className="border-b border-ink-100" data-testid="pareto-row">
                        <td className={td}>
                          <span className="font-semibold">{r.code}</span> {r.name}
                        </td>
                        <td className={tdNum}>{count(r.defects)}</td>
                        <td className={tdNum}>{count(r.slabsAffected)}</td>
                        <td className={tdNum}>{pct(r.share, 1)}</td>
                        <td className={tdNum}>{pct(r.cumulativeShare, 1)}</td>
                      </tr>
                    ))}
                  </tbody>
                </table>
              </TableWrap>
            </>
          )}
        </Card>
        <div className="grid gap-5 xl:grid-cols-2">
          <Card title="Share affected by grade">
            <Suspense fallback={<Spinner label="Loading the chart" />}>
              <CategoryRateChart
                rows={data.byGrade.map((g) => ({ ...g, label: g.grade }))}
                fewN={FEW_SLABS}
                testId="grade-chart"
                label="Share of slabs affected by grade, with 95 % intervals"
              />
            </Suspense>
            <RateTable
              rows={data.byGrade.map((g) => ({ ...g, key: g.grade, label: g.grade }))}
              labelHeader="Grade"
              fewN={FEW_SLABS}
              testId="grade-table"
              extra={[{ header: "Family", cell: (i) => data.byGrade[i]!.family }]}
            />
            <p className="mt-2 text-xs text-ink-600">Grades differ in chemistry and in how they are cast: a grade's rate mixes both.</p>
          </Card>
          <Card title="Share affected by strand">
            <Suspense fallback={<Spinner label="Loading the chart" />}>
              <CategoryRateChart
                rows={data.byStrand.map((s) => ({ ...s, label: `${s.caster} strand ${s.strand}` }))}
                fewN={FEW_SLABS}
                testId="strand-chart"
                label="Share of slabs affected by strand, with 95 % intervals"
              />
            </Suspense>
            <RateTable
              rows={data.byStrand.map((s) => ({ ...s, key: `${s.caster}-${s.strand}`, label: `${s.caster} strand ${s.strand}` }))}
              labelHeader="Strand"
              fewN={FEW_SLABS}
              testId="strand-table"
            />
          </Card>
        </div>
      </AfterFirstView>
    </div>
  );
});
