import { useMemo } from "react";
import { useTranslation } from "react-i18next";
import { FONT, INK, SERIES_COLORS } from "@/lib/chart-theme";
import { count, pValue, sig } from "@/lib/format";
import { esc, tooltipBase } from "./chart-parts";
import { ReportChart } from "./report-chart";

export interface ForestRow {
  /** The term's name ("Casting speed") and what its odds ratio is per ("per 0.1 m/min", "PER against LC"). */
  label: string;
  per: string;
  crude: { oddsRatio: number | null; ciLower: number | null; ciUpper: number | null; p: number | null };
  adjusted: { oddsRatio: number | null; ciLower: number | null; ciUpper: number | null; p: number | null };
  /** Why there is no estimate (separation, no spread …). */
  reason: string | null;
}

type Api = { value: (d: number) => number; coord: (v: number[]) => number[]; size: (v: number[]) => number[] };

const LOG10 = Math.log10;
const finite = (v: number | null | undefined): v is number => v !== null && v !== undefined && Number.isFinite(v) && v > 0;

/**
 * Ticks of a logarithmic odds-ratio axis at readable values (0.5, 1, 2 …): the first ladder of
 * mantissas that gives between four and nine ticks over the range.
 */
export function oddsTicks(lo: number, hi: number): number[] {
  const ladders = [
    [1],
    [1, 3],
    [1, 2, 5],
    [1, 1.5, 2, 3, 5, 7],
    [1, 1.2, 1.5, 2, 2.5, 3, 4, 5, 6, 8],
    [1, 1.1, 1.2, 1.3, 1.4, 1.5, 1.6, 1.8, 2, 2.2, 2.5, 3, 3.5, 4, 5, 6, 7, 8, 9],
  ];
  let best: number[] = [];
  for (const ladder of ladders) {
    const ticks: number[] = [];
    for (let d = Math.floor(LOG10(lo)) - 1; d <= Math.ceil(LOG10(hi)) + 1; d++) {
      for (const m of ladder) {
        const v = Number((m * 10 ** d).toPrecision(6));
        if (v >= lo && v <= hi) ticks.push(v);
      }
    }
    best = ticks;
    if (ticks.length >= 4) break;
  }
  return best.length > 9 ? best.filter((_, i) => i % Math.ceil(best.length / 9) === 0) : best;
}

const CRUDE = { color: INK[700] };
const ADJUSTED = { color: SERIES_COLORS[0]! };

/**
 * The forest plot of the adjusted model: per term, the crude odds ratio (hollow circle) above the
 * adjusted one (filled square), each with its 95 % interval as a whisker and its value written at
 * the whisker's end, on a logarithmic axis with a line at 1 (no association). Shape and label tell
 * the two apart, not colour alone.
 */
export function ForestPlot({ rows, testId = "forest-plot" }: { rows: ForestRow[]; testId?: string }) {
  const { t } = useTranslation("analysis");
  const option = useMemo(() => {
    const crudeName = t("forest.crude");
    const adjustedName = t("forest.adjusted");
    const values = rows
      .flatMap((r) => [r.crude.ciLower, r.crude.ciUpper, r.adjusted.ciLower, r.adjusted.ciUpper, r.crude.oddsRatio, r.adjusted.oddsRatio])
      .filter(finite);
    const lo = Math.min(1, ...values) / 1.15;
    // Room on the right for the value written after each whisker.
    const hi = Math.max(1, ...values) * 1.15;
    const span = LOG10(hi) - LOG10(lo);
    const xMin = LOG10(lo);
    const xMax = LOG10(hi) + span * 0.16;
    const ticks = oddsTicks(lo, 10 ** xMax).map(LOG10);
    const cats = rows.map((r) => `${r.label}\n${r.per}`);
    const mark = (which: "crude" | "adjusted") => {
      const look = which === "crude" ? CRUDE : ADJUSTED;
      return {
        type: "custom",
        name: which === "crude" ? crudeName : adjustedName,
        itemStyle: { color: look.color },
        encode: { x: [1, 2, 3], y: 0 },
        data: rows.map((r, i) => {
          const e = r[which];
          return finite(e.oddsRatio) && finite(e.ciLower) && finite(e.ciUpper)
            ? [i, LOG10(e.oddsRatio), LOG10(e.ciLower), LOG10(e.ciUpper)]
            : [i, NaN, NaN, NaN];
        }),
        renderItem: (_: unknown, api: Api) => {
          const i = api.value(0);
          const x = api.value(1);
          if (!Number.isFinite(x)) return null;
          const band = api.size([0, 1])[1] ?? 40;
          const dy = (which === "crude" ? -1 : 1) * Math.min(12, band * 0.2);
          const c = api.coord([x, i]);
          const l = api.coord([api.value(2), i]);
          const h = api.coord([api.value(3), i]);
          const y = c[1]! + dy;
          const stroke = { stroke: look.color, lineWidth: 1.8 };
          const r = 6;
          return {
            type: "group",
            children: [
              { type: "line", shape: { x1: l[0], y1: y, x2: h[0], y2: y }, style: stroke },
              { type: "line", shape: { x1: l[0], y1: y - 4, x2: l[0], y2: y + 4 }, style: stroke },
              { type: "line", shape: { x1: h[0], y1: y - 4, x2: h[0], y2: y + 4 }, style: stroke },
              which === "crude"
                ? { type: "circle", shape: { cx: c[0], cy: y, r }, style: { fill: "#ffffff", stroke: look.color, lineWidth: 2 } }
                : {
                    type: "rect",
                    shape: { x: c[0]! - r, y: y - r, width: 2 * r, height: 2 * r },
                    style: { fill: look.color, stroke: "#ffffff", lineWidth: 1 },
                  },
              {
                type: "text",
                style: {
                  text: sig(10 ** x, 3),
                  x: h[0]! + 6,
                  y,
                  align: "left",
                  verticalAlign: "middle",
                  fill: which === "crude" ? INK[700] : INK[900],
                  fontFamily: FONT,
                  fontSize: 11,
                  fontWeight: which === "crude" ? 400 : 700,
                  // Paper behind the value, so the line at 1 or a grid line never runs through it.
                  backgroundColor: "#ffffff",
                  padding: [1, 2],
                },
              },
            ],
          };
        },
        z: which === "crude" ? 4 : 5,
      };
    };
    return {
      animation: false,
      grid: { left: 8, right: 16, top: 40, bottom: 52, containLabel: true },
      legend: {
        top: 4,
        data: [
          { name: crudeName, icon: "path://M10 2a8 8 0 1 0 0.001 0zM10 5a5 5 0 1 1 -0.001 0z" },
          { name: adjustedName, icon: "rect" },
        ],
        itemWidth: 14,
        itemHeight: 14,
      },
      tooltip: {
        ...tooltipBase,
        trigger: "item",
        formatter: (p: { dataIndex: number }) => {
          const r = rows[p.dataIndex];
          if (!r) return "";
          const line = (name: string, e: ForestRow["crude"]) =>
            t("forest.tooltipLine", {
              name,
              or: `<b>${sig(e.oddsRatio, 3)}</b>`,
              lower: sig(e.ciLower, 3),
              upper: sig(e.ciUpper, 3),
              p: pValue(e.p),
            });
          return `<b>${esc(r.label)}</b>, ${esc(r.per)}<br/>${line(t("forest.crudeShort"), r.crude)}<br/>${line(t("forest.adjustedShort"), r.adjusted)}${r.reason ? `<br/><i>${esc(r.reason)}</i>` : ""}`;
        },
      },
      xAxis: {
        type: "value",
        min: xMin,
        max: xMax,
        name: t("forest.xAxis"),
        nameLocation: "middle",
        nameGap: 30,
        axisTick: { customValues: ticks },
        axisLabel: { customValues: ticks, formatter: (v: number) => sig(10 ** v, 2) },
        splitLine: { show: false },
      },
      yAxis: {
        type: "category",
        data: cats,
        inverse: true,
        axisTick: { show: false },
        axisLabel: {
          fontSize: 12,
          lineHeight: 16,
          formatter: (v: string) => {
            const [name, per] = v.split("\n");
            return `{name|${name}}\n{per|${per}}`;
          },
          rich: { name: { fontWeight: 600, color: INK[900], fontSize: 12, fontFamily: FONT }, per: { color: INK[600], fontSize: 11, fontFamily: FONT } },
        },
        splitLine: { show: true, lineStyle: { color: INK[100] } },
      },
      series: [
        mark("crude"),
        mark("adjusted"),
        {
          // The line at 1 and the grid lines at the ticks, behind the marks.
          type: "line",
          data: [],
          silent: true,
          markLine: {
            silent: true,
            symbol: "none",
            label: { show: false },
            data: [
              { xAxis: 0, lineStyle: { color: INK[900], width: 1.6, type: "solid" } },
              ...ticks.filter((t) => Math.abs(t) > 1e-9).map((t) => ({ xAxis: t, lineStyle: { color: INK[100], width: 1, type: "solid" } })),
            ],
          },
        },
        {
          // Terms without an estimate say so in their row, in words.
          type: "custom",
          name: t("forest.notEstimable"),
          silent: true,
          data: rows.map((r, i) => (finite(r.adjusted.oddsRatio) ? [i, NaN] : [i, 0])),
          encode: { y: 0 },
          renderItem: (_: unknown, api: Api) => {
            if (!Number.isFinite(api.value(1))) return null;
            const c = api.coord([0, api.value(0)]);
            return {
              type: "text",
              style: {
                text: t("forest.noEstimate"),
                x: c[0]! + 8,
                y: c[1],
                verticalAlign: "middle",
                fill: INK[700],
                fontFamily: FONT,
                fontSize: 11,
                fontStyle: "italic",
              },
            };
          },
        },
      ],
    };
  }, [rows, t]);
  const height = Math.max(220, rows.length * 64 + 100);
  return <ReportChart option={option} height={height} testId={testId} label={t("forest.label", { count: rows.length, n: count(rows.length) })} />;
}

export default ForestPlot;
