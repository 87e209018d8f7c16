import { useMemo, useState } from "react";
import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import EChartsCoreModule from "echarts-for-react/lib/core";
import { LineChart } from "echarts/charts";
import { DataZoomComponent, GridComponent, LegendComponent, TooltipComponent } from "echarts/components";
import { CanvasRenderer } from "echarts/renderers";
import type { HeatSamples } from "@shared/api/heats";
import { CHART_THEME, echarts, SERIES_LINE_TYPES } from "@/lib/chart-theme";
import { count, dateTime, num, time } from "@/lib/format";

echarts.use([LineChart, GridComponent, TooltipComponent, LegendComponent, DataZoomComponent, CanvasRenderer]);

// lib/core is CommonJS: the bundler may hand over the module object rather than its default export.
const ReactEChartsCore = ((EChartsCoreModule as unknown as { default?: typeof EChartsCoreModule }).default ?? EChartsCoreModule) as typeof EChartsCoreModule;

/** The columns of a sample point after its time (shared/api/heats.ts, heatSamplesSchema); shown as `samples.series.<key>`. */
export const SAMPLE_SERIES = [
  { index: 2, key: "speed", unit: "m/min", digits: 2 },
  { index: 7, key: "moldLevel", unit: "mm", digits: 1 },
  { index: 3, key: "tundish", unit: "°C", digits: 1 },
  { index: 4, key: "brake", unit: "A", digits: 0 },
  { index: 5, key: "sen", unit: "mm", digits: 0 },
  { index: 6, key: "argon", unit: "NL/min", digits: 1 },
  { index: 1, key: "castLength", unit: "m", digits: 1 },
] as const;
type SeriesKey = (typeof SAMPLE_SERIES)[number]["key"];

/** Which line is which strand, for the strands this heat has (one, two or more), in the series' own line types. */
const lineWords = (t: TFunction<"heats">, strands: number[]) =>
  strands.length === 0
    ? ""
    : strands.length === 1
      ? t("samples.oneLine", { n: strands[0] })
      : t("samples.lines", {
          lines: strands
            .map((n, i) => t("samples.lineItem", { type: t(`samples.lineTypes.${SERIES_LINE_TYPES[i % SERIES_LINE_TYPES.length]}`), n }))
            .join(", ")
            .replace(/^./, (c) => c.toUpperCase()),
        });

/** The heat's process samples over time, one line per strand, one variable at a time. */
export function SamplesChart({ samples }: { samples: HeatSamples }) {
  const { t } = useTranslation("heats");
  const [key, setKey] = useState<SeriesKey>("speed");
  const spec = SAMPLE_SERIES.find((s) => s.key === key)!;
  const label = t(`samples.series.${spec.key}`);

  const option = useMemo(
    () => ({
      animation: false,
      grid: { left: 64, right: 24, top: 40, bottom: 72 },
      legend: { top: 4, data: samples.strands.map((s) => t("samples.strand", { n: s.strandNo })) },
      tooltip: {
        trigger: "axis",
        valueFormatter: (v: number | null) => (v === null || v === undefined ? "—" : `${num(v, spec.digits)} ${spec.unit}`),
        axisPointer: { label: { formatter: ({ value }: { value: number }) => dateTime(new Date(value).toISOString()) } },
      },
      xAxis: {
        type: "time",
        axisLabel: { formatter: (v: number) => time(new Date(v).toISOString()), hideOverlap: true },
      },
      yAxis: { type: "value", name: `${label} (${spec.unit})`, scale: true, nameGap: 14 },
      dataZoom: [
        { type: "inside", filterMode: "none" },
        { type: "slider", height: 22, bottom: 12, filterMode: "none", labelFormatter: (v: number) => time(new Date(v).toISOString()) },
      ],
      series: samples.strands.map((s, i) => ({
        name: t("samples.strand", { n: s.strandNo }),
        type: "line",
        showSymbol: false,
        connectNulls: false,
        lineStyle: { type: SERIES_LINE_TYPES[i % SERIES_LINE_TYPES.length] },
        data: s.points.map((p) => [p[0], p[spec.index]]),
      })),
    }),
    [samples, spec, label, t],
  );

  const total = samples.strands.reduce((a, s) => a + s.total, 0);
  const shown = samples.strands.reduce((a, s) => a + s.points.length, 0);

  return (
    <div className="space-y-3">
      <div role="radiogroup" aria-label={t("samples.variableShown")} className="flex flex-wrap gap-2">
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
            {t(`samples.series.${s.key}`)} <span className={s.key === key ? "text-strand-100" : "text-ink-500"}>{s.unit}</span>
          </button>
        ))}
      </div>
      <div data-testid="samples-chart" className="h-80 w-full" aria-label={t("samples.chartLabel", { variable: label })} role="img">
        <ReactEChartsCore echarts={echarts} theme={CHART_THEME} option={option} notMerge style={{ height: "100%", width: "100%" }} />
      </div>
      <p className="text-xs text-ink-600">
        {[
          shown < total
            ? t("samples.thinned", { count: shown, n: count(total), shown: count(shown) })
            : t("samples.recorded", { count: total, n: count(total) }),
          lineWords(
            t,
            samples.strands.map((s) => s.strandNo),
          ),
          t("samples.zoom"),
        ]
          .filter(Boolean)
          .join(" ")}
      </p>
    </div>
  );
}

export default SamplesChart;
