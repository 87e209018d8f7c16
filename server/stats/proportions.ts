import { normalQuantileOf } from "./distributions";
import { say } from "../lib/words";

export interface Proportion {
  n: number;
  x: number;
  p: number;
  lower: number;
  upper: number;
}

/**
 * A proportion with its Wilson score interval (Wilson 1927; method 3 of Newcombe 1998,
 * Stat. Med. 17:857). Well behaved at 0 and n, where the simple Wald interval collapses.
 */
export function wilson(x: number, n: number, confidence = 0.95): Proportion {
  if (n <= 0) return { n: 0, x: 0, p: NaN, lower: NaN, upper: NaN };
  const z = normalQuantileOf(1 - (1 - confidence) / 2);
  const p = x / n;
  const z2 = z * z;
  const centre = (p + z2 / (2 * n)) / (1 + z2 / n);
  const half = (z / (1 + z2 / n)) * Math.sqrt((p * (1 - p)) / n + z2 / (4 * n * n));
  return { n, x, p, lower: x === 0 ? 0 : Math.max(0, centre - half), upper: x === n ? 1 : Math.min(1, centre + half) };
}

/** Count per `per` units of a base (defects per 100 slabs, per 1000 t). */
export function ratePer(count: number, base: number, per: number): number {
  return base > 0 ? (count / base) * per : NaN;
}

/**
 * Difference of two independent proportions p1 − p2 with Newcombe's hybrid score interval
 * (method 10 of Newcombe 1998, built from the two Wilson intervals).
 */
export function differenceOfProportions(x1: number, n1: number, x2: number, n2: number, confidence = 0.95) {
  const a = wilson(x1, n1, confidence);
  const b = wilson(x2, n2, confidence);
  const d = a.p - b.p;
  const lower = d - Math.sqrt((a.p - a.lower) ** 2 + (b.upper - b.p) ** 2);
  const upper = d + Math.sqrt((a.upper - a.p) ** 2 + (b.p - b.lower) ** 2);
  return { difference: d, lower, upper, method: say("stats.newcombe") };
}
