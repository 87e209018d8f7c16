import { lazy, Suspense } from "react";
import type { RateByVariable } from "@shared/api/reports";
import { Card } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { lowerFirst, num, pct, pctRange, plural, pValue, sig } from "@/lib/format";
import { ChangeSentence, ratioRange, SE_WORDS } from "./estimates";
import { FEW_SLABS, FewMark } from "./small-n";
import { TableWrap, td, tdNum, th, thNum } from "./tables";

const StratumRatesChart = lazy(() => import("./charts/stratum-rates-chart"));

type Adjusted = NonNullable<RateByVariable["adjusted"]>;
type Stratified = NonNullable<RateByVariable["stratified"]>;
type SlopeFit = Adjusted["crude"];

/** "per 0.1 m/min" from a step and the variable's unit. */
const perStepWords = (step: number, unit: string) => `per ${num(step, step < 1 ? (String(step).split(".")[1]?.length ?? 0) : 0)}${unit ? ` ${unit}` : ""}`;

/** One side of the comparison: the odds ratio per readable step, its interval and p, and per unit below. */
function Side({ title, fit, unit, prefix, strong }: { title: string; fit: SlopeFit; unit: string; prefix: string; strong?: boolean }) {
  const per = perStepWords(fit.perStep.step, unit);
  return (
    <div className={`rounded-md border px-4 py-3 ${strong ? "border-strand-600 bg-strand-50" : "border-ink-200 bg-ink-50"}`} data-testid={`${prefix}-side`}>
      <div className="text-xs font-semibold text-ink-700">{title}</div>
      <div className="mt-1 text-xs text-ink-600">Odds ratio {per}</div>
      <div className="text-3xl font-bold tabular-nums text-ink-900" data-testid={`${prefix}-or`}>
        {sig(fit.perStep.oddsRatio, 3)}
      </div>
      <div className="text-sm tabular-nums text-ink-800">
        95 % CI <span data-testid={`${prefix}-ci`}>{ratioRange(fit.perStep.ciLower, fit.perStep.ciUpper)}</span> · p{" "}
        <span data-testid={`${prefix}-p`}>{pValue(fit.p)}</span>
      </div>
      <div className="mt-1 text-xs tabular-nums text-ink-600">
        per 1{unit ? ` ${unit}` : " unit"}: <span data-testid={`${prefix}-or-unit`}>{sig(fit.oddsRatio, 3)}</span> (
        {ratioRange(fit.oddsRatioCiLower, fit.oddsRatioCiUpper)})
      </div>
    </div>
  );
}

/** The variable's odds ratio adjusted for the chosen terms, beside the crude one on the same slabs with the same SEs. */
export function RateAdjustedCard({ adjusted, variable, method }: { adjusted: Adjusted; variable: RateByVariable["variable"]; method?: string }) {
  const unit = variable.unit === "–" ? "" : variable.unit;
  const terms = adjusted.adjustFor.map((t) => lowerFirst(t.label)).join(", ");
  const se = SE_WORDS[adjusted.seMethod];
  return (
    <Card title={`${variable.label}: crude and adjusted for ${terms}`}>
      <div className="space-y-3" data-testid="rate-adjusted">
        {adjusted.reason ? (
          <Notice tone="caution" title="No adjusted estimate">
            <span data-testid="adjusted-reason">{adjusted.reason}</span>
          </Notice>
        ) : null}
        <div className="grid gap-3 md:grid-cols-2">
          <Side title={`Crude: ${lowerFirst(variable.label)} alone`} fit={adjusted.crude} unit={unit} prefix="crude" />
          <Side title={`Adjusted for ${terms}`} fit={adjusted} unit={unit} prefix="adjusted" strong />
        </div>
        {adjusted.changeInEstimate.sentence ? <ChangeSentence>{adjusted.changeInEstimate.sentence}</ChangeSentence> : null}
        <p className="text-xs text-ink-700">
          <span className="font-semibold" data-testid="adjusted-se">
            {se.short} standard errors
          </span>
          {": "}
          {se.long} n = <span data-testid="adjusted-slabs">{adjusted.slabs.toLocaleString("en-GB")}</span> slabs ({adjusted.affected.toLocaleString("en-GB")}{" "}
          affected) from {plural(adjusted.heats, "heat")}; both answers use the same slabs and the same kind of standard errors. Wald 95 % intervals, two-sided
          p.
        </p>
        {method ? <p className="text-xs text-ink-600">{method.charAt(0).toUpperCase() + method.slice(1)}.</p> : null}
      </div>
    </Card>
  );
}

/** Rates and the variable's odds ratio within each level of the split (grade family, strand …). */
export function RateStratifiedCard({ data, stratified, digits, minN }: { data: RateByVariable; stratified: Stratified; digits: number; minN: number }) {
  const by = lowerFirst(stratified.by.label);
  const unit = data.variable.unit === "–" ? "" : data.variable.unit;
  const step = stratified.strata[0]?.logistic.perStep.step;
  const per = step !== undefined ? perStepWords(step, unit) : "";
  const withNotes = stratified.strata.some((s) => s.logistic.reason);
  return (
    <Card title={`${data.variable.label} within each ${by}`}>
      <Suspense fallback={<Spinner label="Loading the chart" />}>
        <StratumRatesChart data={data} stratified={stratified} digits={digits} />
      </Suspense>
      <p className="mt-1 text-xs text-ink-600">
        The bins of the whole, one curve per {by}, each with its own marker and line and its name at its end. A bin where a {by} holds fewer than {minN} of its
        slabs is left out of that curve.
      </p>
      <TableWrap
        caption={`Odds ratio of ${lowerFirst(data.variable.label)} alone within each ${by}, ${per}, with ${SE_WORDS[stratified.seMethod].short.toLowerCase()} standard errors; Wald 95 % intervals, two-sided p. Share affected with its Wilson 95 % interval.`}
      >
        <table className="mt-3 w-full text-sm" data-testid="strata-table">
          <thead>
            <tr className="border-b-2 border-ink-200">
              <th className={th}>{stratified.by.label}</th>
              <th className={thNum}>Slabs (n)</th>
              <th className={thNum}>Affected</th>
              <th className={thNum}>Share affected</th>
              <th className={thNum}>95 % CI</th>
              <th className={thNum}>Odds ratio {per}</th>
              <th className={thNum}>95 % CI</th>
              <th className={thNum}>p</th>
              {withNotes ? <th className={th}>Note</th> : null}
            </tr>
          </thead>
          <tbody>
            {stratified.strata.map((s) => {
              const few = s.slabs < FEW_SLABS;
              return (
                <tr key={s.label} className={`border-b border-ink-100 align-top ${few ? "bg-ink-50 text-ink-500" : ""}`} data-testid="stratum-row">
                  <td className={`${td} font-semibold`}>
                    <span data-field="label">{s.label}</span>
                    {few ? <FewMark /> : null}
                  </td>
                  <td className={tdNum} data-field="slabs">
                    {s.slabs.toLocaleString("en-GB")}
                  </td>
                  <td className={tdNum} data-field="affected">
                    {s.affected.toLocaleString("en-GB")}
                  </td>
                  <td className={tdNum} data-field="rate">
                    {pct(s.rate)}
                  </td>
                  <td className={tdNum} data-field="ci">
                    {pctRange(s.ciLower, s.ciUpper)}
                  </td>
                  <td className={`${tdNum} font-semibold`} data-field="or">
                    {sig(s.logistic.perStep.oddsRatio, 3)}
                  </td>
                  <td className={tdNum} data-field="orCi">
                    {ratioRange(s.logistic.perStep.ciLower, s.logistic.perStep.ciUpper)}
                  </td>
                  <td className={tdNum} data-field="p">
                    {pValue(s.logistic.p)}
                  </td>
                  {withNotes ? <td className={`${td} text-xs`}>{s.logistic.reason ?? ""}</td> : null}
                </tr>
              );
            })}
          </tbody>
        </table>
      </TableWrap>
      {stratified.notShown.length ? (
        <p className="mt-2 text-xs text-ink-600" data-testid="strata-not-shown">
          Not drawn (beyond the twelve largest): {stratified.notShown.map((s) => `${s.label} (n = ${s.slabs.toLocaleString("en-GB")})`).join(", ")}.
        </p>
      ) : null}
    </Card>
  );
}
