/**
 * Distribution tails from @stdlib (typed, well kept), in the forms the tests need: upper tails are
 * computed directly (erfc, upper incomplete gamma) rather than as 1 − cdf, so tiny p-values keep
 * their digits.
 */
import erfc from "@stdlib/math-base-special-erfc";
import gammainc from "@stdlib/math-base-special-gammainc";
import gammaln from "@stdlib/math-base-special-gammaln";
import normalQuantile from "@stdlib/stats-base-dists-normal-quantile";
import tCdf from "@stdlib/stats-base-dists-t-cdf";

/** P(Z ≥ z) for a standard normal Z. */
export function normalUpper(z: number): number {
  return 0.5 * erfc(z / Math.SQRT2);
}

/** Two-sided p for a standard normal statistic. */
export function normalTwoSided(z: number): number {
  return Math.min(1, 2 * normalUpper(Math.abs(z)));
}

/** The z with P(Z ≤ z) = p. */
export function normalQuantileOf(p: number): number {
  return normalQuantile(p, 0, 1);
}

/** Two-sided p for Student's t with df degrees of freedom; NaN when t is undefined (0/0: no spread). */
export function tTwoSided(t: number, df: number): number {
  // NaN is checked first: it is also "not finite", and reading it as an infinite t gave p = 0.
  if (Number.isNaN(t) || Number.isNaN(df)) return NaN;
  if (!Number.isFinite(t)) return 0;
  return Math.min(1, 2 * tCdf(-Math.abs(t), df));
}

/** P(X² ≥ x) for a chi-square with df degrees of freedom (upper regularized incomplete gamma). */
export function chiSquareUpper(x: number, df: number): number {
  if (x <= 0) return 1;
  return gammainc(x / 2, df / 2, true, true);
}

/** ln(n!) */
export function lnFactorial(n: number): number {
  return gammaln(n + 1);
}
