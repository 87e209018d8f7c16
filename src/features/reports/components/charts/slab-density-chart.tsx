import { useMemo } from "react";
import { useTranslation } from "react-i18next";
import type { SlabPositions } from "@shared/api/reports";
import { COUNT_RAMP, FONT, INK } from "@/lib/chart-theme";
import { useTerms } from "@/i18n/terms";
import { num } from "@/lib/format";
import { esc, tooltipBase } from "./chart-parts";
import { ReportChart } from "./report-chart";

/*
 * The slab unrolled around its length, as on the yard's slab drawing: left narrow face, inner radius
 * (top) face, right narrow face, outer radius (bottom) face, each strip touching the one it shares a
 * corner with; head end on the left. Across runs from the left edge on the broad faces and from the
 * corner with the inner face on the narrow faces, so the strips' inner edges meet.
 */
const STRIPS = [
  { face: "left", height: 56, inverse: false, from: "innerCorner", arrow: "↑" },
  { face: "inner", height: 140, inverse: true, from: "leftEdge", arrow: "↓" },
  { face: "right", height: 56, inverse: true, from: "innerCorner", arrow: "↓" },
  { face: "outer", height: 140, inverse: false, from: "leftEdge", arrow: "↑" },
] as const;

const TOP = 44;
const LEFT = 270;
const BOTTOM = 112;

const band = (lo: number, hi: number) => `${num(Math.round(lo * 100))}–${num(Math.round(hi * 100))} %`;

export function SlabDensityChart({ data }: { data: SlabPositions }) {
  const { t } = useTranslation("reports");
  const { term } = useTerms();
  const option = useMemo(() => {
    const along = data.alongEdges.slice(0, -1).map((e, i) => band(e, data.alongEdges[i + 1]!));
    const across = data.acrossEdges.slice(0, -1).map((e, i) => band(e, data.acrossEdges[i + 1]!));
    const faces = STRIPS.map((s) => {
      const from = t(`positions.from.${s.from}`);
      return { ...s, name: term("faces", s.face), from, across: `${from} ${s.arrow}`, g: data.grid.find((g) => g.face === s.face) };
    });
    const max = Math.max(1, ...faces.flatMap((f) => f.g?.cells.flat() ?? [0]));
    let top = TOP;
    const tops = faces.map((f) => {
      const at = top;
      top += f.height;
      return at;
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
          return `<b>${esc(f.name)}</b><br/>${esc(t("positions.tipAlong", { band: along[p.value[0]] }))}<br/>${esc(t("positions.tipAcross", { band: across[p.value[1]], from: f.from }))}<br/>${t("positions.tipDefects", { count: p.value[2], n: `<b>${p.value[2]}</b>`, total, interpolation: { escapeValue: false } })}`;
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
        name: i === last ? t("positions.alongAxis") : undefined,
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
        text: [`${max}`, t("positions.scaleLow")],
        inRange: { color: COUNT_RAMP },
      },
      graphic: [
        ...faces.flatMap((f, i) => [
          { type: "text", left: 8, top: tops[i]! + f.height / 2 - 16, style: { text: f.name, font: `600 12px ${FONT}`, fill: INK[900] } },
          {
            type: "text",
            left: 8,
            top: tops[i]! + f.height / 2 + 2,
            style: {
              text: t("positions.stripNote", { n: f.g?.along.reduce((s, v) => s + v, 0) ?? 0, across: f.across }),
              font: `11px ${FONT}`,
              fill: INK[700],
            },
          },
        ]),
        { type: "text", left: LEFT, top: 14, style: { text: t("positions.headEnd"), font: `700 13px ${FONT}`, fill: INK[900] } },
        { type: "text", right: 24, top: 14, style: { text: t("positions.tailEnd"), font: `12px ${FONT}`, fill: INK[600] } },
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
  }, [data, t, term]);
  const height = TOP + STRIPS.reduce((s, f) => s + f.height, 0) + BOTTOM;
  return <ReportChart option={option} height={height} testId="slab-density-chart" label={t("positions.chartLabel", { n: data.defects })} />;
}

export default SlabDensityChart;
