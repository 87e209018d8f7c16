import { useMemo } from "react";
import { useTranslation } from "react-i18next";
import type { RateByVariable } from "@shared/api/reports";
import { INK, SERIES_COLORS } from "@/lib/chart-theme";
import { useTerms } from "@/i18n/terms";
import { count, num } from "@/lib/format";
import { esc, tooltipBase } from "./chart-parts";
import { ReportChart } from "./report-chart";

type Api = { value: (d: number) => number; coord: (v: number[]) => number[] };

/** A fixed pseudo-random spread in −1…1 for the i-th point, so the strip looks the same on every render. */
const jitter = (i: number) => {
  const x = Math.sin(i * 12.9898 + 78.233) * 43758.5453;
  return 2 * (x - Math.floor(x)) - 1;
};

/**
 * The variable for affected against sound slabs: a box (quartiles, median, whiskers to the minimum
 * and maximum, the mean as a diamond) beside a strip of values taken evenly through each group.
 */
export function DistributionChart({ data, digits }: { data: RateByVariable; digits: number }) {
  const { t } = useTranslation("reports");
  const { variable: termWords } = useTerms();
  const label = termWords(data.variable.key);
  const option = useMemo(() => {
    const { distribution: d, strip, variable } = data;
    const boxName = t("charts.quartiles");
    const meanName = t("charts.mean");
    const stripName = t("charts.sampled");
    const unit = variable.unit === "–" ? "" : ` (${variable.unit})`;
    const groups = [
      { key: "sound" as const, label: t("charts.soundSlabs"), color: SERIES_COLORS[0]!, dist: d.sound, values: strip.sound },
      { key: "affected" as const, label: t("charts.affectedSlabs"), color: SERIES_COLORS[1]!, dist: d.affected, values: strip.affected },
    ];
    const cats = groups.map((g) => `${g.label}\nn = ${count(g.dist.n)}`);
    const box = groups.map((g) => (g.dist.n ? [g.dist.min, g.dist.q1, g.dist.median, g.dist.q3, g.dist.max] : [null, null, null, null, null]));
    return {
      animation: false,
      grid: { left: 130, right: 24, top: 36, bottom: 56 },
      legend: { top: 4, data: [boxName, meanName, stripName] },
      tooltip: {
        ...tooltipBase,
        trigger: "item",
        formatter: (p: { seriesIndex: number; dataIndex: number }) => {
          const g = groups[p.seriesIndex === 0 || p.seriesIndex === 1 ? p.dataIndex : 0]!;
          if (p.seriesIndex > 1) return "";
          const s = g.dist;
          return `<b>${esc(g.label)}</b>, n = ${s.n}<br/>${esc(
            t("charts.quantilesTip", {
              min: num(s.min, digits),
              q1: num(s.q1, digits),
              median: num(s.median, digits),
              q3: num(s.q3, digits),
              max: num(s.max, digits),
            }),
          )}<br/>${esc(t("charts.meanTip", { mean: num(s.mean, digits + 1) }))}${unit}`;
        },
      },
      yAxis: { type: "category", data: cats, axisLabel: { fontWeight: 600, lineHeight: 18 } },
      xAxis: {
        type: "value",
        scale: true,
        name: `${label}${unit}`,
        nameLocation: "middle",
        nameGap: 32,
        axisLabel: { formatter: (v: number) => num(v, digits) },
      },
      series: [
        {
          type: "boxplot",
          name: boxName,
          data: box,
          boxWidth: [14, 26],
          itemStyle: { color: "#ffffff", borderColor: INK[900], borderWidth: 1.6 },
        },
        {
          type: "scatter",
          name: meanName,
          symbol: "diamond",
          symbolSize: 13,
          itemStyle: { color: "#ffffff", borderColor: INK[900], borderWidth: 2 },
          data: groups.map((g, i) => (g.dist.mean === null ? null : [g.dist.mean, i])),
          z: 5,
        },
        {
          type: "custom",
          name: stripName,
          itemStyle: { color: INK[600] },
          encode: { x: 0, y: 1 },
          data: groups.flatMap((g, gi) => g.values.map((v, i) => [v, gi, i])),
          silent: true,
          renderItem: (_: unknown, api: Api) => {
            const c = api.coord([api.value(0), api.value(1)]);
            const gi = api.value(1);
            // The strip sits below its box, spread a little so equal values stay visible.
            const y = c[1]! + 26 + jitter(api.value(2) + gi * 1000) * 9;
            return { type: "circle", shape: { cx: c[0], cy: y, r: 2.4 }, style: { fill: groups[gi]!.color, opacity: 0.55 } };
          },
        },
      ],
    };
  }, [data, digits, t, label]);
  return <ReportChart option={option} height={300} testId="distribution-chart" label={t("charts.distributionLabel", { variable: label })} />;
}

export default DistributionChart;
