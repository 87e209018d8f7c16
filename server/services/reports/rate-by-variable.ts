/** Rate against one condition: bins with Wilson intervals, rank and logistic association, the two distributions. */
import type { z } from "zod";
import type { RateByVariable, rateByVariableQuerySchema } from "@shared/api/reports";
import type { Db } from "../../db/client";
import { binnedRates, equalWidthEdges, quantileEdges } from "../../stats/binning";
import { logisticRegression } from "../../stats/logistic";
import { mannWhitneyGrouped } from "../../stats/mann-whitney";
import type { Group } from "../../stats/ranks";
import { correlationsWithOutcome } from "../../stats/spearman";
import { buildScope, finite, scan, SMALL_AFFECTED, variableGroups, variableSpec } from "./scope";

function quantilesOf(groups: Group[], pick: (g: Group) => number) {
  const n = groups.reduce((s, g) => s + pick(g), 0);
  if (n === 0) return { n: 0, min: null, q1: null, median: null, q3: null, max: null, mean: null };
  const at = (q: number) => {
    // Type 7 quantile (R's default) on the grouped observations.
    const h = (n - 1) * q;
    const lo = Math.floor(h);
    const valueAt = (i: number) => {
      let cum = 0;
      for (const g of groups) {
        cum += pick(g);
        if (i < cum) return g.value;
      }
      return groups[groups.length - 1]!.value;
    };
    const a = valueAt(lo);
    const b = valueAt(Math.min(n - 1, lo + 1));
    return a + (h - lo) * (b - a);
  };
  let sum = 0;
  for (const g of groups) sum += g.value * pick(g);
  const present = groups.filter((g) => pick(g) > 0);
  return { n, min: present[0]!.value, q1: at(0.25), median: at(0.5), q3: at(0.75), max: present[present.length - 1]!.value, mean: sum / n };
}

/** Up to k values taken evenly through a group's distribution (for a strip plot). */
function stripOf(groups: Group[], pick: (g: Group) => number, k = 300): number[] {
  const n = groups.reduce((s, g) => s + pick(g), 0);
  if (n === 0) return [];
  const take = Math.min(k, n);
  const out: number[] = [];
  let cum = 0;
  let gi = 0;
  for (let i = 0; i < take; i++) {
    const target = Math.floor(((i + 0.5) * n) / take);
    while (gi < groups.length && cum + pick(groups[gi]!) <= target) {
      cum += pick(groups[gi]!);
      gi++;
    }
    out.push(groups[Math.min(gi, groups.length - 1)]!.value);
  }
  return out;
}

export function rateByVariable(db: Db, q: z.output<typeof rateByVariableQuerySchema>): RateByVariable {
  const spec = variableSpec(q.variable);
  const { groups, missing } = variableGroups(scan(db, buildScope(db, q)), q.variable);
  const slabs = groups.reduce((s, g) => s + g.n, 0);
  const affected = groups.reduce((s, g) => s + g.affected, 0);
  const edges = q.binning === "quantile" ? quantileEdges(groups, q.bins) : equalWidthEdges(groups, q.bins);
  const bins = binnedRates(groups, edges, q.minN);
  const { spearman: sp, pointBiserial: pb } = correlationsWithOutcome(groups);
  const fit = logisticRegression(groups.map((g) => ({ x: [g.value], successes: g.affected, trials: g.n })));
  const mw = mannWhitneyGrouped(groups);
  const notes: string[] = [];
  if (slabs === 0) notes.push("No slab in these filters has a value for this variable.");
  else if (affected < SMALL_AFFECTED) notes.push(`Only ${affected} affected slab${affected === 1 ? "" : "s"}: the tests have little power and the intervals are wide.`);
  if (bins.some((b) => b.slabs < q.minN)) notes.push(`Some bins hold fewer than ${q.minN} slabs.`);
  if (missing > 0) notes.push(`${missing} slab${missing === 1 ? "" : "s"} in the filters have no value for ${spec.label.toLowerCase()} and are left out.`);
  return {
    variable: { key: spec.key, label: spec.label, unit: spec.unit },
    slabs,
    affected,
    slabsWithoutValue: missing,
    bins,
    spearman: { rho: finite(sp.rho), p: finite(sp.p) },
    pointBiserial: { r: finite(pb.rho), p: finite(pb.p) },
    logistic: {
      intercept: finite(fit.coefficients[0]!),
      slope: finite(fit.coefficients[1]!),
      oddsRatio: finite(fit.oddsRatios[0]?.value ?? NaN),
      oddsRatioCiLower: finite(fit.oddsRatios[0]?.lower ?? NaN),
      oddsRatioCiUpper: finite(fit.oddsRatios[0]?.upper ?? NaN),
      p: finite(fit.p[1] ?? NaN),
      converged: fit.converged,
    },
    mannWhitney: { u: finite(mw.u), p: finite(mw.p) },
    distribution: { affected: quantilesOf(groups, (g) => g.affected), sound: quantilesOf(groups, (g) => g.n - g.affected) },
    strip: { affected: stripOf(groups, (g) => g.affected), sound: stripOf(groups, (g) => g.n - g.affected) },
    methods: {
      bins: `${q.binning === "quantile" ? "Quantile" : "Equal-width"} bins; bins under ${q.minN} slabs merged with a neighbour; Wilson 95 % intervals`,
      spearman: sp.method,
      pointBiserial: pb.method,
      logistic: `${fit.method}; odds ratio per ${spec.unit === "–" ? "unit" : "1 " + spec.unit}`,
      mannWhitney: `${mw.method} (U of the affected slabs)`,
      grouping: `values grouped to ${spec.digits + 1} decimals; equal grouped values are ties`,
    },
    notes,
  };
}
