import { tTwoSided } from "./distributions";
import { say } from "../lib/words";

/** Ordinary least squares y = b0 + b1 x with centred sums (accurate on NIST's Norris data). */
export function linearRegression(x: number[], y: number[]) {
  const n = x.length;
  const mx = x.reduce((s, v) => s + v, 0) / n;
  const my = y.reduce((s, v) => s + v, 0) / n;
  let sxx = 0;
  let sxy = 0;
  let syy = 0;
  for (let i = 0; i < n; i++) {
    const dx = x[i]! - mx;
    const dy = y[i]! - my;
    sxx += dx * dx;
    sxy += dx * dy;
    syy += dy * dy;
  }
  const slope = sxy / sxx;
  const intercept = my - slope * mx;
  let sse = 0;
  for (let i = 0; i < n; i++) sse += (y[i]! - intercept - slope * x[i]!) ** 2;
  const s2 = sse / (n - 2);
  return {
    intercept,
    slope,
    rSquared: 1 - sse / syy,
    residualSd: Math.sqrt(s2),
    seSlope: Math.sqrt(s2 / sxx),
    seIntercept: Math.sqrt(s2 * (1 / n + (mx * mx) / sxx)),
  };
}

/**
 * Welch's two-sample t test from summary statistics (means, sample variances, sizes), two-sided,
 * with the Welch–Satterthwaite degrees of freedom.
 */
export function welchTTest(a: { n: number; mean: number; variance: number }, b: { n: number; mean: number; variance: number }) {
  const va = a.variance / a.n;
  const vb = b.variance / b.n;
  const t = (a.mean - b.mean) / Math.sqrt(va + vb);
  const df = (va + vb) ** 2 / (va ** 2 / (a.n - 1) + vb ** 2 / (b.n - 1));
  return { t, df, p: tTwoSided(t, df), method: say("stats.welch") };
}
