/**
 * Restricted (natural) cubic splines in the truncated-power form of Harrell, *Regression Modeling
 * Strategies* (2nd ed., 2015, §2.4.5), as the `rcspline.eval` function of his R package Hmisc
 * computes them: with k knots t_1 < … < t_k a variable enters a model as x itself plus k − 2 terms
 *
 *   X_j(x) = [ (x − t_j)₊³ − (x − t_{k−1})₊³ (t_k − t_j)/(t_k − t_{k−1}) + (x − t_k)₊³ (t_{k−1} − t_j)/(t_k − t_{k−1}) ] / τ,
 *   j = 1 … k − 2,
 *
 * which are cubic between the knots and linear beyond the outer ones. τ = (t_k − t_1)² ("norm = 2",
 * Hmisc's default) keeps the terms on the scale of x so a penalty treats them alike.
 *
 * Knots at Harrell's default quantiles (his Table 2.3; the values and the small-sample rule below are
 * recalled from the book and Hmisc's source, and checked here against the spline's definition): 3 knots .10 .50 .90; 4 knots .05 .35 .65 .95;
 * 5 knots .05 .275 .50 .725 .95; quantiles of the sample as R's default (type 7). With fewer than 100
 * values the outer knots move to the 5th smallest and 5th largest value, as rcspline.eval does.
 * Knots that coincide (a variable with few distinct values) are merged; fewer than 3 distinct knots
 * leave the variable linear.
 *
 * Written here: no maintained npm package gives Harrell's spline basis.
 */

export const DEFAULT_KNOT_QUANTILES: Readonly<Record<3 | 4 | 5, readonly number[]>> = {
  3: [0.1, 0.5, 0.9],
  4: [0.05, 0.35, 0.65, 0.95],
  5: [0.05, 0.275, 0.5, 0.725, 0.95],
};

/** Quantile of sorted values by linear interpolation between order statistics (R's type 7). */
export function quantileSorted(sorted: ArrayLike<number>, p: number): number {
  const n = sorted.length;
  if (n === 0) return NaN;
  const h = (n - 1) * p;
  const lo = Math.floor(h);
  const hi = Math.min(n - 1, lo + 1);
  return sorted[lo]! + (h - lo) * (sorted[hi]! - sorted[lo]!);
}

/**
 * Knots for `count` (3–5) knots from the finite values given (NaN skipped). Returns the distinct
 * knots in increasing order; fewer than 3 mean the variable cannot carry a spline.
 */
export function splineKnots(values: ArrayLike<number>, count: 3 | 4 | 5 = 4): number[] {
  const finite: number[] = [];
  for (let i = 0; i < values.length; i++) if (Number.isFinite(values[i]!)) finite.push(values[i]!);
  if (finite.length === 0) return [];
  const sorted = Float64Array.from(finite).sort();
  // Hmisc refuses fewer than 6 values; so do we (no knots: the variable stays linear).
  if (sorted.length < 6) return [];
  const knots = DEFAULT_KNOT_QUANTILES[count].map((p) => quantileSorted(sorted, p));
  // (From 10 values on: below that the 5th smallest would pass the 5th largest.)
  if (sorted.length < 100 && sorted.length >= 10) {
    knots[0] = sorted[4]!;
    knots[count - 1] = sorted[sorted.length - 5]!;
  }
  const distinct: number[] = [];
  for (const t of knots) if (distinct.length === 0 || t > distinct[distinct.length - 1]!) distinct.push(t);
  return distinct;
}

const cube = (v: number) => (v > 0 ? v * v * v : 0);

/**
 * The k − 2 non-linear terms at x for the given knots (x itself is the model's linear term).
 * NaN in, NaN out.
 */
export function splineTerms(x: number, knots: readonly number[], out: number[] = []): number[] {
  const k = knots.length;
  out.length = Math.max(0, k - 2);
  if (k < 3) return out;
  const tk = knots[k - 1]!;
  const tk1 = knots[k - 2]!;
  const tau = (tk - knots[0]!) ** 2;
  const d = tk - tk1;
  const a = cube(x - tk1);
  const b = cube(x - tk);
  for (let j = 0; j < k - 2; j++) {
    const tj = knots[j]!;
    out[j] = (cube(x - tj) - (a * (tk - tj)) / d + (b * (tk1 - tj)) / d) / tau;
  }
  return out;
}
