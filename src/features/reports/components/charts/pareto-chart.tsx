import { useMemo } from "react";
import { useTranslation } from "react-i18next";
import type { Overview } from "@shared/api/reports";
import { SERIES_COLORS } from "@/lib/chart-theme";
import { pct } from "@/lib/format";
import { cumulativeShareSeries, esc, paretoYAxes, tooltipBase } from "./chart-parts";
import { ReportChart } from "./report-chart";

/** The Pareto of defect types: defects of each type as bars, largest first, and the cumulative share as a line. */
export function ParetoChart({ pareto }: { pareto: Overview["pareto"] }) {
  const { t } = useTranslation("reports");
  const option = useMemo(
    () => ({
      animation: false,
      grid: { left: 72, right: 72, top: 44, bottom: 48 },
      legend: { top: 4, data: [t("cols.defects"), t("charts.cumulativeShare")] },
      tooltip: {
        ...tooltipBase,
        trigger: "axis",
        axisPointer: { type: "shadow" },
        formatter: (ps: { dataIndex: number }[]) => {
          const r = pareto[ps[0]?.dataIndex ?? 0];
          if (!r) return "";
          return `<b>${esc(r.code)}</b> ${esc(r.name)}<br/>${esc(t("charts.defectsOnSlabs", { defects: r.defects, slabs: r.slabsAffected }))}<br/>${esc(t("charts.shareOfAll", { share: pct(r.share, 1), cumulative: pct(r.cumulativeShare, 1) }))}`;
        },
      },
      xAxis: {
        type: "category",
        data: pareto.map((r) => r.code),
        name: t("filters.defectType"),
        nameLocation: "middle",
        nameGap: 30,
        axisLabel: { interval: 0, fontSize: 11 },
      },
      yAxis: paretoYAxes(t("cols.defects")),
      series: [
        {
          type: "bar",
          name: t("cols.defects"),
          barMaxWidth: 48,
          itemStyle: { color: SERIES_COLORS[0] },
          label: { show: pareto.length <= 16, position: "insideTop", color: "#ffffff", fontSize: 11 },
          data: pareto.map((r) => r.defects),
        },
        cumulativeShareSeries(pareto.map((r) => r.cumulativeShare)),
      ],
    }),
    [pareto, t],
  );
  const total = pareto.reduce((s, r) => s + r.defects, 0);
  return <ReportChart option={option} height={340} testId="pareto-chart" label={t("charts.paretoLabel", { types: pareto.length, defects: total })} />;
}

export default ParetoChart;
