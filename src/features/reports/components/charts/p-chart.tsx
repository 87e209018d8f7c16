import { useMemo } from "react";
import { useTranslation } from "react-i18next";
import type { TFunction } from "i18next";
import type { ControlChart } from "@shared/api/reports";
import { INK, SERIES_COLORS } from "@/lib/chart-theme";
import { count, num, pct } from "@/lib/format";
import { pctAxis, tooltipBase } from "./chart-parts";
import { ReportChart } from "./report-chart";

const ALARM = "#a61b1b";
const RULE = "#7a5a10";

/** The plotted value in words: a share (p, Laney) or defects per slab (u). */
export const valueText = (chart: ControlChart["chart"], v: number | null | undefined) => (chart === "u" ? num(v, 3) : pct(v));

/** "rule 2", "rules 2, 4": the Western Electric rules a point completes, beyond rule 1 (marked by its triangle). */
export const ruleWords = (signals: number[], t: TFunction<"analysis">) => {
  const r = signals.filter((s) => s !== 1);
  return r.length === 0 ? "" : t("pChart.rules", { count: r.length, rules: r.join(", ") });
};

const PHASE_LOOK = {
  before: { fill: "rgba(138,152,165,0.10)" },
  baseline: { fill: "rgba(11,93,107,0.10)" },
  monitoring: { fill: "rgba(232,176,74,0.10)" },
} as const;

/**
 * The control chart: each period's value (share affected, or defects per slab on the u-chart), the
 * centre line, and the 3σ limits that move with each period's own n (drawn as steps). A period
 * outside its limits carries a triangle and a label ("above UCL" / "below LCL"); a point completing
 * a Western Electric run rule carries a hollow square and "rule n"; a baseline's phases are shaded
 * and named. Never colour alone.
 */
export function PChart({ data }: { data: ControlChart }) {
  const { t } = useTranslation("analysis");
  const option = useMemo(() => {
    const phaseLabel = (phase: keyof typeof PHASE_LOOK) => t(`pChart.phases.${phase}`);
    const above = t("controlChart.aboveUcl");
    const below = t("controlChart.belowLcl");
    const ucl = t("controlChart.ucl");
    const lcl = t("controlChart.lcl");
    const pts = data.points;
    const u = data.chart === "u";
    const zoom = pts.length > 60;
    const value = (p: ControlChart["points"][number]) => p.value ?? (u ? null : p.p);
    const out = pts.map((p, i) => (p.outOfControl ? { value: [i, value(p)], above: (value(p) ?? 0) > p.ucl } : null)).filter(Boolean) as {
      value: [number, number];
      above: boolean;
    }[];
    // A run of points completing the same rule (eight in a row on one side …) is named once, at its first point.
    const ruled = pts
      .map((p, i) => {
        const words = ruleWords(p.signals, t);
        const repeat = i > 0 && words !== "" && ruleWords(pts[i - 1]!.signals, t) === words;
        return words ? { value: [i, value(p)], words: repeat ? "" : words, below: (p.z ?? 0) < 0 } : null;
      })
      .filter(Boolean) as { value: [number, number]; words: string; below: boolean }[];
    const std = pts.some((p) => p.standardised);
    const yMax = Math.max(u ? 0.05 : 0.01, ...pts.map((p) => Math.max(value(p) ?? 0, p.ucl, p.standardised?.rate ?? 0))) * 1.12;
    const name = u ? t("pChart.seriesU") : data.chart === "laney" ? t("pChart.seriesLaney") : t("pChart.seriesP");
    const stdName = t("pChart.standardised");
    const centreName = u ? t("pChart.centreU") : t("pChart.centreP");
    const outName = t("pChart.outOfControl");
    const ruleName = t("pChart.ruleSignal");
    const limit = data.chart === "laney" ? "3σ·σ_z" : "3σ";
    // Shaded phases, each named at its top: consecutive runs of one phase.
    const runs: { phase: keyof typeof PHASE_LOOK; from: number; to: number }[] = [];
    if (data.baseline) {
      pts.forEach((p, i) => {
        const last = runs[runs.length - 1];
        if (last && last.phase === p.phase) last.to = i;
        else runs.push({ phase: p.phase, from: i, to: i });
      });
    }
    const uclName = `${ucl} (${limit})`;
    const lclName = `${lcl} (${limit})`;
    const legend = [name, ...(std ? [stdName] : []), centreName, uclName, lclName, outName, ...(data.rules.on ? [ruleName] : [])];
    return {
      animation: false,
      grid: { left: 72, right: 24, top: data.baseline ? 76 : 48, bottom: zoom ? 84 : 48 },
      legend: { top: 4, data: legend },
      tooltip: {
        ...tooltipBase,
        trigger: "axis",
        formatter: (ps: { dataIndex: number }[]) => {
          const p = pts[ps[0]?.dataIndex ?? 0];
          if (!p) return "";
          const words = ruleWords(p.signals, t);
          const lines = [
            `<b>${p.period}</b> · ${phaseLabel(p.phase)}`,
            u
              ? t("pChart.tooltip.u", { value: num(p.value, 3), defects: count(p.defects), n: count(p.slabs) })
              : t("pChart.tooltip.p", { value: pct(p.p), affected: count(p.affected), n: count(p.slabs) }),
            t("pChart.tooltip.limits", { ucl: valueText(data.chart, p.ucl), lcl: valueText(data.chart, p.lcl) }),
            ...(p.standardised ? [t("pChart.tooltip.standardised", { value: pct(p.standardised.rate) })] : []),
            ...(p.outOfControl ? [`<b>${t("pChart.tooltip.out", { where: (value(p) ?? 0) > p.ucl ? above : below })}</b>`] : []),
            ...(words ? [`<b>${t("pChart.tooltip.signal", { rules: words })}</b>`] : []),
          ];
          return lines.join("<br/>");
        },
      },
      xAxis: {
        type: "category",
        data: pts.map((p) => p.period),
        name: data.period === "day" ? t("pChart.xDay") : t("pChart.xWeek"),
        nameLocation: "middle",
        nameGap: 30,
        axisLabel: { hideOverlap: true },
      },
      yAxis: {
        type: "value",
        min: 0,
        max: yMax,
        name: u ? t("pChart.yU") : t("pChart.yP"),
        nameLocation: "middle",
        nameRotate: 90,
        nameGap: 50,
        axisLabel: { formatter: u ? (v: number) => num(v, 2) : pctAxis(yMax < 0.05 ? 1 : 0), showMaxLabel: false },
      },
      dataZoom: zoom ? [{ type: "inside" }, { type: "slider", height: 20, bottom: 10 }] : undefined,
      series: [
        {
          type: "line",
          name,
          data: pts.map(value),
          showSymbol: true,
          symbol: "circle",
          symbolSize: 5,
          itemStyle: { color: SERIES_COLORS[0] },
          lineStyle: { color: SERIES_COLORS[0], width: 1.5 },
          z: 3,
          markArea: runs.length
            ? {
                silent: true,
                data: runs.map((r) => [
                  {
                    xAxis: r.from,
                    itemStyle: { color: PHASE_LOOK[r.phase].fill },
                    label: {
                      show: true,
                      position: "insideTop",
                      formatter: phaseLabel(r.phase),
                      color: INK[700],
                      fontSize: 11,
                      fontWeight: 600,
                      offset: [0, -22],
                    },
                  },
                  { xAxis: r.to },
                ]),
              }
            : undefined,
        },
        ...(std
          ? [
              {
                type: "line",
                name: stdName,
                data: pts.map((p) => p.standardised?.rate ?? null),
                showSymbol: true,
                symbol: "diamond",
                symbolSize: 7,
                itemStyle: { color: SERIES_COLORS[3] },
                lineStyle: { color: SERIES_COLORS[3], width: 1.5, type: "dashed" },
                z: 2,
              },
            ]
          : []),
        {
          type: "line",
          name: centreName,
          data: pts.map((p) => p.centre ?? data.centre),
          symbol: "none",
          itemStyle: { color: INK[700] },
          lineStyle: { color: INK[700], width: 1.5 },
          silent: true,
        },
        {
          type: "line",
          name: uclName,
          data: pts.map((p) => p.ucl),
          step: "middle",
          symbol: "none",
          itemStyle: { color: SERIES_COLORS[1] },
          lineStyle: { color: SERIES_COLORS[1], type: "dashed", width: 1.5 },
          silent: true,
        },
        {
          type: "line",
          name: lclName,
          data: pts.map((p) => p.lcl),
          step: "middle",
          symbol: "none",
          itemStyle: { color: SERIES_COLORS[2] },
          lineStyle: { color: SERIES_COLORS[2], type: "dotted", width: 2 },
          silent: true,
        },
        {
          type: "scatter",
          name: outName,
          symbol: "triangle",
          symbolSize: 14,
          itemStyle: { color: ALARM, borderColor: "#ffffff", borderWidth: 1 },
          data: out.map((o) => ({
            value: o.value,
            symbolRotate: o.above ? 0 : 180,
            label: { formatter: o.above ? above : below, position: o.above ? "top" : "bottom" },
          })),
          label: { show: true, fontSize: 11, fontWeight: 700, color: ALARM },
          labelLayout: { hideOverlap: true },
          z: 6,
        },
        ...(data.rules.on
          ? [
              {
                type: "scatter",
                name: ruleName,
                symbol: "emptyRect",
                symbolSize: 13,
                itemStyle: { color: RULE, borderColor: RULE, borderWidth: 2 },
                data: ruled.map((r) => ({ value: r.value, label: { show: r.words !== "", formatter: r.words, position: r.below ? "bottom" : "top" } })),
                label: { show: true, fontSize: 11, fontWeight: 700, color: RULE, distance: 8 },
                labelLayout: { hideOverlap: true },
                z: 5,
              },
            ]
          : []),
      ],
    };
  }, [data, t]);
  const outCount = data.points.filter((p) => p.outOfControl).length;
  return (
    <ReportChart
      option={option}
      height={400}
      testId="p-chart"
      label={t(`pChart.label.${data.period === "day" ? "day" : "week"}`, {
        chart: t(`chartNames.${data.chart}`),
        count: data.points.length,
        n: count(data.points.length),
        out: count(outCount),
      })}
    />
  );
}

export default PChart;
