import { useMemo } from "react";
import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import type { RiskDrift } from "@shared/api/risk-drift";
import { INK, SERIES_COLORS } from "@/lib/chart-theme";
import { count, pct } from "@/lib/format";
import { esc, pctAxis, tooltipBase } from "@/features/reports/components/charts/chart-parts";
import { ReportChart } from "@/features/reports/components/charts/report-chart";

/** How a month is marked on the chart: a shape and a word (its key under risk.drift.judgement), never colour alone. */
export const monthMark = (m: RiskDrift["months"][number]) =>
  m.drifted ? { symbol: "triangle", word: "drifted" } : m.judged ? { symbol: "circle", word: "within" } : { symbol: "emptyCircle", word: "tooFew" };

const judgement = (t: TFunction, m: RiskDrift["months"][number]) => t(`risk.drift.judgement.${monthMark(m).word}`);

/**
 * Predicted against observed share of slabs with the defect, month by month on the slabs the model
 * never saw: the predicted rate as a dashed line, the observed share as marks whose shape says how
 * the month was judged (triangle: drifted; disc: within the limits; a grey ring off the line: too
 * few slabs to judge).
 */
export function DriftChart({ drift }: { drift: RiskDrift }) {
  const { t } = useTranslation("process");
  const option = useMemo(() => {
    const months = drift.months;
    const predictedName = t("risk.drift.chart.predicted");
    const observedName = t("risk.drift.chart.observed");
    const tooFewName = t("risk.drift.chart.tooFew");
    const top = Math.max(0.02, ...months.map((m) => Math.max(m.predicted, m.observed))) * 1.15;
    return {
      animation: false,
      grid: { left: 64, right: 24, top: 48, bottom: 56 },
      legend: { top: 4, data: [predictedName, observedName, ...(months.some((m) => !m.judged) ? [tooFewName] : [])] },
      tooltip: {
        ...tooltipBase,
        trigger: "axis",
        formatter: (ps: { dataIndex: number }[]) => {
          const m = months[ps[0]?.dataIndex ?? 0];
          if (!m) return "";
          return (
            `<b>${esc(m.month)}</b>${m.provisional ? esc(t("risk.drift.chart.stillRunning")) : ""}<br/>` +
            `${esc(t("risk.drift.chart.predictedObserved", { predicted: pct(m.predicted, 1), observed: pct(m.observed, 1) }))}<br/>` +
            `${esc(t("risk.drift.chart.affected", { count: m.slabs, affected: count(m.affected), n: count(m.slabs) }))}<br/>` +
            `${esc(judgement(t, m))}`
          );
        },
      },
      xAxis: { type: "category", data: months.map((m) => m.month), name: t("risk.drift.chart.xAxis"), nameLocation: "middle", nameGap: 34 },
      yAxis: {
        type: "value",
        min: 0,
        max: top,
        name: t("risk.drift.chart.yAxis"),
        nameLocation: "middle",
        nameRotate: 90,
        nameGap: 48,
        axisLabel: { formatter: pctAxis(top < 0.05 ? 1 : 0), showMaxLabel: false },
      },
      series: [
        {
          type: "line",
          name: predictedName,
          data: months.map((m) => m.predicted),
          symbol: "none",
          lineStyle: { type: "dashed", width: 2, color: INK[600] },
          itemStyle: { color: INK[600] },
        },
        {
          type: "line",
          name: observedName,
          // A month with too few slabs is a ring off the line: its share says little.
          data: months.map((m) => (m.judged ? { value: m.observed, symbol: monthMark(m).symbol, symbolSize: m.drifted ? 16 : 10 } : null)),
          connectNulls: false,
          lineStyle: { width: 2, color: SERIES_COLORS[0] },
          itemStyle: { color: SERIES_COLORS[0] },
        },
        {
          type: "scatter",
          name: tooFewName,
          data: months.map((m) => (m.judged ? null : m.observed)),
          symbol: "emptyCircle",
          symbolSize: 10,
          itemStyle: { color: INK[600] },
          tooltip: { show: false },
        },
      ],
    };
  }, [drift, t]);
  return <ReportChart option={option} height={300} testId="drift-chart" label={t("risk.drift.chart.label")} />;
}
