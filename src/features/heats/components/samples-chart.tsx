import { useMemo, useState } from "react";
import EChartsCoreModule from "echarts-for-react/lib/core";
import { LineChart } from "echarts/charts";
import { DataZoomComponent, GridComponent, LegendComponent, TooltipComponent } from "echarts/components";
import { CanvasRenderer } from "echarts/renderers";
import type { HeatSamples } from "@shared/api/heats";
import { CHART_THEME, echarts, SERIES_LINE_TYPES } from "@/lib/chart-theme";
import { dateTime, num, plural, time } from "@/lib/format";

echarts.use([LineChart, GridComponent, TooltipComponent, LegendComponent, DataZoomComponent, CanvasRenderer]);

// lib/core is CommonJS: the bundler may hand over the module object rather than its default export.
const ReactEChartsCore = ((EChartsCoreModule as unknown as { default?: typeof EChartsCoreModule }).default ?? EChartsCoreModule) as typeof EChartsCoreModule;

/** The columns of a sample point after its time (shared/api/heats.ts, heatSamplesSchema). */
export const SAMPLE_SERIES = [
  { index: 2, key: "speed", label: "Casting speed", unit: "m/min", digits: 2 },
  { index: 7, key: "moldLevel", label: "Mold level", unit: "mm", digits: 1 },
  { index: 3, key: "tundish", label: "Tundish temperature", unit: "°C", digits: 1 },
  { index: 4, key: "brake", label: "Brake current", unit: "A", digits: 0 },
  { index: 5, key: "sen", label: "SEN depth", unit: "mm", digits: 0 },
  { index: 6, key: "argon", label: "Argon flow", unit: "NL/min", digits: 1 },
  { index: 1, key: "castLength", label: "Cast length", unit: "m", digits: 1 },
] as const;
type SeriesKey = (typeof SAMPLE_SERIES)[number]["key"];

/** The heat's process samples over time, one line per strand, one variable at a time. */
/** Which line is which strand, for the strands this heat has (one, two or more), in the series' own line types. */
const lineWords = (strands: number[]) =>
  strands.length === 0
    ? ""
    : strands.length === 1
      ? `One line: strand ${strands[0]}.`
      : `${strands
          .map((n, i) => `${SERIES_LINE_TYPES[i % SERIES_LINE_TYPES.length]} strand ${n}`)
          .join(", ")
          .replace(/^./, (c) => c.toUpperCase())}.`;

export function SamplesChart({ samples }: { samples: HeatSamples }) {
  const [key, setKey] = useState<SeriesKey>("speed");
  const spec = SAMPLE_SERIES.find((s) => s.key === key)!;

  const option = useMemo(
    () => ({
      animation: false,
      grid: { left: 64, right: 24, top: 40, bottom: 72 },
      legend: { top: 4, data: samples.strands.map((s) => `Strand ${s.strandNo}`) },
      tooltip: {
        trigger: "axis",
        valueFormatter: (v: number | null) => (v === null || v === undefined ? "—" : `${num(v, spec.digits)} ${spec.unit}`),
        axisPointer: { label: { formatter: ({ value }: { value: number }) => dateTime(new Date(value).toISOString()) } },
      },
      xAxis: {
        type: "time",
        axisLabel: { formatter: (v: number) => time(new Date(v).toISOString()), hideOverlap: true },
      },
      yAxis: { type: "value", name: `${spec.label} (${spec.unit})`, scale: true, nameGap: 14 },
      dataZoom: [
        { type: "inside", filterMode: "none" },
        { type: "slider", height: 22, bottom: 12, filterMode: "none", labelFormatter: (v: number) => time(new Date(v).toISOString()) },
      ],
      series: samples.strands.map((s, i) => ({
        name: `Strand ${s.strandNo}`,
        type: "line",
        showSymbol: false,
        connectNulls: false,
        lineStyle: { type: SERIES_LINE_TYPES[i % SERIES_LINE_TYPES.length] },
        data: s.points.map((p) => [p[0], p[spec.index]]),
      })),
    }),
    [samples, spec],
  );

  const total = samples.strands.reduce((a, s) => a + s.total, 0);
  const shown = samples.strands.reduce((a, s) => a + s.points.length, 0);

  return (
    <div className="space-y-3">
      <div role="radiogroup" aria-label="Variable shown" className="flex flex-wrap gap-2">
        {SAMPLE_SERIES.map((s) => (
          <button
            key={s.key}
            type="button"
            role="radio"
            aria-checked={s.key === key}
            onClick={() => setKey(s.key)}
            className={`min-h-11 rounded-md border px-3 text-sm font-semibold ${
              s.key === key ? "border-strand-700 bg-strand-700 text-white" : "border-ink-300 bg-white text-ink-800 hover:bg-ink-50"
            }`}
          >
            {s.label} <span className={s.key === key ? "text-strand-100" : "text-ink-500"}>{s.unit}</span>
          </button>
        ))}
      </div>
      <div data-testid="samples-chart" className="h-80 w-full" aria-label={`${spec.label} over time, one line per strand`} role="img">
        <ReactEChartsCore echarts={echarts} theme={CHART_THEME} option={option} notMerge style={{ height: "100%", width: "100%" }} />
      </div>
      <p className="text-xs text-ink-600">
        {plural(total, "sample")} on record for this heat
        {shown < total ? `, thinned evenly to ${plural(shown, "point")} for the chart` : ""}. {lineWords(samples.strands.map((s) => s.strandNo))}
        Drag the bar under the chart or scroll on it to zoom.
      </p>
    </div>
  );
}

export default SamplesChart;
