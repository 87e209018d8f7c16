import { useMemo } from "react";
import { useTranslation } from "react-i18next";
import type { ProcessWindow } from "@shared/api/reports";
import { INK, RATE_RAMP, SPARSE_DECAL, SPARSE_FILL, SPARSE_TEXT } from "@/lib/chart-theme";
import { useTerms } from "@/i18n/terms";
import { pct, pctRange } from "@/lib/format";
import { esc, tooltipBase } from "./chart-parts";
import { binLabel } from "../tables";
import { ReportChart } from "./report-chart";

/**
 * The process window: the share of affected slabs in every cell of two binned conditions, with the
 * count of slabs written in each cell. Cells under the minimum n are grey, hatched and say "too few";
 * the colour scale covers the readable cells only.
 */
export function WindowHeatmap({ data, xDigits, yDigits }: { data: ProcessWindow; xDigits: number; yDigits: number }) {
  const { t } = useTranslation("reports");
  const { variable } = useTerms();
  const xLabel = variable(data.x.key);
  const yLabel = variable(data.y.key);
  const option = useMemo(() => {
    const all = t("window.all");
    const tooFew = t("window.tooFew");
    const xs = data.x.edges.length > 1 ? data.x.edges.slice(0, -1).map((e, i) => binLabel(e, data.x.edges[i + 1]!, xDigits)) : [all];
    const ys = data.y.edges.length > 1 ? data.y.edges.slice(0, -1).map((e, i) => binLabel(e, data.y.edges[i + 1]!, yDigits)) : [all];
    const readable = data.cells.filter((c) => !c.sparse);
    const max = Math.max(0.001, ...readable.map((c) => c.rate ?? 0));
    const unit = (u: string) => (u === "–" ? "" : ` (${u})`);
    const cellAt = (xi: number, yi: number) => data.cells.find((c) => c.xi === xi && c.yi === yi)!;
    return {
      animation: false,
      grid: { left: 118, right: 24, top: 16, bottom: readable.length ? 118 : 64 },
      tooltip: {
        ...tooltipBase,
        trigger: "item",
        formatter: (p: { value: [number, number, number] }) => {
          const c = cellAt(p.value[0], p.value[1]);
          return `${esc(xLabel)} ${binLabel(c.xLower, c.xUpper, xDigits)}${unit(data.x.unit)}<br/>${esc(yLabel)} ${binLabel(c.yLower, c.yUpper, yDigits)}${unit(data.y.unit)}<br/><b>${pct(c.rate)}</b> (${esc(t("rbv.ciRange", { ci: pctRange(c.ciLower, c.ciUpper) }))})<br/>${esc(t("charts.affectedOfN", { affected: c.affected, n: c.slabs }))}${c.sparse ? `<br/><i>${esc(t("window.notToBeRead", { n: data.minN }))}</i>` : ""}`;
        },
      },
      xAxis: {
        type: "category",
        data: xs,
        name: `${xLabel}${unit(data.x.unit)}`,
        nameLocation: "middle",
        nameGap: 32,
        splitArea: { show: false },
        axisLabel: { interval: 0, fontSize: 11 },
      },
      yAxis: {
        type: "category",
        data: ys,
        name: `${yLabel}${unit(data.y.unit)}`,
        nameLocation: "middle",
        nameGap: 100,
        axisLabel: { interval: 0, fontSize: 11 },
      },
      // No readable cell, no colour scale: a scale over nothing would only mislead.
      visualMap:
        readable.length === 0
          ? undefined
          : {
              seriesIndex: 0,
              min: 0,
              max,
              calculable: false,
              orient: "horizontal",
              left: "center",
              bottom: 8,
              itemWidth: 14,
              itemHeight: 220,
              text: [`${pct(max, 1)}`, t("window.scaleLow", { zero: pct(0, 0) })],
              inRange: { color: RATE_RAMP },
            },
      series: [
        {
          type: "heatmap",
          name: t("charts.shareAffected"),
          data: readable.map((c) => ({
            value: [c.xi, c.yi, c.rate ?? 0],
            label: { color: (c.rate ?? 0) > max * 0.55 ? "#ffffff" : INK[900] },
          })),
          label: {
            show: true,
            fontSize: 11,
            lineHeight: 15,
            formatter: (p: { value: [number, number, number] }) => {
              const c = cellAt(p.value[0], p.value[1]);
              return `{b|${pct(c.rate, 1)}}\nn=${c.slabs}`;
            },
            rich: { b: { fontWeight: 700, fontSize: 12 } },
          },
          itemStyle: { borderColor: "#ffffff", borderWidth: 2 },
        },
        {
          type: "heatmap",
          name: t("window.tooFewSlabs"),
          data: data.cells.filter((c) => c.sparse).map((c) => [c.xi, c.yi, 0]),
          itemStyle: { color: SPARSE_FILL, borderColor: "#ffffff", borderWidth: 2, decal: SPARSE_DECAL },
          label: {
            show: true,
            fontSize: 11,
            lineHeight: 15,
            color: SPARSE_TEXT,
            formatter: (p: { value: [number, number, number] }) => `${tooFew}\nn=${cellAt(p.value[0], p.value[1]).slabs}`,
          },
        },
      ],
    };
  }, [data, xDigits, yDigits, t, xLabel, yLabel]);
  const sparse = data.cells.filter((c) => c.sparse).length;
  return (
    <ReportChart
      option={option}
      height={Math.max(360, 64 * Math.max(1, data.y.edges.length - 1) + 140)}
      testId="window-heatmap"
      label={t("window.chartLabel", { x: xLabel, y: yLabel, cells: data.cells.length, sparse })}
    />
  );
}

export default WindowHeatmap;
