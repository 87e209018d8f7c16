/**
 * Mean and variance computed stably, with an exact "no spread" test. The one-pass Σx² − n·x̄² form
 * cancels catastrophically: an all-equal variable can come out with a tiny positive variance and then
 * be "tested". Here the variance comes from Welford's updating (Welford 1962, Technometrics 4:419;
 * weighted form West 1979, Comm. ACM 22:532), and a variable whose smallest and largest values are
 * equal has variance exactly 0 and is flagged as not testable.
 */
import { say } from "../lib/words";

export interface Spread {
  /** Number of observations (sum of the counts). */
  n: number;
  mean: number | null;
  /** Sample variance (divisor n − 1); 0 exactly when every value is equal. */
  variance: number | null;
  sd: number | null;
  min: number | null;
  max: number | null;
  /** True when fewer than two observations or every value is equal: nothing can be tested. */
  noSpread: boolean;
  /** Why there is no spread, in words; null when there is. */
  reason: string | null;
}

/** Accumulates values (each with a count) in one pass; `result()` may be called at any time. */
export class RunningSpread {
  private n = 0;
  private mean = 0;
  private m2 = 0;
  private min = Infinity;
  private max = -Infinity;

  /** Adds `value` `count` times; non-finite values and non-positive counts are ignored. */
  add(value: number, count = 1): this {
    if (!Number.isFinite(value) || !(count > 0)) return this;
    const n = this.n + count;
    const delta = value - this.mean;
    const r = (delta * count) / n;
    this.mean += r;
    this.m2 += this.n * delta * r;
    this.n = n;
    if (value < this.min) this.min = value;
    if (value > this.max) this.max = value;
    return this;
  }

  /** Combines another accumulator into this one (Chan, Golub & LeVeque 1983, pairwise update). */
  merge(other: RunningSpread): this {
    if (other.n === 0) return this;
    if (this.n === 0) {
      Object.assign(this, { n: other.n, mean: other.mean, m2: other.m2, min: other.min, max: other.max });
      return this;
    }
    const n = this.n + other.n;
    const delta = other.mean - this.mean;
    this.m2 += other.m2 + (delta * delta * this.n * other.n) / n;
    this.mean += (delta * other.n) / n;
    this.n = n;
    this.min = Math.min(this.min, other.min);
    this.max = Math.max(this.max, other.max);
    return this;
  }

  result(): Spread {
    const { n } = this;
    if (n === 0) return { n, mean: null, variance: null, sd: null, min: null, max: null, noSpread: true, reason: "no values" };
    if (this.min === this.max) {
      // Exact: equal values have no spread whatever rounding did to the running sums.
      return {
        n,
        mean: this.min,
        variance: n > 1 ? 0 : null,
        sd: n > 1 ? 0 : null,
        min: this.min,
        max: this.max,
        noSpread: true,
        reason: say(n > 1 ? "stats.spread.same" : "stats.spread.one"),
      };
    }
    if (n < 2) return { n, mean: this.mean, variance: null, sd: null, min: this.min, max: this.max, noSpread: true, reason: "only one value" };
    const variance = Math.max(0, this.m2 / (n - 1));
    return { n, mean: this.mean, variance, sd: Math.sqrt(variance), min: this.min, max: this.max, noSpread: false, reason: null };
  }
}

/** Spread of plain values. */
export function spreadOf(values: ArrayLike<number>): Spread {
  const acc = new RunningSpread();
  for (let i = 0; i < values.length; i++) acc.add(values[i]!);
  return acc.result();
}

/** Spread of grouped values (a value with how many observations carry it). */
export function spreadOfGroups(groups: { value: number; n: number }[]): Spread {
  const acc = new RunningSpread();
  for (const g of groups) acc.add(g.value, g.n);
  return acc.result();
}
