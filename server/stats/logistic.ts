import { normalQuantileOf, normalTwoSided } from "./distributions";
import { choleskyInverse } from "./linear-algebra";
import { say } from "../lib/words";

export interface LogisticRow {
  /** The covariates (no intercept; it is added). */
  x: number[];
  /** Successes out of `trials` (1 and 1 for a single observation). */
  successes: number;
  trials: number;
}

export interface LogisticFit {
  /** Intercept first, then one per covariate. */
  coefficients: number[];
  standardErrors: number[];
  z: number[];
  /** Two-sided Wald p-values. */
  p: number[];
  /** exp(coefficient) per covariate, with its Wald confidence interval. */
  oddsRatios: { value: number; lower: number; upper: number }[];
  iterations: number;
  converged: boolean;
  deviance: number;
  n: number;
  method: string;
}

/**
 * Logistic regression by iteratively reweighted least squares (Newton–Raphson on the binomial
 * log-likelihood), intercept plus any number of covariates, on binomial rows so grouped data can be
 * fitted directly. Covariates are centred while fitting for numerical stability; coefficients,
 * standard errors (from the inverse Fisher information) and Wald tests are reported on the original
 * scale.
 */
export function logisticRegression(rows: LogisticRow[], confidence = 0.95, maxIterations = 50): LogisticFit {
  const k = (rows[0]?.x.length ?? 0) + 1;
  const n = rows.reduce((s, r) => s + r.trials, 0);
  const means = new Array<number>(k - 1).fill(0);
  for (const r of rows) r.x.forEach((v, j) => (means[j]! += v * r.trials));
  for (let j = 0; j < k - 1; j++) means[j]! /= n || 1;
  const notFitted = (method: string, iterations = 0, deviance = NaN): LogisticFit => ({
    coefficients: new Array<number>(k).fill(NaN),
    standardErrors: new Array<number>(k).fill(NaN),
    z: new Array<number>(k).fill(NaN),
    p: new Array<number>(k).fill(NaN),
    oddsRatios: means.map(() => ({ value: NaN, lower: NaN, upper: NaN })),
    iterations,
    converged: false,
    deviance,
    n,
    method,
  });
  // A covariate with a single value makes the information singular, but rounding in its centring can
  // hide that; it is not separation, and the note must say which it is. Equal stored values compare exactly.
  const used = rows.filter((r) => r.trials > 0);
  if (used.length === 0) return notFitted(say("stats.logistic.noSlabs"));
  if (means.some((_, j) => used.every((r) => r.x[j] === used[0]!.x[j]))) return notFitted(say("stats.logistic.noSpread"));
  const design = rows.map((r) => [1, ...r.x.map((v, j) => v - means[j]!)]);
  let beta = new Array<number>(k).fill(0);
  const ybar = rows.reduce((s, r) => s + r.successes, 0) / (n || 1);
  if (ybar > 0 && ybar < 1) beta[0] = Math.log(ybar / (1 - ybar));
  let deviance = Infinity;
  let iterations = 0;
  let converged = false;
  let info: number[][] = [];
  for (; iterations < maxIterations; iterations++) {
    const grad = new Array<number>(k).fill(0);
    info = Array.from({ length: k }, () => new Array<number>(k).fill(0));
    let dev = 0;
    rows.forEach((r, i) => {
      const x = design[i]!;
      let eta = 0;
      for (let j = 0; j < k; j++) eta += beta[j]! * x[j]!;
      const p = 1 / (1 + Math.exp(-eta));
      const w = r.trials * p * (1 - p);
      const resid = r.successes - r.trials * p;
      for (let a = 0; a < k; a++) {
        grad[a]! += x[a]! * resid;
        for (let b = 0; b <= a; b++) info[a]![b]! += w * x[a]! * x[b]!;
      }
      const s = r.successes;
      const f = r.trials - r.successes;
      if (s > 0) dev -= 2 * s * Math.log(Math.max(p, 1e-300) / (s / r.trials));
      if (f > 0) dev -= 2 * f * Math.log(Math.max(1 - p, 1e-300) / (f / r.trials));
    });
    for (let a = 0; a < k; a++) for (let b = a + 1; b < k; b++) info[a]![b] = info[b]![a]!;
    const inv = choleskyInverse(info);
    if (!inv) break;
    const step = inv.map((row) => row.reduce((s, v, j) => s + v * grad[j]!, 0));
    beta = beta.map((b, j) => b + step[j]!);
    if (Math.abs(deviance - dev) < 1e-10 * (Math.abs(dev) + 0.1) && Math.max(...step.map(Math.abs)) < 1e-8) {
      deviance = dev;
      converged = true;
      break;
    }
    deviance = dev;
  }
  const cov = choleskyInverse(info);
  if (!cov || !converged) {
    return notFitted(ybar <= 0 || ybar >= 1 ? say("stats.logistic.constantOutcome") : say("stats.logistic.notConverged"), iterations, deviance);
  }
  // Back to the original scale: b0 = a0 − Σ bⱼ mⱼ, Var(b0) = cᵀ Σ c with c = (1, −m₁, …).
  const c = [1, ...means.map((m) => -m)];
  const b0 = beta.reduce((s, b, j) => s + b * c[j]!, 0);
  let varB0 = 0;
  for (let a = 0; a < k; a++) for (let b = 0; b < k; b++) varB0 += c[a]! * cov[a]![b]! * c[b]!;
  const coefficients = [b0, ...beta.slice(1)];
  const standardErrors = [Math.sqrt(varB0), ...beta.slice(1).map((_, j) => Math.sqrt(cov[j + 1]![j + 1]!))];
  const z = coefficients.map((b, j) => b / standardErrors[j]!);
  const q = normalQuantileOf(1 - (1 - confidence) / 2);
  return {
    coefficients,
    standardErrors,
    z,
    p: z.map((v) => normalTwoSided(v)),
    oddsRatios: coefficients.slice(1).map((b, j) => ({
      value: Math.exp(b),
      lower: Math.exp(b - q * standardErrors[j + 1]!),
      upper: Math.exp(b + q * standardErrors[j + 1]!),
    })),
    iterations: iterations + 1,
    converged: true,
    deviance,
    n,
    method: say("stats.logistic.method"),
  };
}
