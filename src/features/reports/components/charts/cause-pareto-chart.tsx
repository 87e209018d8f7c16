import { useMemo } from "react";
import type { CausePareto } from "@shared/api/causes";
import { SERIES_COLORS } from "@/lib/chart-theme";
import { pct } from "@/lib/format";
import { cumulativeShareSeries, esc, paretoYAxes, tooltipBase } from "./chart-parts";
import { ReportChart } from "./report-chart";

/**
 * The Pareto of cause tags: defects carrying each tag as bars split by confidence (solid confirmed,
 * lighter probable, hatched suspected — a pattern as well as a shade), and the cumulative share of
 * taggings as a dashed line.
 */
export function CauseParetoChart({ rows }: { rows: CausePareto["rows"] }) {
  const option = useMemo(() => {
    const stack = [
      { key: "confirmed" as const, name: "Confirmed", style: { color: SERIES_COLORS[0] } },
      { key: "probable" as const, name: "Probable", style: { color: "#6fa9b3" } },
      {
        key: "suspected" as const,
        name: "Suspected",
        style: {
          color: "#ffffff",
          borderColor: SERIES_COLORS[0],
          borderWidth: 1.2,
          decal: { symbol: "rect", symbolSize: 1, dashArrayX: [1, 0], dashArrayY: [2, 3], rotation: Math.PI / 4, color: "rgba(11,93,107,0.55)" },
        },
      },
    ];
    return {
      animation: false,
      grid: { left: 72, right: 72, top: 48, bottom: 96 },
      legend: { top: 4, data: [...stack.map((s) => s.name), "Cumulative share"] },
      tooltip: {
        ...tooltipBase,
        trigger: "axis",
        axisPointer: { type: "shadow" },
        formatter: (ps: { dataIndex: number }[]) => {
          const r = rows[ps[0]?.dataIndex ?? 0];
          if (!r) return "";
          return `<b>${esc(r.name)}</b>${r.retired ? " (retired)" : ""}<br/>${r.defects} defects on ${r.slabs} slabs<br/>confirmed ${r.confirmed} · probable ${r.probable} · suspected ${r.suspected}<br/>${pct(r.share, 1)} of taggings; cumulative ${pct(r.cumulative, 1)}`;
        },
      },
      xAxis: {
        type: "category",
        data: rows.map((r) => r.name),
        name: "Cause tag",
        nameLocation: "middle",
        nameGap: 80,
        axisLabel: { interval: 0, fontSize: 11, rotate: rows.length > 4 ? 25 : 0, width: rows.length > 4 ? 150 : 180, overflow: "truncate" },
      },
      yAxis: paretoYAxes("Defects"),
      series: [
        ...stack.map((s) => ({
          type: "bar",
          name: s.name,
          stack: "defects",
          barMaxWidth: 48,
          itemStyle: s.style,
          data: rows.map((r) => r[s.key]),
        })),
        cumulativeShareSeries(rows.map((r) => r.cumulative)),
      ],
    };
  }, [rows]);
  return <ReportChart option={option} height={380} testId="cause-pareto-chart" label={`Pareto of ${rows.length} cause tags`} />;
}

export default CauseParetoChart;
