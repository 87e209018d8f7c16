import { lazy, Suspense } from "react";
import { Trans, useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import type { RateByVariable } from "@shared/api/reports";
import { Card } from "@/components/ui/card";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { useTerms } from "@/i18n/terms";
import { useLevelName } from "@/i18n/levels";
import { count, num, pct, pctRange, pValue, sig } from "@/lib/format";
import { ChangeSentence, ratioRange, SE_WORDS } from "./estimates";
import { inSentence } from "./report-params";
import { FEW_SLABS, FewMark } from "./small-n";
import { TableWrap, td, tdNum, th, thNum } from "./tables";

const StratumRatesChart = lazy(() => import("./charts/stratum-rates-chart"));

type Adjusted = NonNullable<RateByVariable["adjusted"]>;
type Stratified = NonNullable<RateByVariable["stratified"]>;
type SlopeFit = Adjusted["crude"];

/** "per 0.1 m/min" from a step and the variable's unit. */
export const perStepWords = (t: TFunction, step: number, unit: string) => {
  const n = num(step, step < 1 ? (String(step).split(".")[1]?.length ?? 0) : 0);
  return unit ? t("reports:rateAdjusted.perStepUnit", { step: n, unit }) : t("reports:rateAdjusted.perStep", { step: n });
};

/** One side of the comparison: the odds ratio per readable step, its interval and p, and per unit below. */
function Side({ title, fit, unit, prefix, strong }: { title: string; fit: SlopeFit; unit: string; prefix: string; strong?: boolean }) {
  const { t } = useTranslation("reports");
  const per = perStepWords(t, fit.perStep.step, unit);
  return (
    <div className={`rounded-md border px-4 py-3 ${strong ? "border-strand-600 bg-strand-50" : "border-ink-200 bg-ink-50"}`} data-testid={`${prefix}-side`}>
      <div className="text-xs font-semibold text-ink-700">{title}</div>
      <div className="mt-1 text-xs text-ink-600">{t("rbv.oddsRatioPer", { per })}</div>
      <div className="text-3xl font-bold tabular-nums text-ink-900" data-testid={`${prefix}-or`}>
        {sig(fit.perStep.oddsRatio, 3)}
      </div>
      <div className="text-sm tabular-nums text-ink-800">
        <Trans
          t={t}
          i18nKey="rateAdjusted.ciP"
          values={{ ci: ratioRange(fit.perStep.ciLower, fit.perStep.ciUpper), p: pValue(fit.p) }}
          components={{ 1: <span data-testid={`${prefix}-ci`} />, 2: <span data-testid={`${prefix}-p`} /> }}
        />
      </div>
      <div className="mt-1 text-xs tabular-nums text-ink-600">
        <Trans
          t={t}
          i18nKey={unit ? "rateAdjusted.perOneUnit" : "rateAdjusted.perOne"}
          values={{ unit, or: sig(fit.oddsRatio, 3), range: ratioRange(fit.oddsRatioCiLower, fit.oddsRatioCiUpper) }}
          components={{ 1: <span data-testid={`${prefix}-or-unit`} /> }}
        />
      </div>
    </div>
  );
}

/** The variable's odds ratio adjusted for the chosen terms, beside the crude one on the same slabs with the same SEs. */
export function RateAdjustedCard({ adjusted, variable, method }: { adjusted: Adjusted; variable: RateByVariable["variable"]; method?: string }) {
  const { t } = useTranslation("reports");
  const { variable: termWords } = useTerms();
  const label = termWords(variable.key);
  const unit = variable.unit === "–" ? "" : variable.unit;
  const terms = adjusted.adjustFor.map((term) => inSentence(termWords(term.key))).join(", ");
  const se = SE_WORDS[adjusted.seMethod];
  return (
    <Card title={t("rateAdjusted.title", { variable: label, terms })}>
      <div className="space-y-3" data-testid="rate-adjusted">
        {adjusted.reason ? (
          <Notice tone="caution" title={t("rateAdjusted.noEstimate")}>
            <span data-testid="adjusted-reason">{adjusted.reason}</span>
          </Notice>
        ) : null}
        <div className="grid gap-3 md:grid-cols-2">
          <Side title={t("rateAdjusted.crude", { variable: inSentence(label) })} fit={adjusted.crude} unit={unit} prefix="crude" />
          <Side title={t("rateAdjusted.adjusted", { terms })} fit={adjusted} unit={unit} prefix="adjusted" strong />
        </div>
        {adjusted.changeInEstimate.sentence ? <ChangeSentence>{adjusted.changeInEstimate.sentence}</ChangeSentence> : null}
        <p className="text-xs text-ink-700">
          <span className="font-semibold" data-testid="adjusted-se">
            {t(`rateAdjusted.seErrors.${adjusted.seMethod}`)}
          </span>
          {": "}
          <Trans
            t={t}
            i18nKey="rateAdjusted.seText"
            count={adjusted.heats}
            values={{ long: se.long, n: count(adjusted.slabs), affected: count(adjusted.affected), heats: count(adjusted.heats) }}
            components={{ 1: <span data-testid="adjusted-slabs" /> }}
          />
        </p>
        {method ? <p className="text-xs text-ink-600">{method.charAt(0).toUpperCase() + method.slice(1)}.</p> : null}
      </div>
    </Card>
  );
}

/** Rates and the variable's odds ratio within each level of the split (grade family, strand …). */
export function RateStratifiedCard({ data, stratified, digits, minN }: { data: RateByVariable; stratified: Stratified; digits: number; minN: number }) {
  const { t } = useTranslation("reports");
  const { variable: termWords } = useTerms();
  const levelName = useLevelName();
  const label = termWords(data.variable.key);
  const byLabel = termWords(stratified.by.key);
  const by = inSentence(byLabel);
  const unit = data.variable.unit === "–" ? "" : data.variable.unit;
  const step = stratified.strata[0]?.logistic.perStep.step;
  const per = step !== undefined ? perStepWords(t, step, unit) : "";
  const withNotes = stratified.strata.some((s) => s.logistic.reason);
  return (
    <Card title={t("rateStratified.title", { variable: label, by })}>
      <Suspense fallback={<Spinner label={t("charts.loading")} />}>
        <StratumRatesChart data={data} stratified={stratified} digits={digits} />
      </Suspense>
      <p className="mt-1 text-xs text-ink-600">{t("rateStratified.curves", { by, minN })}</p>
      <TableWrap caption={t(`rateStratified.caption.${stratified.seMethod}`, { variable: inSentence(label), by, per })}>
        <table className="mt-3 w-full text-sm" data-testid="strata-table">
          <thead>
            <tr className="border-b-2 border-ink-200">
              <th className={th}>{byLabel}</th>
              <th className={thNum}>{t("cols.slabsN")}</th>
              <th className={thNum}>{t("cols.affected")}</th>
              <th className={thNum}>{t("cols.shareAffected")}</th>
              <th className={thNum}>{t("cols.ci")}</th>
              <th className={thNum}>{t("rbv.oddsRatioPer", { per })}</th>
              <th className={thNum}>{t("cols.ci")}</th>
              <th className={thNum}>{t("cols.p")}</th>
              {withNotes ? <th className={th}>{t("rateStratified.note")}</th> : null}
            </tr>
          </thead>
          <tbody>
            {stratified.strata.map((s) => {
              const few = s.slabs < FEW_SLABS;
              return (
                <tr key={s.label} className={`border-b border-ink-100 align-top ${few ? "bg-ink-50 text-ink-500" : ""}`} data-testid="stratum-row">
                  <td className={`${td} font-semibold`}>
                    <span data-field="label">{levelName(s.label)}</span>
                    {few ? <FewMark /> : null}
                  </td>
                  <td className={tdNum} data-field="slabs">
                    {count(s.slabs)}
                  </td>
                  <td className={tdNum} data-field="affected">
                    {count(s.affected)}
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
          {t("rateStratified.notShown", {
            list: stratified.notShown.map((s) => t("rateStratified.notShownItem", { label: levelName(s.label), n: count(s.slabs) })).join(", "),
          })}
        </p>
      ) : null}
    </Card>
  );
}
