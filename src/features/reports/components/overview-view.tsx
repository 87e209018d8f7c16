import { lazy, memo, Suspense, useMemo, type ComponentProps } from "react";
import { Trans, useTranslation } from "react-i18next";
import type { Overview } from "@shared/api/reports";
import { AfterFirstView, useHoldForChart, useModuleAfterCommit } from "@/components/ui/first-view";
import { Card } from "@/components/ui/card";
import { Figure } from "./figure";
import { Spinner } from "@/components/ui/logo";
import { count, num, pct, pctRange } from "@/lib/format";
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
  const { t } = useTranslation("reports");
  const loaded = useModuleAfterCommit(loadRateChart);
  return loaded && RateChart ? <RateChart {...props} /> : <Spinner label={t("charts.loading")} />;
}

/**
 * The overview's figures, charts and tables. Drawn again only for a new answer: the filter bar's
 * choices (plant setup, catalogue, cause tags) arrive while the screen is first drawn, and each of
 * them drew every table and chart of the report again before its first chart was up.
 */
export const OverviewView = memo(function OverviewView({ data }: { data: Overview }) {
  const { t } = useTranslation("reports");
  const tot = data.totals;
  const word = PERIOD_WORD[data.period];
  const fewPeriods = data.periods.filter((p) => p.slabs < FEW_SLABS).length;
  const fewGrades = data.byGrade.filter((g) => g.slabs < FEW_SLABS).length;
  const warnings = [
    ...data.notes,
    tot.slabs === 0 ? t("overview.noSlab") : "",
    tot.slabs > 0 && tot.affected < 10 ? t("overview.fewAffected", { count: tot.affected, n: count(tot.affected) }) : "",
    fewPeriods ? t(`overview.fewPeriods.${word}`, { count: fewPeriods, n: count(fewPeriods), few: FEW_SLABS }) : "",
    fewGrades ? t("overview.fewGrades", { count: fewGrades, n: count(fewGrades), few: FEW_SLABS }) : "",
  ];
  const paretoTotal = data.pareto.reduce((s, r) => s + r.defects, 0);
  const std = data.standardisation;
  const standardisedName = t("overview.standardisedName");
  const second = useMemo(
    () => (std ? { name: standardisedName, rates: data.periods.map((p) => p.standardised?.rate ?? null) } : undefined),
    [std, data.periods, standardisedName],
  );
  const strandLabel = (s: { caster: string; strand: number | string }) => t("filters.casterStrand", { caster: s.caster, strand: s.strand });
  return (
    <div className="space-y-5">
      <div className="grid grid-cols-2 gap-3 md:grid-cols-4" data-testid="overview-summary">
        <Figure label={t("cols.slabsN")} value={count(tot.slabs)} note={t("overview.tonnesCast", { tonnes: num(tot.tonnes, 0) })} />
        <Figure
          label={t("cols.shareAffected")}
          value={pct(tot.rate)}
          note={t("overview.affectedOfN", { affected: count(tot.affected), n: count(tot.slabs), ci: pctRange(tot.ciLower, tot.ciUpper) })}
        />
        <Figure
          label={t("overview.per100")}
          value={num(tot.per100Slabs, 2)}
          note={t("overview.defectsOnSlabs", { defects: count(tot.defects), slabs: count(tot.slabs) })}
        />
        <Figure
          label={t("overview.per1000t")}
          value={num(tot.per1000t, 2)}
          note={t("overview.defectsOnTonnes", { defects: count(tot.defects), tonnes: num(tot.tonnes, 0) })}
        />
      </div>
      <SmallNWarning notes={warnings} />
      <Card title={t(`overview.rateBy.${word}`)}>
        <FirstRateChart
          rows={data.periods.map((p) => ({ ...p, label: p.period }))}
          mode="points"
          fewN={FEW_SLABS}
          testId="period-chart"
          label={t(`overview.chartLabel.${word}`, { count: data.periods.length, n: count(data.periods.length) })}
          xName={t(`overview.xName.${word}`)}
          second={second}
        />
        {std ? (
          <p className="mt-1 text-xs text-ink-700" data-testid="standardisation">
            <Trans
              t={t}
              i18nKey={`overview.standardisation.${word}`}
              values={{
                reference: std.reference,
                mix: std.referenceMix.map((m) => t("overview.mixPart", { label: m.label, share: pct(m.share, 1), n: count(m.slabs) })).join(", "),
                method: std.method.charAt(0).toUpperCase() + std.method.slice(1),
              }}
              components={{ 1: <span className="font-semibold" /> }}
            />
          </p>
        ) : null}
        <div className="mt-3 max-h-96 overflow-y-auto">
          <TableWrap>
            <table className="w-full text-sm" data-testid="periods-table">
              <thead className="sticky top-0 bg-white">
                <tr className="border-b-2 border-ink-200">
                  <th className={th}>{t(`settings.periods.${word}`)}</th>
                  <th className={thNum}>{t("cols.slabsN")}</th>
                  <th className={thNum}>{t("cols.affected")}</th>
                  <th className={thNum}>{t("cols.shareAffected")}</th>
                  <th className={thNum}>{t("cols.ci")}</th>
                  {std ? (
                    <>
                      <th className={`${thNum} border-l-2 border-ink-200`}>{t("overview.standardised")}</th>
                      <th className={thNum}>{t("cols.ci")}</th>
                    </>
                  ) : null}
                  <th className={thNum}>{t("cols.defects")}</th>
                  <th className={thNum}>{t("overview.per100Short")}</th>
                  <th className={thNum}>{t("overview.tonnes")}</th>
                  <th className={thNum}>{t("overview.per1000tShort")}</th>
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
        <Card title={t("overview.paretoTitle", { n: count(paretoTotal) })}>
          {data.pareto.length === 0 ? (
            <p className="text-sm text-ink-600">{t("overview.noDefect")}</p>
          ) : (
            <>
              <Suspense fallback={<Spinner label={t("charts.loading")} />}>
                <ParetoChart pareto={data.pareto} />
              </Suspense>
              <TableWrap caption={t("overview.paretoCaption")}>
                <table className="mt-3 w-full text-sm" data-testid="pareto-table">
                  <thead>
                    <tr className="border-b-2 border-ink-200">
                      <th className={th}>{t("overview.type")}</th>
                      <th className={thNum}>{t("cols.defects")}</th>
                      <th className={thNum}>{t("overview.slabsAffected")}</th>
                      <th className={thNum}>{t("overview.share")}</th>
                      <th className={thNum}>{t("overview.cumulative")}</th>
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
          <Card title={t("overview.byGrade")}>
            <Suspense fallback={<Spinner label={t("charts.loading")} />}>
              <CategoryRateChart
                rows={data.byGrade.map((g) => ({ ...g, label: g.grade }))}
                fewN={FEW_SLABS}
                testId="grade-chart"
                label={t("overview.byGradeChart")}
              />
            </Suspense>
            <RateTable
              rows={data.byGrade.map((g) => ({ ...g, key: g.grade, label: g.grade }))}
              labelHeader={t("overview.grade")}
              fewN={FEW_SLABS}
              testId="grade-table"
              extra={[{ header: t("overview.family"), cell: (i) => data.byGrade[i]!.family }]}
            />
            <p className="mt-2 text-xs text-ink-600">{t("overview.gradeNote")}</p>
          </Card>
          <Card title={t("overview.byStrand")}>
            <Suspense fallback={<Spinner label={t("charts.loading")} />}>
              <CategoryRateChart
                rows={data.byStrand.map((s) => ({ ...s, label: strandLabel(s) }))}
                fewN={FEW_SLABS}
                testId="strand-chart"
                label={t("overview.byStrandChart")}
              />
            </Suspense>
            <RateTable
              rows={data.byStrand.map((s) => ({ ...s, key: `${s.caster}-${s.strand}`, label: strandLabel(s) }))}
              labelHeader={t("overview.strand")}
              fewN={FEW_SLABS}
              testId="strand-table"
            />
          </Card>
        </div>
      </AfterFirstView>
    </div>
  );
});
