import { lazy, Suspense } from "react";
import { useQuery } from "@tanstack/react-query";
import { useTranslation } from "react-i18next";
import type { RiskDrift } from "@shared/api/risk-drift";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { count, DASH, date, dateTime, num, pct, sig } from "@/lib/format";
import { riskDriftKeys } from "../api/drift.queries";

const DriftChart = lazy(() => import("./drift-chart").then((m) => ({ default: m.DriftChart })));

type Month = RiskDrift["months"][number];

/** Three decimals, so an interval end near 0 reads as 0.000 rather than in powers of ten. */
const d3 = (v: number | null) => num(v, 3);

/** An estimate over its 95 % interval; where it is not defined, the reason in words. */
function Estimate({ value, lower, upper, reason }: { value: number | null; lower: number | null; upper: number | null; reason: string | null }) {
  const { t } = useTranslation("process");
  if (value === null) return <span className="text-xs text-ink-700">— {reason ?? t("risk.drift.notDefined")}</span>;
  return (
    <>
      <div>{d3(value)}</div>
      <div className="whitespace-nowrap text-xs text-ink-600">
        {lower !== null && upper !== null ? t("risk.drift.range", { lower: d3(lower), upper: d3(upper) }) : (reason ?? t("risk.drift.noInterval"))}
      </div>
    </>
  );
}

/** The month's judgement in words, with a mark that is not colour alone. */
function Judgement({ m }: { m: Month }) {
  const { t } = useTranslation("process");
  const [mark, word, cls] = m.drifted
    ? ["▲", t("risk.drift.judgement.drifted"), "font-semibold text-alarm-700"]
    : m.judged
      ? ["●", t("risk.drift.judgement.within"), "text-ok-700"]
      : ["○", t("risk.drift.judgement.tooFew"), "text-ink-600"];
  return (
    <div>
      <span className={`whitespace-nowrap ${cls}`} data-judgement={m.drifted ? "drifted" : m.judged ? "within" : "too-few"}>
        <span aria-hidden>{mark}</span> {word}
      </span>
      {m.provisional ? <span className="ml-1 text-xs text-ink-600">{t("risk.drift.monthRunning")}</span> : null}
      {m.drifted ? <div className="mt-0.5 text-xs text-ink-800">{m.reason}</div> : null}
    </div>
  );
}

/**
 * A model version's drift on the slabs it never saw: predicted against observed share per month,
 * calibration-in-the-large and AUC with their intervals, and which months drifted, in words.
 */
export function DriftPanel({ modelId }: { modelId: number }) {
  const { t } = useTranslation("process");
  const q = useQuery(riskDriftKeys.detail(modelId));
  if (q.isPending) return <Spinner label={t("risk.drift.checking")} />;
  if (q.isError) return <Notice tone="error">{q.error.message}</Notice>;
  const d = q.data;
  const drifted = d.months.filter((m) => m.drifted);
  return (
    <div className="space-y-4" data-testid="drift-panel">
      {d.months.length === 0 ? (
        <p className="text-ink-700">{t("risk.drift.nothing", { since: date(d.since) })}</p>
      ) : (
        <>
          <p className="text-sm text-ink-800">
            {t("risk.drift.since", { since: date(d.since), slabs: num(d.slabs), count: d.months.length, n: count(d.months.length) })}
          </p>
          {drifted.length ? (
            <Notice tone="caution" title={t("risk.drift.driftedIn", { months: drifted.map((m) => m.month).join(", ") })}>
              {t("risk.drift.driftedText")}
            </Notice>
          ) : (
            <Notice tone="info" title={t("risk.drift.noneDrifted")}>
              {t("risk.drift.noneDriftedText")}
            </Notice>
          )}
          <Suspense fallback={<Spinner label={t("ui.loadingChart")} />}>
            <DriftChart drift={d} />
          </Suspense>
          <div className="overflow-x-auto">
            <table className="w-full text-sm" data-testid="drift-months">
              <thead>
                <tr className="border-b-2 border-ink-200 text-left text-xs uppercase tracking-wide text-ink-600">
                  <th className="px-1 py-2 lg:px-2">{t("risk.drift.col.month")}</th>
                  <th className="px-1 py-2 text-right lg:px-2">{t("risk.drift.col.slabs")}</th>
                  <th className="px-1 py-2 text-right lg:px-2">{t("risk.drift.col.affected")}</th>
                  <th className="px-1 py-2 text-right lg:px-2">{t("risk.drift.col.predicted")}</th>
                  <th className="px-1 py-2 text-right lg:px-2">{t("risk.drift.col.observed")}</th>
                  <th className="hyphens-auto break-words px-1 py-2 text-right lg:px-2" title={t("risk.drift.col.citlTitle")}>
                    {t("risk.drift.col.citl")}
                  </th>
                  <th className="px-1 py-2 text-right lg:px-2" title={t("risk.drift.col.aucTitle")}>
                    {t("risk.drift.col.auc")}
                  </th>
                  <th className="px-1 py-2 lg:px-2">{t("risk.drift.col.judgement")}</th>
                  <th className="px-1 py-2 lg:px-2">{t("risk.drift.col.emailed")}</th>
                </tr>
              </thead>
              <tbody>
                {d.months.map((m) => (
                  <tr key={m.month} className="border-b border-ink-100 align-top" data-testid="drift-month" data-month={m.month}>
                    <td className="whitespace-nowrap px-1 py-2 font-semibold lg:px-2">{m.month}</td>
                    <td className="px-1 py-2 text-right tabular-nums lg:px-2">{num(m.slabs)}</td>
                    <td className="px-1 py-2 text-right tabular-nums lg:px-2">{num(m.affected)}</td>
                    <td className="px-1 py-2 text-right tabular-nums lg:px-2">{pct(m.predicted, 1)}</td>
                    <td className="px-1 py-2 text-right tabular-nums lg:px-2">{pct(m.observed, 1)}</td>
                    <td className="px-1 py-2 text-right tabular-nums lg:px-2" title={m.citlReason ?? undefined}>
                      <Estimate value={m.citl} lower={m.citlCiLower} upper={m.citlCiUpper} reason={m.citlReason} />
                    </td>
                    <td className="px-1 py-2 text-right tabular-nums lg:px-2" title={m.aucReason ?? undefined}>
                      <Estimate value={m.auc} lower={m.aucCiLower} upper={m.aucCiUpper} reason={m.aucReason} />
                    </td>
                    <td className="px-1 py-2 lg:px-2">
                      <Judgement m={m} />
                    </td>
                    <td className="whitespace-nowrap px-1 py-2 lg:px-2">{m.alertedAt ? dateTime(m.alertedAt) : DASH}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        </>
      )}
      <details className="text-sm">
        <summary className="cursor-pointer font-semibold text-ink-800">{t("risk.drift.howJudged")}</summary>
        <p className="mt-2 text-ink-800">{d.method}</p>
        <p className="mt-2 text-ink-800">
          {t("risk.drift.thresholds", {
            minSlabs: count(d.thresholds.minSlabs),
            minAffected: count(d.thresholds.minAffected),
            oddsFactor: sig(d.thresholds.oddsFactor, 6),
            citlLimit: d3(d.thresholds.citlLimit),
            confidence: Math.round(d.thresholds.confidence * 100),
            aucLower: d.thresholds.validationAucCiLower === null ? t("risk.drift.validationNotAvailable") : d3(d.thresholds.validationAucCiLower),
          })}
        </p>
      </details>
    </div>
  );
}
