/**
 * Control charts of the affected share (p, Laney p′) or of defects per slab (u) by day or ISO week:
 * limits from a baseline (Phase I) applied unchanged to later periods (Phase II), Western Electric
 * run rules, and Laney's σ_z to say when the p-chart's binomial limits are too narrow.
 */
import type { z } from "zod";
import type { ControlChart, controlChartQuerySchema } from "@shared/api/reports";
import type { Db } from "../../db/client";
import { parseDateBound } from "../../lib/dates";
import { badRequest } from "../../lib/http-error";
import { chiSquareIndependence } from "../../stats/contingency";
import {
  laneyPChart,
  pChartWithBaseline,
  uChartWithBaseline,
  WESTERN_ELECTRIC_RULES,
  westernElectricRules,
  type ChartSample,
  type PhasedChart,
} from "../../stats/control";
import { byPeriod, defectsByPeriod, periodOf } from "./periods";
import { buildScope, finite, scan } from "./scope";
import { standardisedByPeriod } from "./strata";

type Query = z.output<typeof controlChartQuerySchema>;
type Phase = ControlChart["points"][number]["phase"];

const f2 = (x: number) => x.toFixed(2);
const pText = (p: number) => (p < 1e-4 ? p.toExponential(1) : p.toPrecision(2));

export function controlChart(db: Db, q: Query): ControlChart {
  if (q.chart === "u" && q.standardise) {
    throw badRequest(
      "Standardised rates are shares of slabs affected; the u-chart counts defects per slab. Choose the p or Laney chart to see standardised rates.",
      { field: "standardise" },
    );
  }
  const scope = buildScope(db, q);
  const sc = scan(db, scope);
  const rows = byPeriod(sc, q.period);
  const { byPeriod: defectsBy } = defectsByPeriod(db, scope, sc, q.period);

  // Which periods are the baseline (Phase I); without one, every period shown is.
  let phaseOf: (label: string) => Phase = () => "baseline";
  let baseline: ControlChart["baseline"] = null;
  if (q.baselineFrom || q.baselineTo) {
    if (!q.baselineFrom || !q.baselineTo) {
      throw badRequest("Give both the first day (baselineFrom) and the last day (baselineTo) of the baseline, or neither.", {
        field: q.baselineFrom ? "baselineTo" : "baselineFrom",
      });
    }
    const from = parseDateBound(q.baselineFrom, false, "baselineFrom")!;
    const to = parseDateBound(q.baselineTo, true, "baselineTo")!;
    if (from > to)
      throw badRequest(`The baseline ends (${q.baselineTo}) before it starts (${q.baselineFrom}): give its first day first.`, { field: "baselineTo" });
    const first = periodOf(from, q.period);
    const last = periodOf(to, q.period);
    phaseOf = (l) => (l < first ? "before" : l > last ? "monitoring" : "baseline");
    const inBase = rows.filter((r) => phaseOf(r.period) === "baseline");
    const slabs = inBase.reduce((s, r) => s + r.n, 0);
    if (slabs === 0) {
      throw badRequest(
        `The baseline ${q.baselineFrom} to ${q.baselineTo} holds no slab in these filters: there is nothing to set the limits on. Choose a baseline within the dates and filters shown.`,
        {
          field: "baselineFrom",
        },
      );
    }
    baseline = {
      from: q.baselineFrom,
      to: q.baselineTo,
      firstPeriod: inBase[0]?.period ?? null,
      lastPeriod: inBase[inBase.length - 1]?.period ?? null,
      periods: inBase.length,
      slabs,
    };
  }

  const isU = q.chart === "u";
  const sample = (r: (typeof rows)[number]): ChartSample => ({ period: r.period, n: r.n, x: isU ? (defectsBy.get(r.period) ?? 0) : r.x });
  const base = rows.filter((r) => phaseOf(r.period) === "baseline").map(sample);
  const others = rows.filter((r) => phaseOf(r.period) !== "baseline").map(sample);
  const chart: PhasedChart = isU ? uChartWithBaseline(base, others) : q.chart === "laney" ? laneyPChart(base, others) : pChartWithBaseline(base, others);
  if (rows.length === 0) {
    return {
      period: q.period,
      chart: q.chart,
      slabs: 0,
      affected: 0,
      defects: 0,
      pBar: null,
      centre: null,
      baseline,
      overdispersion: null,
      rules: { on: q.rules === "on", legend: { ...WESTERN_ELECTRIC_RULES }, method: "" },
      points: [],
      method: "",
      notes: ["No slab in these filters: there is no period to chart."],
    };
  }
  if (chart.reason || chart.centre === null) {
    // Only the p′ chart can lack limits once the baseline holds slabs (its σ_z needs variation).
    throw badRequest(
      `The ${q.chart === "laney" ? "Laney p′ chart" : "chart"} cannot be drawn on these slabs: ${chart.reason ?? "no centre line"}. The p-chart (chart=p) can.`,
      { field: "chart" },
    );
  }
  const byLabel = new Map(chart.points.map((p) => [p.period, p]));
  const ordered = rows.map((r) => byLabel.get(r.period)!);
  const rules = q.rules === "on" ? westernElectricRules(ordered.map((p) => p.z)) : null;

  const notes: string[] = [];
  if (baseline) {
    if (q.period === "week")
      notes.push(`By week, the baseline is the whole ISO weeks holding its first and last day (${baseline.firstPeriod} to ${baseline.lastPeriod}).`);
    notes.push(...chart.notes.filter((n) => !n.startsWith("σ_z")));
  }

  // Overdispersion: Laney's σ_z and the chi-square test of equal shares over the baseline periods.
  let overdispersion: ControlChart["overdispersion"] = null;
  if (!isU) {
    const laney = q.chart === "laney" ? chart : laneyPChart(base, others);
    const chi = base.length > 1 ? chiSquareIndependence(base.map((s) => [s.x, s.n - s.x])) : null;
    const chiP = chi ? finite(chi.p) : null;
    const sigmaZ = laney.sigmaZ;
    const applies = sigmaZ !== null && sigmaZ > 1 && chiP !== null && chiP < 0.05;
    const where = baseline ? "the baseline" : "the periods shown";
    let note: string;
    if (sigmaZ === null || !(sigmaZ > 0)) note = `σ_z is undefined: ${laney.reason ?? "no moving range"}.`;
    else if (applies) {
      note =
        `σ_z = ${f2(sigmaZ)} (the average moving range of consecutive periods' z-scores in ${where} over 1.128): the share affected varies about ${f2(sigmaZ)} times as much from period to period as chance between slabs allows, ` +
        `and the chi-square test of one share for every period rejects that chance alone (p = ${pText(chiP!)}). This is overdispersion: the p-chart's limits are too narrow and flag ordinary period-to-period variation. ` +
        (q.chart === "laney" ? "The Laney p′ chart drawn here widens them by σ_z." : "The Laney p′ chart (chart=laney) applies: it widens them by σ_z.");
    } else {
      note =
        `σ_z = ${f2(sigmaZ)} (the average moving range of consecutive periods' z-scores in ${where} over 1.128)` +
        (chiP !== null ? `; the chi-square test of one share for every period gives p = ${pText(chiP)}` : "") +
        `: no overdispersion shown, the p-chart applies` +
        (q.chart === "laney" ? "; the Laney p′ chart drawn here on request differs from it by the factor σ_z." : ".");
    }
    overdispersion = {
      sigmaZ: sigmaZ !== null ? finite(sigmaZ) : null,
      chi2: chi ? finite(chi.statistic) : null,
      df: chi?.df ?? null,
      p: chiP,
      applies,
      reason: sigmaZ === null ? laney.reason : null,
      note,
    };
    if (applies && q.chart === "p") notes.push(note);
  }

  const std = q.standardise ? standardisedByPeriod(db, sc, q.period) : null;
  if (std)
    notes.push(
      ...std.notes,
      "The limits are for the crude share affected; the standardised rates stand beside it for comparing periods with different grade-family mixes.",
    );

  const points = ordered.map((p, k) => {
    const r = rows[k]!;
    return {
      period: p.period,
      slabs: r.n,
      affected: r.x,
      p: r.x / r.n,
      ucl: p.ucl!,
      lcl: p.lcl!,
      outOfControl: p.outOfControl,
      defects: defectsBy.get(p.period) ?? 0,
      value: p.value,
      centre: p.centre,
      z: p.z !== null ? finite(p.z) : null,
      phase: phaseOf(p.period),
      signals: rules ? rules.rules[k]! : [],
      ...(std ? { standardised: std.rates.get(p.period)! } : {}),
    };
  });
  const slabs = rows.reduce((s, r) => s + r.n, 0);
  const method = baseline
    ? chart.method
    : isU
      ? "u-chart, 3σ limits ū ± 3√(ū/nᵢ) for each period's own number of slabs, lower limit held at 0; ū from every period shown (no baseline chosen)"
      : q.chart === "laney"
        ? "Laney p′ chart: 3σ limits p̄ ± 3σ_pᵢσ_z with σ_pᵢ = √(p̄(1 − p̄)/nᵢ) and σ_z = MR̄/1.128 of the z-scores of consecutive periods; p̄ and σ_z from every period shown (no baseline chosen); limits held within [0, 1]"
        : "p-chart, 3σ limits p̄ ± 3√(p̄(1 − p̄)/nᵢ) for each period's own number of slabs, held within [0, 1]; p̄ from every period shown (no baseline chosen)";
  return {
    period: q.period,
    chart: q.chart,
    slabs,
    affected: rows.reduce((s, r) => s + r.x, 0),
    defects: rows.reduce((s, r) => s + (defectsBy.get(r.period) ?? 0), 0),
    pBar: isU ? null : chart.centre,
    centre: chart.centre,
    baseline,
    overdispersion,
    rules: {
      on: rules !== null,
      legend: { ...WESTERN_ELECTRIC_RULES },
      method: rules
        ? `${rules.method}; σ is the chart's own (widened by σ_z on the Laney chart)`
        : "run rules switched off: only points beyond the limits are marked",
    },
    ...(std ? { standardisation: std.standardisation } : {}),
    points,
    method,
    notes,
  };
}
