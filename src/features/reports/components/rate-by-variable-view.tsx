import { lazy, Suspense } from "react";
import type { RateByVariable } from "@shared/api/reports";
import { Card } from "@/components/ui/card";
import { Figure } from "./figure";
import { Spinner } from "@/components/ui/logo";
import { lowerFirst, num, pct, plural, pValue, sig } from "@/lib/format";
import { FEW_SLABS, SmallNWarning } from "./small-n";
import { td, tdNum, th, thNum, TableWrap } from "./tables";
import { RateAdjustedCard, RateStratifiedCard } from "./rate-adjusted";

const RateBinsChart = lazy(() => import("./charts/rate-bins-chart"));
const DistributionChart = lazy(() => import("./charts/distribution-chart"));

const capitalise = (s: string) => s.charAt(0).toUpperCase() + s.slice(1);

/** Bin edges carry one decimal more than the variable is shown with: the resolution values are grouped at. */
export const edgeText = (v: number, digits: number) => num(v, digits + 1);

export function RateByVariableView({ data, digits, minN }: { data: RateByVariable; digits: number; minN: number }) {
  const u = data.variable.unit === "–" ? "" : data.variable.unit;
  const perUnit = u ? `per 1 ${u}` : "per unit";
  const { spearman, pointBiserial, logistic, mannWhitney, methods } = data;
  const thinBins = data.bins.filter((b) => b.slabs < minN).length;
  const tests = [
    { key: "spearman", name: "Spearman rank correlation ρ", stat: sig(spearman.rho, 3), p: spearman.p, method: methods.spearman },
    { key: "pointBiserial", name: "Point-biserial correlation r", stat: sig(pointBiserial.r, 3), p: pointBiserial.p, method: methods.pointBiserial },
    {
      key: "logistic",
      name: `Logistic regression: odds ratio ${perUnit}`,
      stat: `${sig(logistic.oddsRatio, 3)} (95 % CI ${sig(logistic.oddsRatioCiLower, 3)}–${sig(logistic.oddsRatioCiUpper, 3)})`,
      p: logistic.p,
      method: `${methods.logistic}; intercept ${sig(logistic.intercept, 4)}, slope ${sig(logistic.slope, 4)}${logistic.converged ? "" : " — the fit did not converge"}`,
    },
    { key: "mannWhitney", name: "Mann–Whitney U (affected vs sound)", stat: num(mannWhitney.u, 0), p: mannWhitney.p, method: methods.mannWhitney },
  ];
  return (
    <div className="space-y-5">
      <div className="grid grid-cols-2 gap-3 md:grid-cols-4" data-testid="rate-summary">
        <Figure
          label="Slabs with a value"
          value={<span data-testid="summary-slabs">{data.slabs.toLocaleString("en-GB")}</span>}
          note={data.slabsWithoutValue ? `${plural(data.slabsWithoutValue, "slab")} without a value left out` : "every slab in the filters"}
        />
        <Figure
          label="Share affected"
          value={pct(data.slabs ? data.affected / data.slabs : null)}
          note={<span data-testid="summary-affected">{`${data.affected.toLocaleString("en-GB")} affected of n = ${data.slabs.toLocaleString("en-GB")}`}</span>}
        />
        <Figure
          label={`Odds ratio ${perUnit}`}
          value={sig(logistic.oddsRatio, 3)}
          note={`95 % CI ${sig(logistic.oddsRatioCiLower, 3)}–${sig(logistic.oddsRatioCiUpper, 3)} · p ${pValue(logistic.p)}`}
        />
        <Figure label="Spearman rank correlation ρ" value={sig(spearman.rho, 2)} note={`p ${pValue(spearman.p)} · n = ${data.slabs.toLocaleString("en-GB")}`} />
      </div>
      <SmallNWarning
        // Not only small counts: merged empty spans and slabs without a value are said here too.
        title="About these bins and slabs"
        notes={[
          // The sentence and the missing adjusted estimate are said in the adjusted card.
          ...data.notes.filter((n) => n !== data.adjusted?.changeInEstimate.sentence && !n.startsWith("Adjusted odds ratio not given")),
          // The server warns below 10 affected slabs; a logistic fit and its odds ratio stay rough well above that.
          data.affected >= 10 && data.affected < FEW_SLABS
            ? `Only ${data.affected} affected slabs: the odds ratio's interval is wide and the bins' rates rest on a handful each.`
            : "",
        ]}
      >
        {thinBins && !data.notes.some((n) => n.includes("fewer than")) ? `${plural(thinBins, "bin")} hold fewer than ${minN} slabs (greyed).` : null}
      </SmallNWarning>
      {data.adjusted ? <RateAdjustedCard adjusted={data.adjusted} variable={data.variable} method={methods.adjusted} /> : null}
      <Card title={`Share of slabs affected against ${lowerFirst(data.variable.label)}`}>
        <Suspense fallback={<Spinner label="Loading the chart" />}>
          <RateBinsChart data={data} digits={digits} minN={minN} />
        </Suspense>
        <TableWrap caption={`${methods.bins}. ${capitalise(methods.grouping ?? "")}. Bins include their lower edge; the last includes its upper edge too.`}>
          <table className="mt-3 w-full text-sm" data-testid="bins-table">
            <thead>
              <tr className="border-b-2 border-ink-200">
                <th className={thNum}>From{u ? ` (${u})` : ""}</th>
                <th className={thNum}>To{u ? ` (${u})` : ""}</th>
                <th className={thNum}>Slabs (n)</th>
                <th className={thNum}>Affected</th>
                <th className={thNum}>Share affected</th>
                <th className={thNum}>95 % CI lower</th>
                <th className={thNum}>95 % CI upper</th>
              </tr>
            </thead>
            <tbody>
              {data.bins.map((b) => {
                const few = b.slabs < minN;
                return (
                  <tr
                    key={b.lower}
                    className={`border-b border-ink-100 ${few ? "bg-ink-50 text-ink-500" : ""}`}
                    data-testid="bin-row"
                    data-few={few || undefined}
                  >
                    <td className={tdNum} data-field="lower">
                      {edgeText(b.lower, digits)}
                    </td>
                    <td className={tdNum} data-field="upper">
                      {edgeText(b.upper, digits)}
                    </td>
                    <td className={tdNum} data-field="slabs">
                      {b.slabs.toLocaleString("en-GB")}
                    </td>
                    <td className={tdNum} data-field="affected">
                      {b.affected.toLocaleString("en-GB")}
                    </td>
                    <td className={tdNum} data-field="rate">
                      {pct(b.rate)}
                    </td>
                    <td className={tdNum} data-field="ciLower">
                      {pct(b.ciLower)}
                    </td>
                    <td className={tdNum} data-field="ciUpper">
                      {pct(b.ciUpper)}
                    </td>
                  </tr>
                );
              })}
            </tbody>
          </table>
        </TableWrap>
        <p className="mt-1 text-xs text-ink-600">
          Bars span their bins; whiskers are Wilson 95 % intervals; the dashed curve is the fitted logistic model. Grey, hatched bars hold fewer than {minN}{" "}
          slabs.
        </p>
      </Card>
      {data.stratified ? <RateStratifiedCard data={data} stratified={data.stratified} digits={digits} minN={minN} /> : null}
      <Card title="Tests of association (every p two-sided)">
        <TableWrap
          caption={`n = ${data.slabs.toLocaleString("en-GB")} slabs (${data.affected.toLocaleString("en-GB")} affected, ${(data.slabs - data.affected).toLocaleString("en-GB")} sound) in every test.`}
        >
          <table className="w-full text-sm" data-testid="tests-table">
            <thead>
              <tr className="border-b-2 border-ink-200">
                <th className={th}>Test</th>
                <th className={thNum}>Statistic</th>
                <th className={thNum}>p</th>
                <th className={th}>Method</th>
              </tr>
            </thead>
            <tbody>
              {tests.map((t) => (
                <tr key={t.key} className="border-b border-ink-100 align-top" data-testid="test-row" data-test={t.key}>
                  <td className={`${td} font-semibold`}>{t.name}</td>
                  <td className={tdNum} data-field="statistic">
                    {t.stat}
                  </td>
                  <td className={tdNum} data-field="p">
                    {pValue(t.p)}
                  </td>
                  <td className={`${td} text-ink-700`}>{t.method}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </TableWrap>
      </Card>
      <Card title={`${data.variable.label} of affected and of sound slabs`}>
        <Suspense fallback={<Spinner label="Loading the chart" />}>
          <DistributionChart data={data} digits={digits} />
        </Suspense>
        <TableWrap
          caption={`Quantiles of type 7 (linear interpolation) on the grouped values. The strip shows up to 300 slabs of each group, taken evenly through its distribution.`}
        >
          <table className="mt-3 w-full text-sm" data-testid="distribution-table">
            <thead>
              <tr className="border-b-2 border-ink-200">
                <th className={th}>Slabs</th>
                <th className={thNum}>n</th>
                <th className={thNum}>Min</th>
                <th className={thNum}>Q1</th>
                <th className={thNum}>Median</th>
                <th className={thNum}>Q3</th>
                <th className={thNum}>Max</th>
                <th className={thNum}>Mean</th>
              </tr>
            </thead>
            <tbody>
              {(["affected", "sound"] as const).map((g) => {
                const d = data.distribution[g];
                return (
                  <tr key={g} className="border-b border-ink-100">
                    <td className={`${td} font-semibold`}>{g === "affected" ? "Affected" : "Sound"}</td>
                    <td className={tdNum}>{d.n.toLocaleString("en-GB")}</td>
                    {[d.min, d.q1, d.median, d.q3, d.max].map((v, i) => (
                      <td key={i} className={tdNum}>
                        {num(v, digits)}
                      </td>
                    ))}
                    <td className={tdNum}>{num(d.mean, digits + 1)}</td>
                  </tr>
                );
              })}
            </tbody>
          </table>
        </TableWrap>
      </Card>
    </div>
  );
}
