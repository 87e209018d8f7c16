import { useMemo } from "react";
import { useTranslation } from "react-i18next";
import type { RateByVariable } from "@shared/api/reports";
import { INK, SERIES_COLORS, SERIES_LINE_TYPES } from "@/lib/chart-theme";
import { useTerms } from "@/i18n/terms";
import { useLevelName } from "@/i18n/levels";
import { num, pct, pctRange } from "@/lib/format";
import { inSentence } from "../report-params";
import { esc, pctAxis, tooltipBase } from "./chart-parts";
import { ReportChart } from "./report-chart";

/** One marker shape per group, so a curve is told by its shape and its end label, not its colour alone. */
export const STRATUM_SYMBOLS = [
  "circle",
  "rect",
  "triangle",
  "diamond",
  "emptyCircle",
  "emptyRect",
  "emptyTriangle",
  "emptyDiamond",
  "pin",
  "arrow",
  "roundRect",
  "emptyRoundRect",
] as const;

type Stratified = NonNullable<RateByVariable["stratified"]>;

/**
 * The rate in the bins of the whole, one curve per group (grade family, strand …): each point at
 * its bin's middle, bins where the group holds fewer than the least slabs left out of its curve.
 * Each curve has its own marker shape and line style, and its name written at its end.
 */
export function StratumRatesChart({ data, stratified, digits }: { data: RateByVariable; stratified: Stratified; digits: number }) {
  const { t } = useTranslation("reports");
  const { variable: termWords } = useTerms();
  const label = termWords(data.variable.key);
  const byLabel = termWords(stratified.by.key);
  const levelName = useLevelName();
  const option = useMemo(() => {
    // Each group's name as shown (the level the server sends stays the key).
    const names = stratified.strata.map((s) => levelName(s.label));
    const unit = data.variable.unit === "–" ? "" : ` (${data.variable.unit})`;
    const lo = data.bins[0]?.lower ?? stratified.strata[0]?.bins[0]?.lower ?? 0;
    const hi = data.bins[data.bins.length - 1]?.upper ?? stratified.strata[0]?.bins.at(-1)?.upper ?? 1;
    const shown = stratified.strata.flatMap((s) => s.bins.filter((b) => !b.sparse && b.rate !== null).map((b) => b.rate!));
    const yMax = Math.max(0.01, ...shown) * 1.15;
    return {
      animation: false,
      grid: { left: 72, right: 96, top: 56, bottom: 56 },
      legend: { top: 4, type: "scroll", data: names },
      tooltip: {
        ...tooltipBase,
        trigger: "item",
        formatter: (p: { seriesIndex: number; dataIndex: number }) => {
          const s = stratified.strata[p.seriesIndex];
          const b = s?.bins[p.dataIndex];
          if (!s || !b) return "";
          return `<b>${esc(names[p.seriesIndex]!)}</b>, ${num(b.lower, digits + 1)} – ${num(b.upper, digits + 1)}${unit}<br/>${esc(t("charts.rateWithCi", { rate: pct(b.rate), ci: pctRange(b.ciLower, b.ciUpper) }))}<br/>${esc(t("charts.affectedOfN", { affected: b.affected, n: b.slabs }))}`;
        },
      },
      xAxis: {
        type: "value",
        min: lo,
        max: hi,
        name: `${label}${unit}`,
        nameLocation: "middle",
        nameGap: 32,
        axisLabel: { formatter: (v: number) => num(v, digits) },
      },
      yAxis: {
        type: "value",
        min: 0,
        max: yMax,
        name: t("charts.shareAffected"),
        nameLocation: "middle",
        nameRotate: 90,
        nameGap: 46,
        axisLabel: { formatter: pctAxis(yMax < 0.05 ? 1 : 0), showMaxLabel: false },
      },
      series: stratified.strata.map((s, i) => {
        const color = SERIES_COLORS[i % SERIES_COLORS.length]!;
        return {
          type: "line",
          name: names[i],
          symbol: STRATUM_SYMBOLS[i % STRATUM_SYMBOLS.length],
          symbolSize: 9,
          showSymbol: true,
          connectNulls: false,
          itemStyle: { color },
          lineStyle: { color, width: 2, type: SERIES_LINE_TYPES[i % SERIES_LINE_TYPES.length] },
          endLabel: { show: true, formatter: names[i], color: INK[900], fontWeight: 600, fontSize: 12, distance: 6 },
          labelLayout: { moveOverlap: "shiftY" },
          data: s.bins.map((b) => [(b.lower + b.upper) / 2, b.sparse || b.rate === null ? null : b.rate]),
        };
      }),
    };
  }, [data, stratified, digits, t, label, levelName]);
  return (
    <ReportChart
      option={option}
      height={380}
      testId="stratum-chart"
      label={t("charts.strataLabel", { variable: inSentence(label), by: inSentence(byLabel), n: stratified.strata.length })}
    />
  );
}

export default StratumRatesChart;
