import { normalUpper } from "./distributions";
import { midRanks, tieSum, type Group } from "./ranks";
import { say } from "../lib/words";

export type Alternative = "two-sided" | "greater" | "less";

export interface MannWhitney {
  /** W as R reports it: the rank sum of the first sample minus n₁(n₁ + 1)/2 (= its U). */
  u: number;
  p: number;
  n1: number;
  n2: number;
  method: string;
}

/** Number of arrangements giving each U, for m and n without ties (exact null distribution). */
function exactCounts(m: number, n: number): Float64Array {
  // f[m][n][u] by the recurrence f(u; m, n) = f(u − n; m − 1, n) + f(u; m, n − 1), kept two rows deep.
  const max = m * n;
  let prev: Float64Array[] = Array.from({ length: n + 1 }, () => {
    const a = new Float64Array(max + 1);
    a[0] = 1;
    return a;
  });
  for (let i = 1; i <= m; i++) {
    const cur: Float64Array[] = [];
    const c0 = new Float64Array(max + 1);
    c0[0] = 1;
    cur.push(c0);
    for (let j = 1; j <= n; j++) {
      const a = new Float64Array(max + 1);
      const left = cur[j - 1]!;
      const up = prev[j]!;
      for (let u = 0; u <= i * j; u++) a[u] = left[u]! + (u - j >= 0 ? up[u - j]! : 0);
      cur.push(a);
    }
    prev = cur;
  }
  return prev[n]!;
}

/**
 * Mann–Whitney U of sample 1 against sample 2, given as grouped values with counts per sample
 * (`affected` = sample 1 here). Exact null distribution when both samples are below 50 and there
 * are no ties (R's default); otherwise the normal approximation with the tie correction and a
 * continuity correction of 0.5.
 */
export function mannWhitneyGrouped(groups: Group[], alternative: Alternative = "two-sided"): MannWhitney {
  let n1 = 0;
  let n = 0;
  for (const g of groups) {
    n1 += g.affected;
    n += g.n;
  }
  const n2 = n - n1;
  if (n1 === 0 || n2 === 0) return { u: NaN, p: NaN, n1, n2, method: say("stats.mannWhitney.empty") };
  const ranks = midRanks(groups);
  let rankSum = 0;
  groups.forEach((g, i) => (rankSum += g.affected * ranks[i]!));
  const u = rankSum - (n1 * (n1 + 1)) / 2;
  const ties = groups.some((g) => g.n > 1);
  if (!ties && n1 < 50 && n2 < 50) {
    const counts = exactCounts(n1, n2);
    let total = 0;
    for (const c of counts) total += c;
    const cdf = (k: number) => {
      let s = 0;
      for (let i = 0; i <= Math.min(k, counts.length - 1); i++) s += counts[i]!;
      return s / total;
    };
    const upperFrom = (k: number) => 1 - cdf(k - 1); // P(U ≥ k)
    let p: number;
    if (alternative === "greater") p = upperFrom(u);
    else if (alternative === "less") p = cdf(u);
    else p = Math.min(1, 2 * (u > (n1 * n2) / 2 ? upperFrom(u) : cdf(u)));
    return { u, p, n1, n2, method: say("stats.mannWhitney.exact", { alternative: say(`stats.alternative.${alternative}`) }) };
  }
  const mean = (n1 * n2) / 2;
  const sigma = Math.sqrt(((n1 * n2) / 12) * (n + 1 - tieSum(groups) / (n * (n - 1))));
  const d = u - mean;
  const correction = alternative === "two-sided" ? Math.sign(d) * 0.5 : alternative === "greater" ? 0.5 : -0.5;
  const z = sigma > 0 ? (d - correction) / sigma : 0;
  // Each tail straight from its own side (1 − P(Z ≥ z) would cancel to 0 for a far tail).
  const p = alternative === "greater" ? normalUpper(z) : alternative === "less" ? normalUpper(-z) : Math.min(1, 2 * normalUpper(Math.abs(z)));
  return { u, p, n1, n2, method: say("stats.mannWhitney.normal", { alternative: say(`stats.alternative.${alternative}`) }) };
}

/** The same for two plain samples x (sample 1) and y. */
export function mannWhitney(x: number[], y: number[], alternative: Alternative = "two-sided"): MannWhitney {
  const map = new Map<number, Group>();
  const add = (v: number, first: boolean) => {
    const g = map.get(v) ?? { value: v, n: 0, affected: 0 };
    g.n++;
    if (first) g.affected++;
    map.set(v, g);
  };
  x.forEach((v) => add(v, true));
  y.forEach((v) => add(v, false));
  return mannWhitneyGrouped(
    [...map.values()].sort((a, b) => a.value - b.value),
    alternative,
  );
}
