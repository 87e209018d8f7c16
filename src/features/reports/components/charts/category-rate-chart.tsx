import { useMemo } from "react";
import { useTranslation } from "react-i18next";
import { INK, SERIES_COLORS, SPARSE_DECAL, SPARSE_FILL } from "@/lib/chart-theme";
import { count, pct, pctRange } from "@/lib/format";
import { esc, pctAxis, tooltipBase, whiskerSeries } from "./chart-parts";
import { ReportChart } from "./report-chart";

export interface RateRow {
  label: string;
  slabs: number;
  affected: number;
  rate: number | null;
  ciLower: number | null;
  ciUpper: number | null;
}

/**
 * Rates of named groups (grades, strands, periods, the two sides of a comparison) with Wilson 95 %
 * whiskers. Bars for a few groups, with n under each name; points joined by a line for a series of
 * periods, with n in the tooltip (and in the table under the chart). Groups under `fewN` slabs are
 * grey and hatched.
 */
export function CategoryRateChart({
  rows,
  mode = "bars",
  fewN,
  testId,
  label,
  height = 320,
  xName,
  second,
}: {
  rows: RateRow[];
  mode?: "bars" | "points";
  fewN: number;
  testId: string;
  label: string;
  height?: number;
  xName?: string;
  /** Points mode: a second rate per row (a standardised rate) drawn as a dashed line with diamonds; null where there is none. */
  second?: { name: string; rates: (number | null)[] };
}) {
  const { t } = useTranslation("reports");
  const option = useMemo(() => {
    const rateName = t("charts.shareAffected");
    const intervalName = t("charts.wilsonInterval");
    const yMax = Math.max(0.01, ...rows.map((r) => r.ciUpper ?? 0), ...(second?.rates.map((v) => v ?? 0) ?? [])) * 1.12;
    const cats = rows.map((r) => (mode === "bars" ? `${r.label}\nn = ${count(r.slabs)}` : r.label));
    const zoom = mode === "points" && rows.length > 60;
    return {
      animation: false,
      grid: { left: 72, right: 24, top: 40, bottom: zoom ? 84 : mode === "bars" ? 56 : 48 },
      legend: { top: 4, data: [rateName, intervalName, ...(second && mode === "points" ? [second.name] : [])] },
      tooltip: {
        ...tooltipBase,
        trigger: "axis",
        axisPointer: { type: "shadow" },
        formatter: (ps: { dataIndex: number }[]) => {
          const r = rows[ps[0]?.dataIndex ?? 0];
          if (!r) return "";
          const s2 = second && mode === "points" ? second.rates[ps[0]?.dataIndex ?? 0] : undefined;
          const lines = [
            `<b>${esc(r.label)}</b>`,
            esc(t("charts.rateWithCi", { rate: pct(r.rate), ci: pctRange(r.ciLower, r.ciUpper) })),
            esc(t("charts.affectedOfN", { affected: r.affected, n: r.slabs })),
            ...(s2 !== undefined ? [`${esc(second!.name)}: ${pct(s2)}`] : []),
            ...(r.slabs < fewN ? [`<i>${esc(t("charts.fewerThan", { n: fewN }))}</i>`] : []),
          ];
          return lines.join("<br/>");
        },
      },
      xAxis: {
        type: "category",
        data: cats,
        name: xName,
        nameLocation: "middle",
        nameGap: mode === "bars" ? 42 : 30,
        axisLabel: { interval: mode === "bars" ? 0 : "auto", fontSize: 11, lineHeight: 15, hideOverlap: mode !== "bars" },
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
      dataZoom: zoom ? [{ type: "inside" }, { type: "slider", height: 20, bottom: 10 }] : undefined,
      series: [
        mode === "bars"
          ? {
              type: "bar",
              name: rateName,
              barMaxWidth: 56,
              itemStyle: { color: SERIES_COLORS[0] },
              data: rows.map((r) =>
                r.slabs < fewN
                  ? { value: r.rate ?? 0, itemStyle: { color: SPARSE_FILL, borderColor: INK[600], borderType: "dashed", borderWidth: 1, decal: SPARSE_DECAL } }
                  : { value: r.rate ?? 0 },
              ),
            }
          : {
              type: "line",
              name: rateName,
              showSymbol: true,
              symbol: "circle",
              symbolSize: 6,
              lineStyle: { width: 1.5, color: SERIES_COLORS[0] },
              itemStyle: { color: SERIES_COLORS[0] },
              data: rows.map((r) => (r.slabs < fewN ? { value: r.rate, symbol: "emptyCircle", itemStyle: { color: INK[600] } } : { value: r.rate })),
            },
        whiskerSeries(
          intervalName,
          rows.map((r, i) => [i, r.ciLower ?? 0, r.ciUpper ?? 0]),
          { cap: mode === "bars" ? 8 : 3, color: mode === "bars" ? INK[900] : INK[600] },
        ),
        ...(second && mode === "points"
          ? [
              {
                type: "line",
                name: second.name,
                showSymbol: true,
                symbol: "diamond",
                symbolSize: 8,
                lineStyle: { width: 1.8, type: "dashed", color: SERIES_COLORS[1] },
                itemStyle: { color: SERIES_COLORS[1] },
                data: second.rates,
                z: 4,
              },
            ]
          : []),
      ],
    };
  }, [rows, mode, fewN, xName, second, t]);
  return <ReportChart option={option} height={height} testId={testId} label={label} />;
}

export default CategoryRateChart;
