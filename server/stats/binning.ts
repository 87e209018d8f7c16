import { wilson } from "./proportions";
import type { Group } from "./ranks";

export interface Bin {
  lower: number;
  upper: number;
  slabs: number;
  affected: number;
  rate: number;
  ciLower: number;
  ciUpper: number;
}

/** k equal-width bins between the smallest and largest value. */
export function equalWidthEdges(groups: Group[], k: number): number[] {
  if (groups.length === 0) return [];
  const lo = groups[0]!.value;
  const hi = groups[groups.length - 1]!.value;
  if (lo === hi) return [lo, hi];
  return Array.from({ length: k + 1 }, (_, i) => (i === k ? hi : lo + ((hi - lo) * i) / k));
}

/**
 * Edges at the k-quantiles of the observations. Tied values are never split, so heavy ties give
 * fewer, larger bins.
 */
export function quantileEdges(groups: Group[], k: number): number[] {
  if (groups.length === 0) return [];
  const total = groups.reduce((s, g) => s + g.n, 0);
  const edges = [groups[0]!.value];
  let cum = 0;
  let next = 1;
  for (let i = 0; i < groups.length - 1; i++) {
    cum += groups[i]!.n;
    while (next < k && cum >= (total * next) / k) {
      // The edge sits between this value and the next; the next value starts the new bin.
      if (edges[edges.length - 1] !== groups[i + 1]!.value) edges.push(groups[i + 1]!.value);
      next++;
    }
  }
  edges.push(groups[groups.length - 1]!.value);
  return edges.length > 1 && edges[0] === edges[1] ? edges.slice(1) : edges;
}

/**
 * Rates per bin with Wilson intervals. Bins are [lower, upper) except the last, which includes its
 * upper edge. A bin with fewer than `minN` slabs (an empty one too) is merged into its neighbour
 * (the smaller one), so every bin shown stands on at least minN slabs and the bins still cover the
 * range without a gap. `emptySpans`, when given, receives the spans that held no slab at all
 * (adjacent empty bins as one span), for the report to say where its bins were widened.
 */
export function binnedRates(groups: Group[], edges: number[], minN = 1, emptySpans?: { lower: number; upper: number }[]): Bin[] {
  if (edges.length < 2) {
    if (groups.length === 0) return [];
    const n = groups.reduce((s, g) => s + g.n, 0);
    const x = groups.reduce((s, g) => s + g.affected, 0);
    const w = wilson(x, n);
    return [{ lower: groups[0]!.value, upper: groups[groups.length - 1]!.value, slabs: n, affected: x, rate: w.p, ciLower: w.lower, ciUpper: w.upper }];
  }
  const bins = edges.slice(0, -1).map((lo, i) => ({ lower: lo, upper: edges[i + 1]!, slabs: 0, affected: 0 }));
  let b = 0;
  for (const g of groups) {
    while (b < bins.length - 1 && g.value >= bins[b]!.upper) b++;
    bins[b]!.slabs += g.n;
    bins[b]!.affected += g.affected;
  }
  if (emptySpans) {
    for (const x of bins) {
      if (x.slabs > 0) continue;
      const lastSpan = emptySpans[emptySpans.length - 1];
      if (lastSpan && lastSpan.upper === x.lower) lastSpan.upper = x.upper;
      else emptySpans.push({ lower: x.lower, upper: x.upper });
    }
  }
  while (bins.length > 1) {
    const i = bins.findIndex((x) => x.slabs < minN);
    if (i < 0) break;
    const j = i === 0 ? 1 : i === bins.length - 1 ? i - 1 : bins[i - 1]!.slabs <= bins[i + 1]!.slabs ? i - 1 : i + 1;
    const [a, c] = i < j ? [i, j] : [j, i];
    const merged = { lower: bins[a]!.lower, upper: bins[c]!.upper, slabs: bins[a]!.slabs + bins[c]!.slabs, affected: bins[a]!.affected + bins[c]!.affected };
    bins.splice(a, 2, merged);
  }
  return bins.map((x) => {
    const w = wilson(x.affected, x.slabs);
    return { ...x, rate: w.p, ciLower: w.lower, ciUpper: w.upper };
  });
}
