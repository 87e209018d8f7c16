/** Rate against one condition: bins with Wilson intervals, rank and logistic association, the two distributions. */
import type { z } from "zod";
import type { RateByVariable, rateByVariableQuerySchema } from "@shared/api/reports";
import type { Db } from "../../db/client";
import { binnedRates, equalWidthEdges, quantileEdges } from "../../stats/binning";
import { logisticRegression } from "../../stats/logistic";
import { mannWhitneyGrouped } from "../../stats/mann-whitney";
import type { Group } from "../../stats/ranks";
import { correlationsWithOutcome } from "../../stats/spearman";
import { spreadOfGroups } from "../../stats/spread";
import {
  adjustedForWords,
  categoricalColumn,
  changeWords,
  completeRows,
  fitTerms,
  groupingMethod,
  heatsOf,
  lowerLabel,
  modelTerms,
  perWordsOf,
  seWords,
  slopeOf,
} from "./adjusted";
import { buildScope, finite, proportion, scan, SMALL_AFFECTED, variableGroups, variableSpec, type Scanned } from "./scope";
import { currentLanguage, named, num, say } from "../../lib/words";
import { FEW_HEATS, oddsRatioForStep } from "../../stats/logistic-multi";

/** A bin edge in the variable's displayed precision (edges of equal-width bins fall between grid values). */
const round = (x: number, digits: number) => Number(x.toFixed(Math.max(0, digits + 1))).toString();

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

type Query = z.output<typeof rateByVariableQuerySchema>;
type Bin = RateByVariable["bins"][number];

/** The variable's odds ratio in a model with the adjustment terms, and the crude one beside it (same slabs, same SEs). */
function adjustedSlope(db: Db, sc: Scanned, q: Query, notes: string[]): NonNullable<RateByVariable["adjusted"]> {
  const spec = variableSpec(q.variable);
  const terms = modelTerms(db, sc, [q.variable, ...q.adjustFor]);
  const { rows, missing } = completeRows(sc, terms);
  const fit = fitTerms(sc, terms, rows, q.se);
  const crude = fitTerms(sc, [terms[0]!], rows, q.se);
  const a = slopeOf(
    fit.terms.find((t) => t.variable === spec.label),
    spec.step,
  );
  const c = slopeOf(
    crude.terms.find((t) => t.variable === spec.label),
    spec.step,
  );
  const others = terms.slice(1);
  const change = changeWords(
    lowerLabel(spec.label),
    { coef: c.fit.slope, se: c.fit.se },
    { coef: a.fit.slope, se: a.fit.se },
    spec.step,
    perWordsOf(spec.step, spec.unit),
    adjustedForWords(others.map((t) => t.label)),
  );
  for (const m of missing.filter((m) => m.key !== q.variable)) {
    notes.push(say("rate.adjustedLeftOut", { count: m.slabs, name: lowerLabel(m.label) }));
  }
  const reason =
    a.fit.slope === null ? (a.reason ?? fit.separation?.description ?? fit.variables[0]?.reason ?? fit.reason ?? say("adjusted.notEstimable")) : null;
  const reasonNote = reason ? say("rate.adjustedNotGiven", { why: reason }) : null;
  if (reasonNote) notes.push(reasonNote);
  // The fit's few-heats note (the only one of its notes this report repeats).
  if (fit.clusters !== null && fit.clusters < FEW_HEATS) notes.push(...fit.notes.filter((n) => n === say("fit.fewHeats", { count: fit.clusters! })));
  if (change.sentence) notes.push(change.sentence);
  return {
    ...a.fit,
    seMethod: q.se,
    adjustFor: others.map((t) => ({ key: t.key, label: t.label, unit: t.kind === "numeric" ? t.unit : null, kind: t.kind })),
    slabs: fit.slabs,
    affected: fit.affected,
    heats: fit.clusters ?? heatsOf(sc, rows),
    crude: c.fit,
    changeInEstimate: change,
    reason,
    reasonNote,
  };
}

/** Per level of the stratifying key: the rate in the bins of the whole, and the odds ratio within the level. */
function stratifiedRates(db: Db, sc: Scanned, q: Query, bins: Bin[], notes: string[]): NonNullable<RateByVariable["stratified"]> {
  const spec = variableSpec(q.variable);
  const [term] = modelTerms(db, sc, [q.variable]);
  const values = (term!.column as { values: ArrayLike<number> }).values;
  const withValue: number[] = [];
  for (const i of sc.rows) if (values[i] === values[i]) withValue.push(i);
  const st = categoricalColumn(db, sc, q.stratifyBy!, withValue);
  const byCode = new Map<number, number[]>();
  for (const i of withValue) {
    const code = st.codes[i]!;
    let list = byCode.get(code);
    if (!list) byCode.set(code, (list = []));
    list.push(i);
  }
  const MAX_STRATA = 12;
  const levels = [...byCode.entries()]
    .map(([code, list]) => ({ label: st.label!(code), rows: Int32Array.from(list) }))
    .sort((x, y) => y.rows.length - x.rows.length);
  const shown = levels.slice(0, MAX_STRATA);
  const order = (a: string, b: string) => (st.levels ? st.levels.indexOf(a) - st.levels.indexOf(b) : a.localeCompare(b, "en", { numeric: true }));
  shown.sort((x, y) => order(x.label, y.label));
  const binOf = (v: number) => {
    // The last bin starting at or below v (bins hold every value of the whole, so of each level too).
    let lo = 0;
    let hi = bins.length - 1;
    while (lo < hi) {
      const mid = (lo + hi + 1) >> 1;
      if (bins[mid]!.lower <= v) lo = mid;
      else hi = mid - 1;
    }
    return lo;
  };
  const strata = shown.map((level) => {
    const n = new Array<number>(bins.length).fill(0);
    const x = new Array<number>(bins.length).fill(0);
    let affected = 0;
    for (const i of level.rows) {
      const b = binOf(values[i]!);
      n[b]!++;
      x[b]! += sc.affected[i]!;
      affected += sc.affected[i]!;
    }
    const fit = fitTerms(sc, [term!], level.rows, q.se);
    const slope = slopeOf(fit.terms[0], spec.step);
    return {
      label: level.label,
      ...proportion(level.rows.length, affected),
      bins: bins.map((b, k) => ({ lower: b.lower, upper: b.upper, ...proportion(n[k]!, x[k]!), sparse: n[k]! < q.minN })),
      logistic: {
        ...slope.fit,
        reason:
          slope.fit.slope === null
            ? (slope.reason ?? fit.separation?.description ?? fit.variables[0]?.reason ?? fit.reason ?? say("adjusted.notEstimable"))
            : null,
      },
    };
  });
  const notShown = levels.slice(MAX_STRATA).map((l) => ({ label: l.label, slabs: l.rows.length }));
  if (notShown.length) notes.push(say("rate.notDrawn", { count: notShown.length, name: lowerLabel(st.name), max: MAX_STRATA }));
  return { by: { key: q.stratifyBy!, label: st.name }, seMethod: q.se, strata, notShown };
}

export function rateByVariable(db: Db, q: Query): RateByVariable {
  const spec = variableSpec(q.variable);
  const sc = scan(db, buildScope(db, q));
  const { groups, missing } = variableGroups(sc, q.variable);
  const slabs = groups.reduce((s, g) => s + g.n, 0);
  const affected = groups.reduce((s, g) => s + g.affected, 0);
  const edges = q.binning === "quantile" ? quantileEdges(groups, q.bins) : equalWidthEdges(groups, q.bins);
  const emptySpans: { lower: number; upper: number }[] = [];
  const bins = binnedRates(groups, edges, q.minN, emptySpans);
  const { spearman: sp, pointBiserial: pb } = correlationsWithOutcome(groups);
  const fit = logisticRegression(groups.map((g) => ({ x: [g.value], successes: g.affected, trials: g.n })));
  const spread = spreadOfGroups(groups);
  // A variable with one value has no test at all: every p is null, never 0 or 1.
  const flat = slabs > 0 && spread.noSpread;
  const mw = flat ? { u: NaN, p: NaN, method: say("rate.noSpreadTest") } : mannWhitneyGrouped(groups);
  const notes: string[] = [];
  if (slabs === 0) notes.push(say("rate.noValue"));
  else if (flat) notes.push(say("rate.flat", { name: named(spec.label), why: String(spread.reason) }));
  else if (affected < SMALL_AFFECTED) notes.push(say("rate.fewAffected", { count: affected }));
  if (bins.some((b) => b.slabs < q.minN)) notes.push(say("rate.smallBins", { minN: q.minN }));
  if (emptySpans.length) {
    const unit = spec.unit && spec.unit !== "–" ? ` ${spec.unit}` : "";
    const spans = emptySpans.map((x) => `${num(round(x.lower, spec.digits))}–${num(round(x.upper, spec.digits))}${unit}`);
    notes.push(say(spans.length === 1 ? "rate.emptySpan" : "rate.emptySpans", { spans: spans.join(", ") }));
  }
  if (missing > 0) notes.push(say("rate.missing", { count: missing, name: currentLanguage() === "en" ? spec.label.toLowerCase() : named(spec.label) }));
  const adjusted = q.adjustFor.length > 0 && slabs > 0 ? adjustedSlope(db, sc, q, notes) : undefined;
  const stratified = q.stratifyBy && slabs > 0 ? stratifiedRates(db, sc, q, bins, notes) : undefined;
  const perUnit = spec.unit === "–" ? say("rate.method.unit") : say("rate.method.oneUnit", { unit: spec.unit });
  // Per one unit a chemistry element's odds ratio lies far outside the plant's range (per 1 wt % of titanium: 6e-5); per the readable step it reads.
  const slope = fit.coefficients[1];
  const se = fit.standardErrors[1];
  const perStepOr = oddsRatioForStep(Number.isFinite(slope) ? slope! : null, Number.isFinite(se) ? se! : null, spec.step);
  const methods: Record<string, string> = {
    bins: say(`rate.method.bins_${q.binning === "quantile" ? "quantile" : "equal"}`, { minN: q.minN }),
    spearman: sp.method,
    pointBiserial: pb.method,
    logistic: say("rate.method.logistic", { fit: fit.method, per: perUnit }),
    mannWhitney: say("rate.method.mannWhitney", { test: mw.method }),
    grouping: say("rate.method.grouping", { count: spec.digits + 1 }),
  };
  const perStep = perWordsOf(spec.step, spec.unit);
  if (adjusted) {
    methods.adjusted = say("rate.method.adjusted", {
      name: lowerLabel(spec.label),
      others: adjustedForWords(adjusted.adjustFor.map((t) => t.label)),
      se: seWords(q.se),
      per: perUnit,
      step: perStep,
      grouping: groupingMethod(),
    });
    methods.crude = say("rate.method.crude", { name: lowerLabel(spec.label), step: perStep });
  }
  if (stratified) {
    methods.stratified = say(`rate.method.stratified_${q.se === "cluster" ? "cluster" : "model"}`, {
      by: lowerLabel(stratified.by.label),
      minN: q.minN,
      name: lowerLabel(spec.label),
    });
  }
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
      perStep: {
        step: spec.step,
        oddsRatio: finite(perStepOr.oddsRatio ?? NaN),
        ciLower: finite(perStepOr.ciLower ?? NaN),
        ciUpper: finite(perStepOr.ciUpper ?? NaN),
      },
      p: finite(fit.p[1] ?? NaN),
      converged: fit.converged,
    },
    mannWhitney: { u: finite(mw.u), p: finite(mw.p) },
    distribution: { affected: quantilesOf(groups, (g) => g.affected), sound: quantilesOf(groups, (g) => g.n - g.affected) },
    strip: { affected: stripOf(groups, (g) => g.affected), sound: stripOf(groups, (g) => g.n - g.affected) },
    ...(adjusted ? { adjusted } : {}),
    ...(stratified ? { stratified } : {}),
    methods,
    notes,
  };
}
