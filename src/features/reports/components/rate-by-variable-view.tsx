import { lazy, Suspense } from "react";
import { useTranslation } from "react-i18next";
import type { RateByVariable } from "@shared/api/reports";
import { Card } from "@/components/ui/card";
import { Figure } from "./figure";
import { Spinner } from "@/components/ui/logo";
import { useTerms } from "@/i18n/terms";
import { count, num, pct, pValue, sig } from "@/lib/format";
import { inSentence } from "./report-params";
import { FEW_SLABS, SmallNWarning } from "./small-n";
import { td, tdNum, th, thNum, TableWrap } from "./tables";
import { perStepWords, RateAdjustedCard, RateStratifiedCard } from "./rate-adjusted";

const RateBinsChart = lazy(() => import("./charts/rate-bins-chart"));
const DistributionChart = lazy(() => import("./charts/distribution-chart"));

const capitalise = (s: string) => s.charAt(0).toUpperCase() + s.slice(1);

/** Bin edges carry one decimal more than the variable is shown with: the resolution values are grouped at. */
export const edgeText = (v: number, digits: number) => num(v, digits + 1);

export function RateByVariableView({ data, digits, minN }: { data: RateByVariable; digits: number; minN: number }) {
  const { t } = useTranslation("reports");
  const { variable } = useTerms();
  const label = variable(data.variable.key);
  const u = data.variable.unit === "–" ? "" : data.variable.unit;
  const perUnit = u ? t("rbv.perOne", { unit: u }) : t("rbv.perUnit");
  // Led by the readable step (per 0.01 wt %, per 100 A), as the adjusted card and the screening are; per one unit beside it.
  const perStep = perStepWords(t, data.logistic.perStep.step, u);
  const orCi = (lo: number | null | undefined, hi: number | null | undefined) => t("rbv.ci", { lower: sig(lo, 3), upper: sig(hi, 3) });
  const { spearman, pointBiserial, logistic, mannWhitney, methods } = data;
  const tests = [
    { key: "spearman", name: t("rbv.spearman"), stat: sig(spearman.rho, 3), p: spearman.p, method: methods.spearman },
    { key: "pointBiserial", name: t("rbv.pointBiserial"), stat: sig(pointBiserial.r, 3), p: pointBiserial.p, method: methods.pointBiserial },
    {
      key: "logistic",
      name: t("rbv.logistic", { per: perStep }),
      stat: `${sig(logistic.perStep.oddsRatio, 3)} (${orCi(logistic.perStep.ciLower, logistic.perStep.ciUpper)}); ${perUnit}: ${sig(logistic.oddsRatio, 3)} (${orCi(logistic.oddsRatioCiLower, logistic.oddsRatioCiUpper)})`,
      p: logistic.p,
      method: t(logistic.converged ? "rbv.logisticMethod" : "rbv.logisticMethodNotConverged", {
        method: methods.logistic,
        intercept: sig(logistic.intercept, 4),
        slope: sig(logistic.slope, 4),
      }),
    },
    { key: "mannWhitney", name: t("rbv.mannWhitney"), stat: num(mannWhitney.u, 0), p: mannWhitney.p, method: methods.mannWhitney },
  ];
  return (
    <div className="space-y-5">
      <div className="grid grid-cols-2 gap-3 md:grid-cols-4" data-testid="rate-summary">
        <Figure
          label={t("rbv.slabsWithValue")}
          value={<span data-testid="summary-slabs">{count(data.slabs)}</span>}
          note={data.slabsWithoutValue ? t("rbv.withoutValue", { count: data.slabsWithoutValue, n: count(data.slabsWithoutValue) }) : t("rbv.everySlab")}
        />
        <Figure
          label={t("cols.shareAffected")}
          value={pct(data.slabs ? data.affected / data.slabs : null)}
          note={<span data-testid="summary-affected">{t("charts.affectedOfN", { affected: count(data.affected), n: count(data.slabs) })}</span>}
        />
        <Figure
          label={t("rbv.oddsRatioPer", { per: perStep })}
          value={<span data-testid="summary-or">{sig(logistic.perStep.oddsRatio, 3)}</span>}
          note={t("rbv.ciP", { ci: orCi(logistic.perStep.ciLower, logistic.perStep.ciUpper), p: pValue(logistic.p) })}
        />
        <Figure label={t("rbv.spearman")} value={sig(spearman.rho, 2)} note={t("rbv.pN", { p: pValue(spearman.p), n: count(data.slabs) })} />
      </div>
      <SmallNWarning
        // Not only small counts: merged empty spans and slabs without a value are said here too.
        title={t("rbv.aboutBins")}
        notes={[
          // The sentence and the missing adjusted estimate are said in the adjusted card.
          // (the server words the missing estimate around its reason, in the reader's language).
          ...data.notes.filter((n) => n !== data.adjusted?.changeInEstimate.sentence && n !== data.adjusted?.reasonNote),
          // The server warns below 10 affected slabs; a logistic fit and its odds ratio stay rough well above that.
          data.affected >= 10 && data.affected < FEW_SLABS ? t("rbv.fewAffected", { n: data.affected }) : "",
        ]}
      />
      {data.adjusted ? <RateAdjustedCard adjusted={data.adjusted} variable={data.variable} method={methods.adjusted} /> : null}
      <Card title={t("rbv.rateAgainst", { variable: inSentence(label) })}>
        <Suspense fallback={<Spinner label={t("charts.loading")} />}>
          <RateBinsChart data={data} digits={digits} minN={minN} />
        </Suspense>
        <TableWrap caption={t("rbv.binsCaption", { bins: methods.bins, grouping: capitalise(methods.grouping ?? "") })}>
          <table className="mt-3 w-full text-sm" data-testid="bins-table">
            <thead>
              <tr className="border-b-2 border-ink-200">
                <th className={thNum}>{u ? t("rbv.fromUnit", { unit: u }) : t("rbv.from")}</th>
                <th className={thNum}>{u ? t("rbv.toUnit", { unit: u }) : t("rbv.to")}</th>
                <th className={thNum}>{t("cols.slabsN")}</th>
                <th className={thNum}>{t("cols.affected")}</th>
                <th className={thNum}>{t("cols.shareAffected")}</th>
                <th className={thNum}>{t("rbv.ciLower")}</th>
                <th className={thNum}>{t("rbv.ciUpper")}</th>
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
                      {count(b.slabs)}
                    </td>
                    <td className={tdNum} data-field="affected">
                      {count(b.affected)}
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
        <p className="mt-1 text-xs text-ink-600">{t("rbv.binsNote", { minN })}</p>
      </Card>
      {data.stratified ? <RateStratifiedCard data={data} stratified={data.stratified} digits={digits} minN={minN} /> : null}
      <Card title={t("rbv.testsTitle")}>
        <TableWrap caption={t("rbv.testsCaption", { n: count(data.slabs), affected: count(data.affected), sound: count(data.slabs - data.affected) })}>
          <table className="w-full text-sm" data-testid="tests-table">
            <thead>
              <tr className="border-b-2 border-ink-200">
                <th className={th}>{t("rbv.test")}</th>
                <th className={thNum}>{t("rbv.statistic")}</th>
                <th className={thNum}>{t("cols.p")}</th>
                <th className={th}>{t("rbv.method")}</th>
              </tr>
            </thead>
            <tbody>
              {tests.map((x) => (
                <tr key={x.key} className="border-b border-ink-100 align-top" data-testid="test-row" data-test={x.key}>
                  <td className={`${td} font-semibold`}>{x.name}</td>
                  <td className={tdNum} data-field="statistic">
                    {x.stat}
                  </td>
                  <td className={tdNum} data-field="p">
                    {pValue(x.p)}
                  </td>
                  <td className={`${td} text-ink-700`}>{x.method}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </TableWrap>
      </Card>
      <Card title={t("rbv.distributionTitle", { variable: label })}>
        <Suspense fallback={<Spinner label={t("charts.loading")} />}>
          <DistributionChart data={data} digits={digits} />
        </Suspense>
        <TableWrap caption={t("rbv.distributionCaption")}>
          <table className="mt-3 w-full text-sm" data-testid="distribution-table">
            <thead>
              <tr className="border-b-2 border-ink-200">
                <th className={th}>{t("rbv.slabs")}</th>
                <th className={thNum}>{t("rbv.n")}</th>
                <th className={thNum}>{t("rbv.min")}</th>
                <th className={thNum}>{t("rbv.q1")}</th>
                <th className={thNum}>{t("rbv.median")}</th>
                <th className={thNum}>{t("rbv.q3")}</th>
                <th className={thNum}>{t("rbv.max")}</th>
                <th className={thNum}>{t("rbv.mean")}</th>
              </tr>
            </thead>
            <tbody>
              {(["affected", "sound"] as const).map((g) => {
                const d = data.distribution[g];
                return (
                  <tr key={g} className="border-b border-ink-100">
                    <td className={`${td} font-semibold`}>{g === "affected" ? t("cols.affected") : t("rbv.sound")}</td>
                    <td className={tdNum}>{count(d.n)}</td>
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
