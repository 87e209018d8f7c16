import { useMemo } from "react";
import { useTranslation } from "react-i18next";
import type { RateByVariable } from "@shared/api/reports";
import { INK, SERIES_COLORS, SPARSE_DECAL, SPARSE_FILL } from "@/lib/chart-theme";
import { useTerms } from "@/i18n/terms";
import { count, num, pct, pctRange } from "@/lib/format";
import { inSentence } from "../report-params";
import { esc, pctAxis, tooltipBase, whiskerSeries } from "./chart-parts";
import { ReportChart } from "./report-chart";

type Api = { value: (d: number) => number; coord: (v: number[]) => number[]; style?: unknown };

/**
 * The rate in each bin of the variable as a bar spanning the bin (unequal bins keep their true
 * width), its Wilson 95 % interval as a whisker, the bin's n above it, and the fitted logistic curve.
 * Bins under the minimum n are grey and hatched.
 */
export function RateBinsChart({ data, digits, minN }: { data: RateByVariable; digits: number; minN: number }) {
  const { t } = useTranslation("reports");
  const { variable: termWords } = useTerms();
  const label = termWords(data.variable.key);
  const option = useMemo(() => {
    const rateName = t("charts.shareAffected");
    const intervalName = t("charts.wilsonInterval");
    const fitName = t("charts.logisticFit");
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
      legend: { top: 4, data: [rateName, intervalName, fitName] },
      tooltip: {
        ...tooltipBase,
        trigger: "item",
        formatter: (p: { seriesIndex: number; dataIndex: number }) => {
          if (p.seriesIndex !== 0) return "";
          const b = bins[p.dataIndex]!;
          return `${num(b.lower, digits + 1)} – ${num(b.upper, digits + 1)}${unit}<br/><b>${pct(b.rate)}</b> (${esc(t("rbv.ciRange", { ci: pctRange(b.ciLower, b.ciUpper) }))})<br/>${esc(t("charts.affectedOfN", { affected: b.affected, n: b.slabs }))}${b.slabs < minN ? `<br/><i>${esc(t("charts.fewerThan", { n: minN }))}</i>` : ""}`;
        },
      },
      xAxis: {
        type: "value",
        min: lo,
        max: hi,
        name: `${label}${unit}`,
        nameLocation: "middle",
        nameGap: 34,
        axisLabel: { formatter: (v: number) => num(v, digits) },
      },
      yAxis: {
        type: "value",
        min: 0,
        max: yMax,
        name: rateName,
        nameLocation: "middle",
        nameRotate: 90,
        nameGap: 46,
        axisLabel: { formatter: pctAxis(yMax < 0.05 ? 1 : 0), showMaxLabel: false },
      },
      series: [
        {
          type: "custom",
          name: rateName,
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
          intervalName,
          bins.map((b) => [(b.lower + b.upper) / 2, b.ciLower, b.ciUpper]),
        ),
        {
          type: "line",
          name: fitName,
          data: fit,
          showSymbol: false,
          lineStyle: { type: "dashed", color: SERIES_COLORS[1], width: 2 },
          itemStyle: { color: SERIES_COLORS[1] },
          z: 5,
          silent: true,
        },
      ],
    };
  }, [data, digits, minN, t, label]);
  return (
    <ReportChart
      option={option}
      height={380}
      testId="rate-chart"
      label={t("charts.binsLabel", { count: data.bins.length, n: count(data.bins.length), variable: inSentence(label) })}
    />
  );
}

export default RateBinsChart;
