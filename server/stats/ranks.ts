/**
 * Grouped data: distinct values with how many observations carry each, and how many of those are
 * "affected". Reports aggregate a million slabs into a few thousand groups in SQL; every rank-based
 * and likelihood-based method below works on the groups, treating equal values as ties.
 */
export interface Group {
  value: number;
  n: number;
  affected: number;
}

/** Groups sorted by value, merged when equal. */
export function normalizeGroups(groups: Group[]): Group[] {
  const sorted = groups.filter((g) => g.n > 0 && Number.isFinite(g.value)).sort((a, b) => a.value - b.value);
  const out: Group[] = [];
  for (const g of sorted) {
    const last = out[out.length - 1];
    if (last && last.value === g.value) {
      last.n += g.n;
      last.affected += g.affected;
    } else out.push({ ...g });
  }
  return out;
}

/** Observations (value, 0/1) to groups. */
export function groupsFrom(values: number[], affected: (0 | 1 | boolean)[]): Group[] {
  const map = new Map<number, Group>();
  values.forEach((v, i) => {
    const g = map.get(v) ?? { value: v, n: 0, affected: 0 };
    g.n++;
    if (affected[i]) g.affected++;
    map.set(v, g);
  });
  return normalizeGroups([...map.values()]);
}

/** Mid-rank of each group (average of the ranks its tied observations occupy). */
export function midRanks(groups: Group[]): number[] {
  const ranks: number[] = [];
  let below = 0;
  for (const g of groups) {
    ranks.push(below + (g.n + 1) / 2);
    below += g.n;
  }
  return ranks;
}

/** Σ (t³ − t) over tie groups, for tie corrections. */
export function tieSum(groups: Group[]): number {
  let s = 0;
  for (const g of groups) if (g.n > 1) s += g.n ** 3 - g.n;
  return s;
}

/** Average ranks of a plain sample (ties share their mean rank). */
export function rank(values: number[]): number[] {
  const idx = values.map((v, i) => [v, i] as const).sort((a, b) => a[0] - b[0]);
  const r = new Array<number>(values.length);
  for (let i = 0; i < idx.length;) {
    let j = i;
    while (j + 1 < idx.length && idx[j + 1]![0] === idx[i]![0]) j++;
    const mean = (i + j) / 2 + 1;
    for (let k = i; k <= j; k++) r[idx[k]![1]] = mean;
    i = j + 1;
  }
  return r;
}
