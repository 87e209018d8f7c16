import { useMemo } from "react";
import type { Overview } from "@shared/api/reports";
import { SERIES_COLORS } from "@/lib/chart-theme";
import { pct } from "@/lib/format";
import { cumulativeShareSeries, esc, paretoYAxes, tooltipBase } from "./chart-parts";
import { ReportChart } from "./report-chart";

/** The Pareto of defect types: defects of each type as bars, largest first, and the cumulative share as a line. */
export function ParetoChart({ pareto }: { pareto: Overview["pareto"] }) {
  const option = useMemo(
    () => ({
      animation: false,
      grid: { left: 72, right: 72, top: 44, bottom: 48 },
      legend: { top: 4, data: ["Defects", "Cumulative share"] },
      tooltip: {
        ...tooltipBase,
        trigger: "axis",
        axisPointer: { type: "shadow" },
        formatter: (ps: { dataIndex: number }[]) => {
          const r = pareto[ps[0]?.dataIndex ?? 0];
          if (!r) return "";
          return `<b>${esc(r.code)}</b> ${esc(r.name)}<br/>${r.defects} defects on ${r.slabsAffected} slabs<br/>${pct(r.share, 1)} of all defects; cumulative ${pct(r.cumulativeShare, 1)}`;
        },
      },
      xAxis: {
        type: "category",
        data: pareto.map((r) => r.code),
        name: "Defect type",
        nameLocation: "middle",
        nameGap: 30,
        axisLabel: { interval: 0, fontSize: 11 },
      },
      yAxis: paretoYAxes("Defects"),
      series: [
        {
          type: "bar",
          name: "Defects",
          barMaxWidth: 48,
          itemStyle: { color: SERIES_COLORS[0] },
          label: { show: pareto.length <= 16, position: "insideTop", color: "#ffffff", fontSize: 11 },
          data: pareto.map((r) => r.defects),
        },
        cumulativeShareSeries(pareto.map((r) => r.cumulativeShare)),
      ],
    }),
    [pareto],
  );
  const total = pareto.reduce((s, r) => s + r.defects, 0);
  return <ReportChart option={option} height={340} testId="pareto-chart" label={`Pareto of ${pareto.length} defect types, ${total} defects`} />;
}

export default ParetoChart;
