import { useMemo } from "react";
import type { RiskDrift } from "@shared/api/risk-drift";
import { INK, SERIES_COLORS } from "@/lib/chart-theme";
import { pct } from "@/lib/format";
import { esc, pctAxis, tooltipBase } from "@/features/reports/components/charts/chart-parts";
import { ReportChart } from "@/features/reports/components/charts/report-chart";

/** How a month is marked on the chart: a shape and a word, never colour alone. */
export const monthMark = (m: RiskDrift["months"][number]) =>
  m.drifted
    ? { symbol: "triangle", word: "Drifted" }
    : m.judged
      ? { symbol: "circle", word: "Within the limits" }
      : { symbol: "emptyCircle", word: "Too few slabs to judge" };

/**
 * Predicted against observed share of slabs with the defect, month by month on the slabs the model
 * never saw: the predicted rate as a dashed line, the observed share as marks whose shape says how
 * the month was judged (triangle: drifted; disc: within the limits; a grey ring off the line: too
 * few slabs to judge).
 */
export function DriftChart({ drift }: { drift: RiskDrift }) {
  const option = useMemo(() => {
    const months = drift.months;
    const top = Math.max(0.02, ...months.map((m) => Math.max(m.predicted, m.observed))) * 1.15;
    return {
      animation: false,
      grid: { left: 64, right: 24, top: 48, bottom: 56 },
      legend: { top: 4, data: ["Predicted (mean risk)", "Observed share", ...(months.some((m) => !m.judged) ? ["Observed, too few slabs to judge"] : [])] },
      tooltip: {
        ...tooltipBase,
        trigger: "axis",
        formatter: (ps: { dataIndex: number }[]) => {
          const m = months[ps[0]?.dataIndex ?? 0];
          if (!m) return "";
          return (
            `<b>${esc(m.month)}</b>${m.provisional ? " (still running)" : ""}<br/>` +
            `Predicted ${pct(m.predicted, 1)} · observed ${pct(m.observed, 1)}<br/>` +
            `${m.affected.toLocaleString()} of ${m.slabs.toLocaleString()} slabs with the defect<br/>` +
            `${esc(monthMark(m).word)}`
          );
        },
      },
      xAxis: { type: "category", data: months.map((m) => m.month), name: "Month cast (UTC)", nameLocation: "middle", nameGap: 34 },
      yAxis: {
        type: "value",
        min: 0,
        max: top,
        name: "Share of slabs with the defect",
        nameLocation: "middle",
        nameRotate: 90,
        nameGap: 48,
        axisLabel: { formatter: pctAxis(top < 0.05 ? 1 : 0), showMaxLabel: false },
      },
      series: [
        {
          type: "line",
          name: "Predicted (mean risk)",
          data: months.map((m) => m.predicted),
          symbol: "none",
          lineStyle: { type: "dashed", width: 2, color: INK[600] },
          itemStyle: { color: INK[600] },
        },
        {
          type: "line",
          name: "Observed share",
          // A month with too few slabs is a ring off the line: its share says little.
          data: months.map((m) => (m.judged ? { value: m.observed, symbol: monthMark(m).symbol, symbolSize: m.drifted ? 16 : 10 } : null)),
          connectNulls: false,
          lineStyle: { width: 2, color: SERIES_COLORS[0] },
          itemStyle: { color: SERIES_COLORS[0] },
        },
        {
          type: "scatter",
          name: "Observed, too few slabs to judge",
          data: months.map((m) => (m.judged ? null : m.observed)),
          symbol: "emptyCircle",
          symbolSize: 10,
          itemStyle: { color: INK[600] },
          tooltip: { show: false },
        },
      ],
    };
  }, [drift]);
  return (
    <ReportChart
      option={option}
      height={300}
      testId="drift-chart"
      label="Drift: predicted risk against the observed share of slabs with the defect, month by month on slabs the model never saw"
    />
  );
}
