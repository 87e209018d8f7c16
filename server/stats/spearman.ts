import { tTwoSided } from "./distributions";
import { midRanks, rank, type Group } from "./ranks";
import { say } from "../lib/words";

export interface Correlation {
  rho: number;
  p: number;
  n: number;
  method: string;
}

const noSpreadWords = () => say("stats.logistic.noSpread");

const noSpread = (v: number[]) => v.every((x) => x === v[0]);

function pearson(x: number[], y: number[]): number {
  const n = x.length;
  let mx = 0;
  let my = 0;
  for (let i = 0; i < n; i++) {
    mx += x[i]!;
    my += y[i]!;
  }
  mx /= n;
  my /= n;
  let sxy = 0;
  let sxx = 0;
  let syy = 0;
  for (let i = 0; i < n; i++) {
    const dx = x[i]! - mx;
    const dy = y[i]! - my;
    sxy += dx * dy;
    sxx += dx * dx;
    syy += dy * dy;
  }
  return sxy / Math.sqrt(sxx * syy);
}

/** P(S ≤ s) and P(S ≥ s) for S = Σ d² over all n! rank permutations (exact, for small n). */
function exactSpearmanTails(n: number, s: number): { lower: number; upper: number } {
  const perm = Array.from({ length: n }, (_, i) => i);
  const c = new Array<number>(n).fill(0);
  let total = 0;
  let le = 0;
  let ge = 0;
  const visit = () => {
    let S = 0;
    for (let i = 0; i < n; i++) S += (i - perm[i]!) ** 2;
    total++;
    if (S <= s + 1e-9) le++;
    if (S >= s - 1e-9) ge++;
  };
  // Heap's algorithm: every permutation once.
  visit();
  let i = 0;
  while (i < n) {
    if (c[i]! < i) {
      const j = i % 2 === 0 ? 0 : c[i]!;
      [perm[j], perm[i]] = [perm[i]!, perm[j]!];
      visit();
      c[i]!++;
      i = 0;
    } else {
      c[i] = 0;
      i++;
    }
  }
  return { lower: le / total, upper: ge / total };
}

/**
 * Spearman's rank correlation with a two-sided p. Exact (all permutations) for n ≤ 9 without ties, as
 * R's cor.test does; otherwise the t approximation t = ρ √((n − 2)/(1 − ρ²)) with n − 2 df.
 */
export function spearman(x: number[], y: number[]): Correlation {
  const n = x.length;
  if (n !== y.length) throw new Error("spearman: x and y differ in length");
  if (n < 3) return { rho: NaN, p: NaN, n, method: say("stats.spearman.tooFew") };
  if (noSpread(x) || noSpread(y)) return { rho: NaN, p: NaN, n, method: noSpreadWords() };
  const rx = rank(x);
  const ry = rank(y);
  const rho = pearson(rx, ry);
  const ties = new Set(x).size < n || new Set(y).size < n;
  if (n <= 9 && !ties) {
    const s = ((n ** 3 - n) * (1 - rho)) / 6;
    const { lower, upper } = exactSpearmanTails(n, Math.round(s));
    const p = Math.min(1, 2 * (s > (n ** 3 - n) / 6 ? upper : lower));
    return { rho, p, n, method: say("stats.spearman.exact") };
  }
  return { rho, p: tDistributionP(rho, n), n, method: say("stats.spearman.t") };
}

function tDistributionP(r: number, n: number): number {
  // An undefined ρ (a variable with no spread) has no p either; it is never "p = 0".
  if (Number.isNaN(r)) return NaN;
  if (Math.abs(r) >= 1) return 0;
  const t = r * Math.sqrt((n - 2) / (1 - r * r));
  return tTwoSided(t, n - 2);
}

/**
 * Spearman's ρ between a variable (grouped) and a 0/1 outcome, and the point-biserial correlation
 * (Pearson between the raw values and the outcome). Both with two-sided t-approximation p-values.
 */
export function correlationsWithOutcome(groups: Group[]): { spearman: Correlation; pointBiserial: Correlation } {
  let n = 0;
  let n1 = 0;
  for (const g of groups) {
    n += g.n;
    n1 += g.affected;
  }
  const n0 = n - n1;
  if (n >= 3 && new Set(groups.filter((g) => g.n > 0).map((g) => g.value)).size < 2) {
    const none = { rho: NaN, p: NaN, n, method: noSpreadWords() };
    return { spearman: none, pointBiserial: none };
  }
  if (n < 3 || n1 === 0 || n0 === 0) {
    const none = { rho: NaN, p: NaN, n, method: say(n1 === 0 || n0 === 0 ? "stats.spearman.constantOutcome" : "stats.spearman.tooFew") };
    return { spearman: none, pointBiserial: none };
  }
  const ranks = midRanks(groups);
  // Ranks of the outcome: all 0s share one mid-rank, all 1s another.
  const r0 = (n0 + 1) / 2;
  const r1 = n0 + (n1 + 1) / 2;
  const meanRank = (n + 1) / 2;
  let sxy = 0;
  let sxx = 0;
  let mean = 0;
  for (const g of groups) mean += g.value * g.n;
  mean /= n;
  let pxy = 0;
  let pxx = 0;
  groups.forEach((g, i) => {
    const dx = ranks[i]! - meanRank;
    sxx += g.n * dx * dx;
    sxy += dx * (g.affected * (r1 - meanRank) + (g.n - g.affected) * (r0 - meanRank));
    const dv = g.value - mean;
    pxx += g.n * dv * dv;
    pxy += dv * (g.affected * (1 - n1 / n) + (g.n - g.affected) * (0 - n1 / n));
  });
  const syy = n1 * (r1 - meanRank) ** 2 + n0 * (r0 - meanRank) ** 2;
  const rho = sxx > 0 ? sxy / Math.sqrt(sxx * syy) : NaN;
  const qyy = n1 * (1 - n1 / n) ** 2 + n0 * (n1 / n) ** 2;
  const rpb = pxx > 0 ? pxy / Math.sqrt(pxx * qyy) : NaN;
  return {
    spearman: { rho, p: tDistributionP(rho, n), n, method: say("stats.spearman.tTies") },
    pointBiserial: { rho: rpb, p: tDistributionP(rpb, n), n, method: say("stats.spearman.pointBiserial") },
  };
}
