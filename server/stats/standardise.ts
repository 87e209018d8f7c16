/**
 * Direct standardisation of a proportion (share of slabs affected) to a reference mix of strata (grade
 * families, say): the rate the group would have had with the reference mix, Σ wⱼ pⱼ with Σ wⱼ = 1.
 * Variance Σ wⱼ² pⱼ(1 − pⱼ)/nⱼ (binomial strata, weights fixed), normal-approximation interval
 * (Rothman, Greenland & Lash, Modern Epidemiology, standardisation; Fleiss, Levin & Paik, Statistical
 * Methods for Rates and Proportions, the standardisation of rates).
 */
import { normalQuantileOf } from "./distributions";
import { say } from "../lib/words";

export interface RateStratum {
  label: string;
  /** Slabs in the stratum. */
  n: number;
  /** Affected slabs in the stratum. */
  x: number;
}

export interface ReferenceWeight {
  label: string;
  /** Any non-negative size (slabs, tonnes); normalised to sum 1. */
  weight: number;
}

export interface StandardisedRate {
  rate: number | null;
  se: number | null;
  ciLower: number | null;
  ciUpper: number | null;
  /** The unstandardised share affected over all strata of the group. */
  crude: number | null;
  slabs: number;
  affected: number;
  /** Reference strata the group has no slab in (the standardised rate is then undefined). */
  missingStrata: string[];
  reason: string | null;
  notes: string[];
  method: string;
}

export interface StandardisedDifference {
  rateA: number | null;
  rateB: number | null;
  /** rate B − rate A */
  difference: number | null;
  se: number | null;
  ciLower: number | null;
  ciUpper: number | null;
  reason: string | null;
  notes: string[];
  method: string;
}

/**
 * The reference mix made of several groups together (e.g. both periods of a before/after
 * comparison): slabs per stratum summed over the groups. A common, neutral choice when no standard
 * mix is given.
 */
export function pooledMix(...groups: RateStratum[][]): ReferenceWeight[] {
  const m = new Map<string, number>();
  for (const g of groups) for (const s of g) m.set(s.label, (m.get(s.label) ?? 0) + s.n);
  return [...m.entries()].map(([label, weight]) => ({ label, weight }));
}

function weighted(strata: RateStratum[], reference: ReferenceWeight[]) {
  const by = new Map<string, RateStratum>();
  for (const s of strata) {
    const prev = by.get(s.label);
    by.set(s.label, prev ? { label: s.label, n: prev.n + s.n, x: prev.x + s.x } : { ...s });
  }
  const ref = reference.filter((r) => r.weight > 0);
  const total = ref.reduce((t, r) => t + r.weight, 0);
  let rate = 0;
  let variance = 0;
  const missing: string[] = [];
  for (const r of ref) {
    const s = by.get(r.label);
    if (!s || s.n <= 0) {
      missing.push(r.label);
      continue;
    }
    const w = r.weight / total;
    const p = s.x / s.n;
    rate += w * p;
    variance += (w * w * p * (1 - p)) / s.n;
  }
  let n = 0;
  let x = 0;
  for (const s of by.values()) {
    n += s.n;
    x += s.x;
  }
  const zeroVarianceStrata = ref.filter((r) => {
    const s = by.get(r.label);
    return s && s.n > 0 && (s.x === 0 || s.x === s.n);
  }).length;
  return { rate, variance, missing, total, refCount: ref.length, n, x, zeroVarianceStrata };
}

/**
 * A group's affected share standardised to `reference`. Every reference stratum with weight must
 * hold slabs of the group, else the rate is undefined (null, with the strata named): standardising
 * to a mix that includes a family the group never cast would be an extrapolation.
 */
export function directlyStandardisedRate(strata: RateStratum[], reference: ReferenceWeight[], confidence = 0.95): StandardisedRate {
  const w = weighted(strata, reference);
  const crude = w.n > 0 ? w.x / w.n : null;
  const base = { crude, slabs: w.n, affected: w.x, missingStrata: w.missing, method: say("stats.std.method") };
  if (w.refCount === 0 || !(w.total > 0))
    return { ...base, rate: null, se: null, ciLower: null, ciUpper: null, reason: say("stats.std.emptyReference"), notes: [] };
  if (w.missing.length > 0) {
    return {
      ...base,
      rate: null,
      se: null,
      ciLower: null,
      ciUpper: null,
      reason: say("stats.std.missing", { strata: w.missing.join(", ") }),
      notes: [],
    };
  }
  const se = Math.sqrt(w.variance);
  const z = normalQuantileOf(1 - (1 - confidence) / 2);
  const notes: string[] = [];
  if (w.zeroVarianceStrata > 0) notes.push(say("stats.std.zeroVariance", { count: w.zeroVarianceStrata }));
  return { ...base, rate: w.rate, se, ciLower: Math.max(0, w.rate - z * se), ciUpper: Math.min(1, w.rate + z * se), reason: null, notes };
}

/**
 * Difference (B − A) of two directly standardised rates on the same reference mix, with the
 * normal-approximation interval from the sum of the two variances (the groups are independent).
 */
export function differenceOfStandardisedRates(a: RateStratum[], b: RateStratum[], reference: ReferenceWeight[], confidence = 0.95): StandardisedDifference {
  const ra = directlyStandardisedRate(a, reference, confidence);
  const rb = directlyStandardisedRate(b, reference, confidence);
  const method = say("stats.std.differenceMethod");
  const notes = [...ra.notes.map((n) => `A: ${n}`), ...rb.notes.map((n) => `B: ${n}`)];
  if (ra.rate === null || rb.rate === null) {
    const reason = [ra.reason && `A: ${ra.reason}`, rb.reason && `B: ${rb.reason}`].filter(Boolean).join("; ");
    return { rateA: ra.rate, rateB: rb.rate, difference: null, se: null, ciLower: null, ciUpper: null, reason, notes, method };
  }
  const d = rb.rate - ra.rate;
  const se = Math.sqrt(ra.se! ** 2 + rb.se! ** 2);
  const z = normalQuantileOf(1 - (1 - confidence) / 2);
  return { rateA: ra.rate, rateB: rb.rate, difference: d, se, ciLower: d - z * se, ciUpper: d + z * se, reason: null, notes, method };
}
