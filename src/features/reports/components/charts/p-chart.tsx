import { useMemo } from "react";
import type { ControlChart } from "@shared/api/reports";
import { INK, SERIES_COLORS } from "@/lib/chart-theme";
import { pct } from "@/lib/format";
import { pctAxis, tooltipBase } from "./chart-parts";
import { ReportChart } from "./report-chart";

const ALARM = "#a61b1b";

/**
 * The p-chart: each period's share of affected slabs, the centre line p̄, and the 3σ limits that
 * move with each period's own n (drawn as steps). A period outside its limits carries a triangle and
 * a label ("above UCL" / "below LCL"), not only a colour.
 */
export function PChart({ data }: { data: ControlChart }) {
  const option = useMemo(() => {
    const pts = data.points;
    const zoom = pts.length > 60;
    const out = pts.map((p, i) => (p.outOfControl ? { value: [i, p.p], above: p.p > p.ucl } : null)).filter(Boolean) as { value: [number, number]; above: boolean }[];
    const yMax = Math.max(0.01, ...pts.map((p) => Math.max(p.p, p.ucl))) * 1.1;
    return {
      animation: false,
      grid: { left: 72, right: 24, top: 44, bottom: zoom ? 84 : 48 },
      legend: { top: 4, data: ["p (share affected)", "p̄ (centre line)", "UCL (3σ)", "LCL (3σ)", "Out of control"] },
      tooltip: {
        ...tooltipBase,
        trigger: "axis",
        formatter: (ps: { dataIndex: number }[]) => {
          const p = pts[ps[0]?.dataIndex ?? 0];
          if (!p) return "";
          return `<b>${p.period}</b><br/>p = ${pct(p.p)} (${p.affected} of n = ${p.slabs})<br/>UCL ${pct(p.ucl)} · LCL ${pct(p.lcl)}${p.outOfControl ? `<br/><b>Out of control: ${p.p > p.ucl ? "above UCL" : "below LCL"}</b>` : ""}`;
        },
      },
      xAxis: { type: "category", data: pts.map((p) => p.period), name: data.period === "day" ? "Day of casting" : "ISO week of casting", nameLocation: "middle", nameGap: 30, axisLabel: { hideOverlap: true } },
      yAxis: { type: "value", min: 0, max: yMax, name: "Share of slabs affected", nameLocation: "middle", nameRotate: 90, nameGap: 46, axisLabel: { formatter: pctAxis(yMax < 0.05 ? 1 : 0), showMaxLabel: false } },
      dataZoom: zoom ? [{ type: "inside" }, { type: "slider", height: 20, bottom: 10 }] : undefined,
      series: [
        {
          type: "line",
          name: "p (share affected)",
          data: pts.map((p) => p.p),
          showSymbol: true,
          symbol: "circle",
          symbolSize: 5,
          itemStyle: { color: SERIES_COLORS[0] },
          lineStyle: { color: SERIES_COLORS[0], width: 1.5 },
          z: 3,
        },
        { type: "line", name: "p̄ (centre line)", data: pts.map(() => data.pBar), symbol: "none", itemStyle: { color: INK[700] }, lineStyle: { color: INK[700], width: 1.5 }, silent: true },
        { type: "line", name: "UCL (3σ)", data: pts.map((p) => p.ucl), step: "middle", symbol: "none", itemStyle: { color: SERIES_COLORS[1] }, lineStyle: { color: SERIES_COLORS[1], type: "dashed", width: 1.5 }, silent: true },
        { type: "line", name: "LCL (3σ)", data: pts.map((p) => p.lcl), step: "middle", symbol: "none", itemStyle: { color: SERIES_COLORS[2] }, lineStyle: { color: SERIES_COLORS[2], type: "dotted", width: 2 }, silent: true },
        {
          type: "scatter",
          name: "Out of control",
          symbol: "triangle",
          symbolSize: 14,
          itemStyle: { color: ALARM, borderColor: "#ffffff", borderWidth: 1 },
          data: out.map((o) => ({ value: o.value, symbolRotate: o.above ? 0 : 180, label: { formatter: o.above ? "above UCL" : "below LCL", position: o.above ? "top" : "bottom" } })),
          label: { show: true, fontSize: 11, fontWeight: 700, color: ALARM },
          z: 6,
        },
      ],
    };
  }, [data]);
  const outCount = data.points.filter((p) => p.outOfControl).length;
  return <ReportChart option={option} height={380} testId="p-chart" label={`p-chart of ${data.points.length} ${data.period === "day" ? "days" : "weeks"}, ${outCount} out of control`} />;
}

export default PChart;
