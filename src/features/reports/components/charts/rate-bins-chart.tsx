import { useMemo } from "react";
import type { RateByVariable } from "@shared/api/reports";
import { INK, SERIES_COLORS, SPARSE_DECAL, SPARSE_FILL } from "@/lib/chart-theme";
import { lowerFirst, num, pct, pctRange, plural } from "@/lib/format";
import { pctAxis, tooltipBase, whiskerSeries } from "./chart-parts";
import { ReportChart } from "./report-chart";

type Api = { value: (d: number) => number; coord: (v: number[]) => number[]; style?: unknown };

/**
 * The rate in each bin of the variable as a bar spanning the bin (unequal bins keep their true
 * width), its Wilson 95 % interval as a whisker, the bin's n above it, and the fitted logistic curve.
 * Bins under the minimum n are grey and hatched.
 */
export function RateBinsChart({ data, digits, minN }: { data: RateByVariable; digits: number; minN: number }) {
  const option = useMemo(() => {
    const { bins, variable, logistic } = data;
    const unit = variable.unit === "–" ? "" : ` (${variable.unit})`;
    const lo = bins[0]?.lower ?? 0;
    const hi = bins[bins.length - 1]?.upper ?? 1;
    const yMax = Math.max(0.01, ...bins.map((b) => b.ciUpper)) * 1.18;
    const fit =
      logistic.intercept !== null && logistic.slope !== null && bins.length
        ? Array.from({ length: 61 }, (_, i) => {
            const x = lo + ((hi - lo) * i) / 60;
            return [x, 1 / (1 + Math.exp(-(logistic.intercept! + logistic.slope! * x)))];
          })
        : [];
    return {
      animation: false,
      grid: { left: 72, right: 24, top: 48, bottom: 64 },
      legend: { top: 4, data: ["Share of slabs affected", "95 % interval (Wilson)", "Logistic fit"] },
      tooltip: {
        ...tooltipBase,
        trigger: "item",
        formatter: (p: { seriesIndex: number; dataIndex: number }) => {
          if (p.seriesIndex !== 0) return "";
          const b = bins[p.dataIndex]!;
          return `${num(b.lower, digits + 1)} – ${num(b.upper, digits + 1)}${unit}<br/><b>${pct(b.rate)}</b> (95 % CI ${pctRange(b.ciLower, b.ciUpper)})<br/>${b.affected} affected of n = ${b.slabs}${b.slabs < minN ? "<br/><i>fewer than " + minN + " slabs</i>" : ""}`;
        },
      },
      xAxis: {
        type: "value",
        min: lo,
        max: hi,
        name: `${variable.label}${unit}`,
        nameLocation: "middle",
        nameGap: 34,
        axisLabel: { formatter: (v: number) => num(v, digits) },
      },
      yAxis: {
        type: "value",
        min: 0,
        max: yMax,
        name: "Share of slabs affected",
        nameLocation: "middle",
        nameRotate: 90,
        nameGap: 46,
        axisLabel: { formatter: pctAxis(yMax < 0.05 ? 1 : 0), showMaxLabel: false },
      },
      series: [
        {
          type: "custom",
          name: "Share of slabs affected",
          itemStyle: { color: SERIES_COLORS[0] },
          encode: { x: [0, 1], y: 2 },
          data: bins.map((b) => [b.lower, b.upper, b.rate, b.slabs, b.ciUpper]),
          renderItem: (_: unknown, api: Api) => {
            const a = api.coord([api.value(0), api.value(2)]);
            const z = api.coord([api.value(1), 0]);
            const sparse = api.value(3) < minN;
            const top = api.coord([api.value(0), api.value(4)]);
            return {
              type: "group",
              children: [
                {
                  type: "rect",
                  shape: { x: a[0]! + 1, y: a[1], width: Math.max(1, z[0]! - a[0]! - 2), height: z[1]! - a[1]! },
                  style: sparse
                    ? { fill: SPARSE_FILL, stroke: INK[600], lineWidth: 1, lineDash: [4, 3], decal: SPARSE_DECAL }
                    : { fill: SERIES_COLORS[0], opacity: 0.85 },
                },
                {
                  type: "text",
                  style: {
                    text: `n=${api.value(3)}`,
                    x: (a[0]! + z[0]!) / 2,
                    y: top[1]! - 6,
                    align: "center",
                    verticalAlign: "bottom",
                    fill: sparse ? INK[600] : INK[900],
                    fontSize: 11,
                    fontWeight: sparse ? 400 : 600,
                  },
                },
              ],
            };
          },
        },
        whiskerSeries(
          "95 % interval (Wilson)",
          bins.map((b) => [(b.lower + b.upper) / 2, b.ciLower, b.ciUpper]),
        ),
        {
          type: "line",
          name: "Logistic fit",
          data: fit,
          showSymbol: false,
          lineStyle: { type: "dashed", color: SERIES_COLORS[1], width: 2 },
          itemStyle: { color: SERIES_COLORS[1] },
          z: 5,
          silent: true,
        },
      ],
    };
  }, [data, digits, minN]);
  return (
    <ReportChart
      option={option}
      height={380}
      testId="rate-chart"
      label={`Share of slabs affected in ${plural(data.bins.length, "bin")} of ${lowerFirst(data.variable.label)}, with 95 % intervals`}
    />
  );
}

export default RateBinsChart;
