import { useMemo } from "react";
import type { SlabPositions } from "@shared/api/reports";
import { COUNT_RAMP, FONT, INK } from "@/lib/chart-theme";
import { tooltipBase } from "./chart-parts";
import { ReportChart } from "./report-chart";

/*
 * The slab unrolled around its length, as on the yard's slab drawing: left narrow face, inner radius
 * (top) face, right narrow face, outer radius (bottom) face, each strip touching the one it shares a
 * corner with; head end on the left. Across runs from the left edge on the broad faces and from the
 * corner with the inner face on the narrow faces, so the strips' inner edges meet.
 */
const STRIPS = [
  { face: "left", name: "Left narrow face", height: 56, inverse: false, across: "from inner corner ↑" },
  { face: "inner", name: "Inner radius (top) face", height: 140, inverse: true, across: "from left edge ↓" },
  { face: "right", name: "Right narrow face", height: 56, inverse: true, across: "from inner corner ↓" },
  { face: "outer", name: "Outer radius (bottom) face", height: 140, inverse: false, across: "from left edge ↑" },
] as const;

const TOP = 44;
const LEFT = 270;
const BOTTOM = 112;

const band = (lo: number, hi: number) => `${Math.round(lo * 100)}–${Math.round(hi * 100)} %`;

export function SlabDensityChart({ data }: { data: SlabPositions }) {
  const option = useMemo(() => {
    const along = data.alongEdges.slice(0, -1).map((e, i) => band(e, data.alongEdges[i + 1]!));
    const across = data.acrossEdges.slice(0, -1).map((e, i) => band(e, data.acrossEdges[i + 1]!));
    const faces = STRIPS.map((s) => ({ ...s, g: data.grid.find((g) => g.face === s.face) }));
    const max = Math.max(1, ...faces.flatMap((f) => f.g?.cells.flat() ?? [0]));
    let top = TOP;
    const tops = faces.map((f) => {
      const t = top;
      top += f.height;
      return t;
    });
    const last = faces.length - 1;
    return {
      animation: false,
      tooltip: {
        ...tooltipBase,
        trigger: "item",
        formatter: (p: { seriesIndex: number; value: [number, number, number] }) => {
          const f = faces[p.seriesIndex]!;
          const total = f.g?.cells.flat().reduce((s, v) => s + v, 0) ?? 0;
          return `<b>${f.name}</b><br/>along ${along[p.value[0]]} of the length from the head end<br/>across ${across[p.value[1]]} (${f.across.replace(/ [↑↓]/, "")})<br/><b>${p.value[2]}</b> defect${p.value[2] === 1 ? "" : "s"} of ${total} on this face`;
        },
      },
      grid: faces.map((f, i) => ({
        left: LEFT,
        right: 24,
        top: tops[i],
        height: f.height,
        show: true,
        borderColor: INK[900],
        borderWidth: 1.5,
        backgroundColor: "#ffffff",
      })),
      xAxis: faces.map((_, i) => ({
        type: "category",
        gridIndex: i,
        data: along,
        axisTick: { show: i === last },
        axisLine: { show: false },
        axisLabel: { show: i === last, fontSize: 11 },
        name: i === last ? "Along the slab from the head end (share of its length)" : undefined,
        nameLocation: "middle",
        nameGap: 30,
        splitLine: { show: false },
      })),
      yAxis: faces.map((f, i) => ({
        type: "category",
        gridIndex: i,
        data: across,
        inverse: f.inverse,
        axisLine: { show: false },
        axisTick: { show: false },
        axisLabel: { show: f.height > 100, fontSize: 10, color: INK[600] },
        splitLine: { show: false },
      })),
      visualMap: {
        seriesIndex: faces.map((_, i) => i),
        min: 0,
        max,
        calculable: false,
        orient: "horizontal",
        left: "center",
        bottom: 6,
        itemWidth: 14,
        itemHeight: 220,
        text: [`${max}`, "0  defects per cell"],
        inRange: { color: COUNT_RAMP },
      },
      graphic: [
        ...faces.flatMap((f, i) => [
          { type: "text", left: 8, top: tops[i]! + f.height / 2 - 16, style: { text: f.name, font: `600 12px ${FONT}`, fill: INK[900] } },
          {
            type: "text",
            left: 8,
            top: tops[i]! + f.height / 2 + 2,
            style: { text: `n = ${f.g?.along.reduce((s, v) => s + v, 0) ?? 0} · across ${f.across}`, font: `11px ${FONT}`, fill: INK[700] },
          },
        ]),
        { type: "text", left: LEFT, top: 14, style: { text: "◀ HEAD END", font: `700 13px ${FONT}`, fill: INK[900] } },
        { type: "text", right: 24, top: 14, style: { text: "tail end ▶", font: `12px ${FONT}`, fill: INK[600] } },
      ],
      series: faces.map((f, i) => ({
        type: "heatmap",
        name: f.name,
        xAxisIndex: i,
        yAxisIndex: i,
        data: (f.g?.cells ?? []).flatMap((row, ai) => row.map((n, xi) => ({ value: [ai, xi, n], label: { color: n > max * 0.55 ? "#ffffff" : INK[900] } }))),
        label: { show: f.height > 100, fontSize: 11, formatter: (p: { value: [number, number, number] }) => (p.value[2] ? String(p.value[2]) : "") },
        itemStyle: { borderColor: "rgba(255,255,255,0.7)", borderWidth: 1 },
      })),
    };
  }, [data]);
  const height = TOP + STRIPS.reduce((s, f) => s + f.height, 0) + BOTTOM;
  return (
    <ReportChart
      option={option}
      height={height}
      testId="slab-density-chart"
      label={`Where ${data.defects} defects sit on the slab's four faces, head end on the left`}
    />
  );
}

export default SlabDensityChart;
