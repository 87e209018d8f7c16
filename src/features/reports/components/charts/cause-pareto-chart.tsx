import { useMemo } from "react";
import { useTranslation } from "react-i18next";
import type { CausePareto } from "@shared/api/causes";
import { SERIES_COLORS } from "@/lib/chart-theme";
import { pct } from "@/lib/format";
import { cumulativeShareSeries, esc, paretoYAxes, tooltipBase } from "./chart-parts";
import { ReportChart } from "./report-chart";

/**
 * The Pareto of cause tags: defects carrying each tag as bars split by confidence (solid confirmed,
 * lighter probable, hatched suspected — a pattern as well as a shade), and the cumulative share of
 * taggings as a dashed line.
 */
export function CauseParetoChart({ rows }: { rows: CausePareto["rows"] }) {
  const { t } = useTranslation("reports");
  const option = useMemo(() => {
    const stack = [
      { key: "confirmed" as const, name: t("causePareto.confirmed"), style: { color: SERIES_COLORS[0] } },
      { key: "probable" as const, name: t("causePareto.probable"), style: { color: "#6fa9b3" } },
      {
        key: "suspected" as const,
        name: t("causePareto.suspected"),
        style: {
          color: "#ffffff",
          borderColor: SERIES_COLORS[0],
          borderWidth: 1.2,
          decal: { symbol: "rect", symbolSize: 1, dashArrayX: [1, 0], dashArrayY: [2, 3], rotation: Math.PI / 4, color: "rgba(11,93,107,0.55)" },
        },
      },
    ];
    return {
      animation: false,
      grid: { left: 72, right: 72, top: 48, bottom: 96 },
      legend: { top: 4, data: [...stack.map((s) => s.name), t("charts.cumulativeShare")] },
      tooltip: {
        ...tooltipBase,
        trigger: "axis",
        axisPointer: { type: "shadow" },
        formatter: (ps: { dataIndex: number }[]) => {
          const r = rows[ps[0]?.dataIndex ?? 0];
          if (!r) return "";
          return `<b>${esc(r.name)}</b>${r.retired ? ` ${esc(t("causePareto.retired"))}` : ""}<br/>${esc(t("charts.defectsOnSlabs", { defects: r.defects, slabs: r.slabs }))}<br/>${esc(t("causePareto.tipConfidence", { confirmed: r.confirmed, probable: r.probable, suspected: r.suspected }))}<br/>${esc(t("causePareto.tipShare", { share: pct(r.share, 1), cumulative: pct(r.cumulative, 1) }))}`;
        },
      },
      xAxis: {
        type: "category",
        data: rows.map((r) => r.name),
        name: t("filters.cause"),
        nameLocation: "middle",
        nameGap: 80,
        axisLabel: { interval: 0, fontSize: 11, rotate: rows.length > 4 ? 25 : 0, width: rows.length > 4 ? 150 : 180, overflow: "truncate" },
      },
      yAxis: paretoYAxes(t("cols.defects")),
      series: [
        ...stack.map((s) => ({
          type: "bar",
          name: s.name,
          stack: "defects",
          barMaxWidth: 48,
          itemStyle: s.style,
          data: rows.map((r) => r[s.key]),
        })),
        cumulativeShareSeries(rows.map((r) => r.cumulative)),
      ],
    };
  }, [rows, t]);
  return <ReportChart option={option} height={380} testId="cause-pareto-chart" label={t("causePareto.chartLabel", { n: rows.length })} />;
}

export default CauseParetoChart;
