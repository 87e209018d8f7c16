/**
 * Penalised (ridge) logistic regression on columns, for the risk models: maximises
 *
 *   ℓ(β) − ½ λ Σ_j v_j β_j²
 *
 * where ℓ is the binomial log-likelihood, v_j the variance of column j over the fitted rows and the
 * intercept is not penalised — the "simple" penalty of Harrell's `lrm` (R package rms; Harrell,
 * *Regression Modeling Strategies*, 2nd ed., §9.10), so λ acts alike on columns of any scale. λ = 0 is
 * the ordinary maximum-likelihood fit.
 *
 * Newton–Raphson on the penalised likelihood (gradient X′(y − p) − λVβ, Hessian X′WX + λV), from the
 * intercept-only start or a given start (warm starts along a path of λ), until the largest step
 * changes a linear predictor by less than 1e−8 per unit of the column's spread. Reported beside
 * the coefficients: the effective degrees of freedom trace((X′WX + λV)⁻¹ X′WX) (Gray 1992, JASA
 * 87:942) and the penalised information's inverse (the variance `lrm` reports for penalised fits).
 *
 * Rows are the slabs in `rows` (indexes into the columns), so a time split needs no copy.
 * Written here: no maintained npm package fits penalised logistic models with this penalty.
 */
import { choleskyInverse } from "./linear-algebra";

export interface PenalisedFit {
  /** Intercept first, then one per column. */
  coefficients: number[];
  /** (X′WX + λV)⁻¹ at the solution; null when singular. */
  covariance: number[][] | null;
  effectiveDf: number | null;
  /** Penalised log-likelihood at the solution, and the log-likelihood alone. */
  penalisedLogLik: number;
  logLik: number;
  iterations: number;
  converged: boolean;
  lambda: number;
  n: number;
  events: number;
  method: string;
}

export interface PenalisedOptions {
  lambda: number;
  /** Starting coefficients (intercept first), e.g. the fit at the previous λ. */
  start?: number[];
  maxIterations?: number;
  /** Column variances for the penalty; by default computed over `rows`. */
  penaltyScale?: number[];
}

const sigmoid = (eta: number) => (eta >= 0 ? 1 / (1 + Math.exp(-eta)) : Math.exp(eta) / (1 + Math.exp(eta)));

/** Log of 1 + e^x without overflow. */
const log1pExp = (x: number) => (x > 0 ? x + Math.log1p(Math.exp(-x)) : Math.log1p(Math.exp(x)));

/** Means and variances (denominator n) of the columns over the rows. */
export function columnMoments(columns: readonly Float64Array[], rows: Int32Array): { mean: number[]; variance: number[] } {
  const p = columns.length;
  const mean = new Array<number>(p).fill(0);
  const variance = new Array<number>(p).fill(0);
  const n = rows.length;
  for (let j = 0; j < p; j++) {
    const c = columns[j]!;
    // Welford, for columns far from zero (a temperature near 1,550 °C).
    let m = 0;
    let s = 0;
    for (let i = 0; i < n; i++) {
      const v = c[rows[i]!]!;
      const d = v - m;
      m += d / (i + 1);
      s += d * (v - m);
    }
    mean[j] = m;
    variance[j] = n > 0 ? s / n : 0;
  }
  return { mean, variance };
}

/**
 * Fits y (0/1 per slab) on the columns over `rows`. Columns must be finite on those rows (the
 * caller imputes or drops missing values first).
 */
export function penalisedLogistic(columns: readonly Float64Array[], y: Uint8Array, rows: Int32Array, options: PenalisedOptions): PenalisedFit {
  const p = columns.length;
  const k = p + 1;
  const n = rows.length;
  const lambda = options.lambda;
  const maxIterations = options.maxIterations ?? 50;
  let events = 0;
  for (let i = 0; i < n; i++) events += y[rows[i]!]!;
  const method = `penalised logistic regression (ridge, λ = ${formatLambda(lambda)} on column variances, intercept unpenalised; Newton–Raphson)`;
  const { mean, variance } = columnMoments(columns, rows);
  const scale = options.penaltyScale ?? variance;
  const failed = (why: string): PenalisedFit => ({
    coefficients: new Array<number>(k).fill(NaN),
    covariance: null,
    effectiveDf: null,
    penalisedLogLik: NaN,
    logLik: NaN,
    iterations: 0,
    converged: false,
    lambda,
    n,
    events,
    method: `${method}: not fitted — ${why}`,
  });
  if (n === 0) return failed("no slabs");
  if (events === 0 || events === n) return failed(events === 0 ? "no slab carries the defect" : "every slab carries the defect");

  // Fitted on centred columns (numerically kinder: the intercept and slopes decouple), reported on
  // the original scale at the end. The penalty does not change under centring.
  let beta = new Array<number>(k).fill(0);
  if (options.start) {
    beta = [...options.start];
    let shift = 0;
    for (let j = 0; j < p; j++) shift += beta[j + 1]! * mean[j]!;
    beta[0] = beta[0]! + shift;
  } else beta[0] = Math.log(events / (n - events));

  const eta = new Float64Array(n);
  const computeEta = (b: number[]) => {
    eta.fill(b[0]!);
    for (let j = 0; j < p; j++) {
      const c = columns[j]!;
      const bj = b[j + 1]!;
      const mj = mean[j]!;
      if (bj === 0) continue;
      for (let i = 0; i < n; i++) eta[i] = eta[i]! + bj * (c[rows[i]!]! - mj);
    }
  };
  const objective = (b: number[]) => {
    let ll = 0;
    for (let i = 0; i < n; i++) {
      const e = eta[i]!;
      ll += y[rows[i]!]! ? -log1pExp(-e) : -log1pExp(e);
    }
    let pen = 0;
    for (let j = 0; j < p; j++) pen += scale[j]! * b[j + 1]! ** 2;
    return { ll, pll: ll - 0.5 * lambda * pen };
  };

  computeEta(beta);
  let current = objective(beta);
  let info: number[][] = [];
  let converged = false;
  let iterations = 0;
  const w = new Float64Array(n);
  const r = new Float64Array(n);
  const wx = new Float64Array(n);
  // The centred columns of the fitted rows, copied once so the information's n·p²/2 products run
  // over contiguous memory (most of the time of a fit on a million slabs). Float32 is enough for
  // the information, which steers the steps; the gradient, which fixes the solution, uses the
  // stored values in double precision.
  const centred = columns.map((c, j) => {
    const out = new Float32Array(n);
    const m = mean[j]!;
    for (let i = 0; i < n; i++) out[i] = c[rows[i]!]! - m;
    return out;
  });
  for (; iterations < maxIterations; iterations++) {
    // Gradient and Fisher information X′WX of the centred design.
    const grad = new Array<number>(k).fill(0);
    info = Array.from({ length: k }, () => new Array<number>(k).fill(0));
    let g0 = 0;
    let w0 = 0;
    for (let i = 0; i < n; i++) {
      const mu = sigmoid(eta[i]!);
      w[i] = mu * (1 - mu);
      r[i] = y[rows[i]!]! - mu;
      g0 += r[i]!;
      w0 += w[i]!;
    }
    grad[0] = g0;
    info[0]![0] = w0;
    for (let a = 0; a < p; a++) {
      const xa = centred[a]!;
      const ca = columns[a]!;
      // The gradient in double precision from the stored values: Σ r·(x − m) = Σ r·x − m·Σ r.
      let g = 0;
      for (let i = 0; i < n; i++) g += r[i]! * ca[rows[i]!]!;
      g -= mean[a]! * g0;
      let i0 = 0;
      for (let i = 0; i < n; i++) {
        const wv = w[i]! * xa[i]!;
        i0 += wv;
        wx[i] = wv;
      }
      grad[a + 1] = g - lambda * scale[a]! * beta[a + 1]!;
      info[0]![a + 1] = info[a + 1]![0] = i0;
      for (let b = 0; b <= a; b++) {
        const xb = centred[b]!;
        let sum = 0;
        for (let i = 0; i < n; i++) sum += wx[i]! * xb[i]!;
        info[a + 1]![b + 1] = info[b + 1]![a + 1] = sum;
      }
    }
    const hessian = info.map((row, i) => row.map((v, j) => (i === j && i > 0 ? v + lambda * scale[i - 1]! : v)));
    const inv = choleskyInverse(hessian, 1e-12);
    if (!inv) return failed("the conditions are collinear (a column repeats another); drop one");
    const step = inv.map((row) => row.reduce((s, v, j) => s + v * grad[j]!, 0));
    // Step halving keeps every step an ascent of the penalised likelihood.
    let t = 1;
    let next = beta;
    let trial = current;
    for (let h = 0; h < 30; h++) {
      next = beta.map((b, j) => b + t * step[j]!);
      computeEta(next);
      trial = objective(next);
      if (trial.pll >= current.pll - 1e-12 * Math.abs(current.pll)) break;
      t /= 2;
    }
    const change = Math.max(...step.map((s, j) => Math.abs(t * s) * (j === 0 ? 1 : Math.sqrt(variance[j - 1]!) || 1)));
    beta = next;
    current = trial;
    if (change < 1e-8) {
      converged = true;
      iterations++;
      break;
    }
  }
  if (!converged) return { ...failed(`did not converge in ${maxIterations} steps (the defect may be separated by a condition)`), iterations };

  // Information at the solution for the variance and the effective degrees of freedom.
  const penalisedInfo = info.map((row, i) => row.map((v, j) => (i === j && i > 0 ? v + lambda * scale[i - 1]! : v)));
  const covCentred = choleskyInverse(penalisedInfo, 1e-12);
  let effectiveDf: number | null = null;
  if (covCentred) {
    effectiveDf = 0;
    for (let i = 0; i < k; i++) for (let j = 0; j < k; j++) effectiveDf += covCentred[i]![j]! * info[j]![i]!;
  }
  // Back to the original scale: β0 = β0c − Σ βj·mean_j; the covariance through the same linear map.
  const coefficients = [...beta];
  let shift = 0;
  for (let j = 0; j < p; j++) shift += beta[j + 1]! * mean[j]!;
  coefficients[0] = beta[0]! - shift;
  let covariance: number[][] | null = null;
  if (covCentred) {
    // T maps centred to original coefficients: row 0 is (1, −m1, …, −mp), the rest the identity.
    const t = Array.from({ length: k }, (_, i) => Array.from({ length: k }, (_, j) => (i === j ? 1 : i === 0 && j > 0 ? -mean[j - 1]! : 0)));
    const tc = t.map((row) => covCentred[0]!.map((_, j) => row.reduce((s, v, m) => s + v * covCentred[m]![j]!, 0)));
    covariance = tc.map((row) => t.map((trow) => row.reduce((s, v, m) => s + v * trow[m]!, 0)));
  }
  return { coefficients, covariance, effectiveDf, penalisedLogLik: current.pll, logLik: current.ll, iterations, converged, lambda, n, events, method };
}

function formatLambda(l: number): string {
  if (l === 0) return "0 (no penalty)";
  return l >= 0.01 && l < 1e4 ? String(Number(l.toPrecision(3))) : l.toExponential(2);
}

/** The linear predictor of one slab (row index) under a fit. */
export function linearPredictor(coefficients: readonly number[], columns: readonly Float64Array[], row: number): number {
  let e = coefficients[0]!;
  for (let j = 0; j < columns.length; j++) e += coefficients[j + 1]! * columns[j]![row]!;
  return e;
}

export { sigmoid as logistic };
