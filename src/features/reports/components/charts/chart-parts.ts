import { i18n } from "@/i18n";
import { INK, FONT, SERIES_COLORS } from "@/lib/chart-theme";
import { num } from "@/lib/format";

/** Axis labels of a rate (0…1) as percentages, in the language's numbers. */
export const pctAxis =
  (digits = 1) =>
  (v: number) =>
    `${num(v * 100, digits)} %`;

type Api = {
  value: (dim: number) => number;
  coord: (v: number[]) => number[];
  size?: (v: number[]) => number[];
};

/**
 * A 95 % interval drawn as a whisker with caps, for a custom series whose data rows are
 * [x, lower, upper] (x a value, or a category's index).
 */
export function whiskerSeries(
  name: string,
  data: (number | string)[][],
  opts: { color?: string; cap?: number; xAxisIndex?: number; yAxisIndex?: number } = {},
) {
  const stroke = opts.color ?? INK[900];
  const cap = opts.cap ?? 6;
  return {
    type: "custom",
    name,
    xAxisIndex: opts.xAxisIndex ?? 0,
    yAxisIndex: opts.yAxisIndex ?? 0,
    z: 10,
    silent: true,
    itemStyle: { color: stroke },
    encode: { x: 0, y: [1, 2] },
    data,
    renderItem: (_: unknown, api: Api) => {
      const x = api.value(0);
      const lo = api.coord([x, api.value(1)]);
      const hi = api.coord([x, api.value(2)]);
      const style = { stroke, lineWidth: 1.6 };
      return {
        type: "group",
        children: [
          { type: "line", shape: { x1: lo[0], y1: lo[1], x2: hi[0], y2: hi[1] }, style },
          { type: "line", shape: { x1: lo[0]! - cap, y1: lo[1], x2: lo[0]! + cap, y2: lo[1] }, style },
          { type: "line", shape: { x1: hi[0]! - cap, y1: hi[1], x2: hi[0]! + cap, y2: hi[1] }, style },
        ],
      };
    },
  };
}

export const tooltipBase = { confine: true, textStyle: { fontFamily: FONT, fontSize: 13 } };

/** Escapes text placed into a tooltip's HTML. */
export const esc = (s: string) => s.replace(/[&<>"]/g, (c) => ({ "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;" })[c]!);

/*
 * The words below are read in the language shown when a chart builds its option: the charts keep
 * their option per language (their memo depends on the translation function).
 */

/** A Pareto chart's two value axes: counts on the left, the cumulative share (0–100 %) on the right. */
export const paretoYAxes = (countName: string) => [
  { type: "value", name: countName, nameLocation: "middle", nameRotate: 90, nameGap: 46, minInterval: 1 },
  {
    type: "value",
    name: i18n.t("reports:charts.cumulativeShare"),
    nameLocation: "middle",
    nameRotate: -90,
    nameGap: 50,
    min: 0,
    max: 1,
    splitLine: { show: false },
    axisLabel: { formatter: pctAxis(0) },
  },
];

/** A Pareto chart's cumulative-share line on the right axis, with the 80 % mark. */
export function cumulativeShareSeries(data: number[]) {
  return {
    type: "line",
    name: i18n.t("reports:charts.cumulativeShare"),
    yAxisIndex: 1,
    symbol: "circle",
    symbolSize: 6,
    showSymbol: true,
    itemStyle: { color: SERIES_COLORS[1] },
    lineStyle: { color: SERIES_COLORS[1], type: "dashed", width: 2 },
    data,
    markLine: {
      silent: true,
      symbol: "none",
      lineStyle: { color: INK[600], type: "dotted", width: 1.2 },
      label: { formatter: `${num(80)} %`, position: "insideEndTop", color: INK[700] },
      data: [{ yAxis: 0.8 }],
    },
  };
}
