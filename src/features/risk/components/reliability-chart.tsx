import { useMemo } from "react";
import { useTranslation } from "react-i18next";
import type { RiskValidation } from "@shared/api/risk";
import { INK, SERIES_COLORS } from "@/lib/chart-theme";
import { count, pct } from "@/lib/format";
import { esc, tooltipBase } from "@/features/reports/components/charts/chart-parts";
import { ReportChart } from "@/features/reports/components/charts/report-chart";

/**
 * Reliability diagram of a risk model on its test slabs: each group's mean predicted risk against the
 * share of its slabs that carried the defect, sized by slabs, beside the diagonal of perfect calibration.
 */
export function ReliabilityChart({ validation }: { validation: RiskValidation }) {
  const { t } = useTranslation("process");
  const option = useMemo(() => {
    const pts = validation.reliability;
    const highest = Math.max(0.02, ...pts.map((p) => Math.max(p.predicted, p.observed))) * 1.05;
    // A round top and ticks on it: steps of 1 %, 5 % or 20 % by the largest share drawn.
    const step = highest > 0.5 ? 0.2 : highest > 0.1 ? 0.05 : 0.01;
    const top = Math.ceil(highest / step) * step;
    const most = Math.max(1, ...pts.map((p) => p.slabs));
    return {
      grid: { left: 64, right: 24, top: 24, bottom: 56 },
      tooltip: {
        ...tooltipBase,
        trigger: "item",
        formatter: (p: { data: [number, number, number] }) =>
          `${esc(t("risk.chart.predictedValue", { value: pct(p.data[0], 1) }))}<br/>${esc(t("risk.chart.observedValue", { value: pct(p.data[1], 1) }))}<br/>${esc(
            t("risk.reliability.testSlabs", { count: p.data[2], n: count(p.data[2]) }),
          )}`,
      },
      xAxis: {
        type: "value",
        name: t("risk.reliability.xAxis"),
        nameLocation: "middle",
        nameGap: 32,
        min: 0,
        max: top,
        interval: step,
        axisLabel: { formatter: (v: number) => pct(v, 0) },
      },
      yAxis: {
        type: "value",
        name: t("risk.reliability.yAxis"),
        nameLocation: "middle",
        nameGap: 48,
        min: 0,
        max: top,
        interval: step,
        axisLabel: { formatter: (v: number) => pct(v, 0) },
      },
      series: [
        {
          type: "line",
          name: t("risk.reliability.perfect"),
          data: [
            [0, 0],
            [top, top],
          ],
          symbol: "none",
          lineStyle: { type: "dashed", color: INK[600] },
          silent: true,
        },
        {
          type: "scatter",
          name: t("risk.reliability.groups"),
          data: pts.map((p) => [p.predicted, p.observed, p.slabs]),
          symbolSize: (d: [number, number, number]) => 8 + 18 * Math.sqrt(d[2] / most),
          itemStyle: { color: SERIES_COLORS[0] },
        },
      ],
    };
  }, [validation, t]);
  return <ReportChart option={option} height={320} testId="reliability-chart" label={t("risk.reliability.label")} />;
}
