import { lazy, Suspense } from "react";
import { useQuery } from "@tanstack/react-query";
import type { RiskDrift } from "@shared/api/risk-drift";
import { Spinner } from "@/components/ui/logo";
import { Notice } from "@/components/ui/notice";
import { date, dateTime, num, pct } from "@/lib/format";
import { riskDriftKeys } from "../api/drift.queries";

const DriftChart = lazy(() => import("./drift-chart").then((m) => ({ default: m.DriftChart })));

type Month = RiskDrift["months"][number];

/** Three decimals, so an interval end near 0 reads as 0.000 rather than in powers of ten. */
const d3 = (v: number | null) => num(v, 3);

/** An estimate over its 95 % interval; where it is not defined, the reason in words. */
function Estimate({ value, lower, upper, reason }: { value: number | null; lower: number | null; upper: number | null; reason: string | null }) {
  if (value === null) return <span className="text-xs text-ink-700">— {reason ?? "not defined"}</span>;
  return (
    <>
      <div>{d3(value)}</div>
      <div className="whitespace-nowrap text-xs text-ink-600">
        {lower !== null && upper !== null ? `${d3(lower)} to ${d3(upper)}` : (reason ?? "no interval")}
      </div>
    </>
  );
}

/** The month's judgement in words, with a mark that is not colour alone. */
function Judgement({ m }: { m: Month }) {
  const [mark, word, cls] = m.drifted
    ? ["▲", "Drifted", "font-semibold text-alarm-700"]
    : m.judged
      ? ["●", "Within the limits", "text-ok-700"]
      : ["○", "Too few slabs to judge", "text-ink-600"];
  return (
    <div>
      <span className={`whitespace-nowrap ${cls}`} data-judgement={m.drifted ? "drifted" : m.judged ? "within" : "too-few"}>
        <span aria-hidden>{mark}</span> {word}
      </span>
      {m.provisional ? <span className="ml-1 text-xs text-ink-600">(month still running)</span> : null}
      {m.drifted ? <div className="mt-0.5 text-xs text-ink-800">{m.reason}</div> : null}
    </div>
  );
}

/**
 * A model version's drift on the slabs it never saw: predicted against observed share per month,
 * calibration-in-the-large and AUC with their intervals, and which months drifted, in words.
 */
export function DriftPanel({ modelId }: { modelId: number }) {
  const q = useQuery(riskDriftKeys.detail(modelId));
  if (q.isPending) return <Spinner label="Checking the months since training" />;
  if (q.isError) return <Notice tone="error">{q.error.message}</Notice>;
  const d = q.data;
  const drifted = d.months.filter((m) => m.drifted);
  return (
    <div className="space-y-4" data-testid="drift-panel">
      {d.months.length === 0 ? (
        <p className="text-ink-700">
          No slab cast since {date(d.since)} (the newest slab this version was trained or tested on) has passed the yard yet, so there is nothing to compare.
        </p>
      ) : (
        <>
          <p className="text-sm text-ink-800">
            Slabs cast since {date(d.since)} that the model never saw, once the yard has judged them: {num(d.slabs)} in {d.months.length} month
            {d.months.length === 1 ? "" : "s"}.
          </p>
          {drifted.length ? (
            <Notice tone="caution" title={`Drifted in ${drifted.map((m) => m.month).join(", ")}`}>
              The predicted rates or the ranking no longer match what the yard finds. Train a new version on recent slabs and check its validation before
              switching it on. A risk orders the inspection work; it never clears a slab.
            </Notice>
          ) : (
            <Notice tone="info" title="No month has drifted">
              Every month with enough slabs lies within the limits below.
            </Notice>
          )}
          <Suspense fallback={<Spinner label="Loading the chart" />}>
            <DriftChart drift={d} />
          </Suspense>
          <div className="overflow-x-auto">
            <table className="w-full text-sm" data-testid="drift-months">
              <thead>
                <tr className="border-b-2 border-ink-200 text-left text-xs uppercase tracking-wide text-ink-600">
                  <th className="px-1 py-2 lg:px-2">Month</th>
                  <th className="px-1 py-2 text-right lg:px-2">Slabs</th>
                  <th className="px-1 py-2 text-right lg:px-2">With the defect</th>
                  <th className="px-1 py-2 text-right lg:px-2">Predicted</th>
                  <th className="px-1 py-2 text-right lg:px-2">Observed</th>
                  <th
                    className="px-1 py-2 text-right lg:px-2"
                    title="calibration-in-the-large with its 95 % interval; 0: the predicted rate is right on average"
                  >
                    Calibration in the large
                  </th>
                  <th className="px-1 py-2 text-right lg:px-2" title="ROC AUC with its 95 % DeLong interval">
                    AUC
                  </th>
                  <th className="px-1 py-2 lg:px-2">Judgement</th>
                  <th className="px-1 py-2 lg:px-2">E-mailed</th>
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
                    <td className="whitespace-nowrap px-1 py-2 lg:px-2">{m.alertedAt ? dateTime(m.alertedAt) : "—"}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        </>
      )}
      <details className="text-sm">
        <summary className="cursor-pointer font-semibold text-ink-800">How drift is judged</summary>
        <p className="mt-2 text-ink-800">{d.method}</p>
        <p className="mt-2 text-ink-800">
          Thresholds: at least {d.thresholds.minSlabs} slabs and {d.thresholds.minAffected} with the defect in a month; |calibration in the large| above ln{" "}
          {d.thresholds.oddsFactor} = {d3(d.thresholds.citlLimit)} with its {Math.round(d.thresholds.confidence * 100)} % interval excluding 0; or the AUC
          interval wholly below{" "}
          {d.thresholds.validationAucCiLower === null ? "the validation interval (not available for this version)" : d3(d.thresholds.validationAucCiLower)}, the
          lower end of this version's validation AUC interval. The quality engineers are e-mailed once per drifted month.
        </p>
      </details>
    </div>
  );
}
