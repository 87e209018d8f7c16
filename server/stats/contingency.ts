import { chiSquareUpper, lnFactorial } from "./distributions";
import { say } from "../lib/words";

export interface ChiSquare {
  statistic: number;
  df: number;
  p: number;
  expected: number[][];
  /** Cells whose expected count is below 5 (the approximation is then doubtful). */
  smallExpected: number;
  method: string;
}

/** Pearson's chi-square test of independence (no continuity correction). Empty rows/columns are dropped. */
export function chiSquareIndependence(table: number[][]): ChiSquare {
  const rows = table.filter((r) => r.reduce((s, v) => s + v, 0) > 0);
  const colTotals = rows[0] ? rows[0].map((_, j) => rows.reduce((s, r) => s + r[j]!, 0)) : [];
  const keep = colTotals.map((t, j) => (t > 0 ? j : -1)).filter((j) => j >= 0);
  const t = rows.map((r) => keep.map((j) => r[j]!));
  const R = t.map((r) => r.reduce((s, v) => s + v, 0));
  const C = keep.map((_, j) => t.reduce((s, r) => s + r[j]!, 0));
  const N = R.reduce((s, v) => s + v, 0);
  let x2 = 0;
  let small = 0;
  const expected = t.map((r, i) =>
    r.map((o, j) => {
      const e = (R[i]! * C[j]!) / N;
      if (e < 5) small++;
      x2 += (o - e) ** 2 / e;
      return e;
    }),
  );
  const df = (t.length - 1) * (keep.length - 1);
  return {
    statistic: x2,
    df,
    p: df > 0 ? chiSquareUpper(x2, df) : NaN,
    expected,
    smallExpected: small,
    method: say("stats.chiSquare"),
  };
}

export interface Fisher {
  pLess: number;
  pGreater: number;
  pTwoSided: number;
  oddsRatio: number;
  method: string;
}

/**
 * Fisher's exact test for [[a, b], [c, d]] from the hypergeometric distribution of a given the
 * margins. Two-sided: the sum over tables no more probable than the observed one (with R's relative
 * tolerance of 1e-7).
 */
export function fisherExact2x2(table: [[number, number], [number, number]]): Fisher {
  const [[a, b], [c, d]] = table;
  const r1 = a + b;
  const r2 = c + d;
  const c1 = a + c;
  const n = r1 + r2;
  if (r1 === 0 || r2 === 0 || c1 === 0 || c1 === n) {
    // One table only fits these margins, so there is nothing to test. R's fisher.test prints p = 1
    // (interval 0 to ∞) here; shown, that reads as evidence of no difference, so it is NaN instead.
    return { pLess: NaN, pGreater: NaN, pTwoSided: NaN, oddsRatio: NaN, method: say("stats.fisher.empty") };
  }
  const lo = Math.max(0, c1 - r2);
  const hi = Math.min(r1, c1);
  const lnChoose = (m: number, k: number) => lnFactorial(m) - lnFactorial(k) - lnFactorial(m - k);
  const lnDenom = lnChoose(n, c1);
  const probs: number[] = [];
  for (let k = lo; k <= hi; k++) probs.push(Math.exp(lnChoose(r1, k) + lnChoose(r2, c1 - k) - lnDenom));
  const at = (k: number) => probs[k - lo]!;
  let pLess = 0;
  let pGreater = 0;
  let pTwo = 0;
  const pObs = at(a);
  for (let k = lo; k <= hi; k++) {
    const p = at(k);
    if (k <= a) pLess += p;
    if (k >= a) pGreater += p;
    if (p <= pObs * (1 + 1e-7)) pTwo += p;
  }
  return {
    pLess: Math.min(1, pLess),
    pGreater: Math.min(1, pGreater),
    pTwoSided: Math.min(1, pTwo),
    oddsRatio: (a * d) / (b * c),
    method: say("stats.fisher.method"),
  };
}
