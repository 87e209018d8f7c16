import * as echarts from "echarts/core";

/**
 * The one chart theme of Strandsight: our palette (src/index.css) and Noto Sans. Every chart uses it
 * by name. Import this module only from lazily loaded chart components, so the chart library never
 * lands in a screen that has no chart (the inspector's screens above all).
 */
export const CHART_THEME = "strandsight";

/** Series colours in order, from the @theme palette; series also differ by line style, never by colour alone. */
export const SERIES_COLORS = ["#0b5d6b", "#c2410c", "#7a5a10", "#334555", "#2f6b3a", "#a61b1b"];
export const SERIES_LINE_TYPES = ["solid", "dashed", "dotted"] as const;

const ink = { 900: "#14202b", 700: "#334555", 600: "#4b5d6d", 300: "#b5c0c9", 100: "#e8ecef" };
const font = '"Noto Sans", ui-sans-serif, system-ui, sans-serif';

const axis = {
  axisLine: { show: true, lineStyle: { color: ink[300] } },
  axisTick: { show: true, lineStyle: { color: ink[300] } },
  axisLabel: { color: ink[600], fontFamily: font, fontSize: 12 },
  splitLine: { show: true, lineStyle: { color: ink[100] } },
  nameTextStyle: { color: ink[700], fontFamily: font, fontSize: 12, fontWeight: 600 },
};

echarts.registerTheme(CHART_THEME, {
  color: SERIES_COLORS,
  backgroundColor: "transparent",
  textStyle: { fontFamily: font, color: ink[900] },
  title: { textStyle: { fontFamily: font, color: ink[900], fontWeight: 600, fontSize: 14 } },
  legend: { textStyle: { fontFamily: font, color: ink[700], fontSize: 13 }, itemWidth: 28, itemHeight: 10 },
  tooltip: {
    backgroundColor: "#ffffff",
    borderColor: ink[300],
    textStyle: { fontFamily: font, color: ink[900], fontSize: 13 },
    axisPointer: { lineStyle: { color: ink[600] }, crossStyle: { color: ink[600] } },
  },
  timeAxis: axis,
  valueAxis: axis,
  categoryAxis: { ...axis, splitLine: { show: false } },
  line: { symbol: "none", lineStyle: { width: 2 }, emphasis: { lineStyle: { width: 3 } } },
  bar: { itemStyle: { borderRadius: 0 } },
  scatter: { symbolSize: 6 },
  boxplot: { itemStyle: { color: "#ffffff", borderColor: ink[700], borderWidth: 1.6 } },
  visualMap: { textStyle: { fontFamily: font, color: ink[700], fontSize: 12 } },
  dataZoom: { textStyle: { fontFamily: font, color: ink[600] }, borderColor: ink[300], fillerColor: "rgba(11,93,107,0.12)", handleColor: "#0b5d6b" },
});

/** Rates on a heatmap: light paper to deep ember (more affected slabs = darker). */
export const RATE_RAMP = ["#fbf7f2", "#f6d3b5", "#e58b4e", "#c2410c", "#7c2a0b"];
/** Counts of defect positions on the slab: light steel to deep strand teal. */
export const COUNT_RAMP = ["#f4f6f7", "#d7eef1", "#6fc0cc", "#0f7282", "#074450"];
/** A cell or bar with too few slabs to read: grey, hatched, and labelled as such. */
export const SPARSE_FILL = "#e8ecef";
export const SPARSE_TEXT = ink[700];
export const SPARSE_DECAL = { symbol: "rect", symbolSize: 1, dashArrayX: [1, 0], dashArrayY: [2, 4], rotation: Math.PI / 4, color: "rgba(75,93,109,0.22)" };
export const INK = ink;
export const FONT = font;

export { echarts };
