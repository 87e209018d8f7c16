export interface PChartPoint {
  period: string;
  slabs: number;
  affected: number;
  p: number;
  ucl: number;
  lcl: number;
  outOfControl: boolean;
}

/**
 * p-chart with 3σ limits for samples of varying size: p̄ = Σx / Σn, limits p̄ ± 3 √(p̄(1 − p̄)/nᵢ)
 * for each sample, the lower limit held at 0 and the upper at 1 (Montgomery, Introduction to
 * Statistical Quality Control, the control chart for fraction nonconforming).
 */
export function pChart(samples: { period: string; n: number; x: number }[], sigmas = 3): { pBar: number; points: PChartPoint[] } {
  const N = samples.reduce((s, v) => s + v.n, 0);
  const X = samples.reduce((s, v) => s + v.x, 0);
  const pBar = N > 0 ? X / N : NaN;
  return {
    pBar,
    points: samples.map((s) => {
      const p = s.n > 0 ? s.x / s.n : NaN;
      const half = sigmas * Math.sqrt((pBar * (1 - pBar)) / s.n);
      const ucl = Math.min(1, pBar + half);
      const lcl = Math.max(0, pBar - half);
      return { period: s.period, slabs: s.n, affected: s.x, p, ucl, lcl, outOfControl: p > ucl || p < lcl };
    }),
  };
}

/** u-chart for counts per unit with varying units: ū ± 3 √(ū / unitsᵢ). */
export function uChart(samples: { period: string; units: number; count: number }[], sigmas = 3) {
  const U = samples.reduce((s, v) => s + v.units, 0);
  const C = samples.reduce((s, v) => s + v.count, 0);
  const uBar = U > 0 ? C / U : NaN;
  return {
    uBar,
    points: samples.map((s) => {
      const u = s.units > 0 ? s.count / s.units : NaN;
      const half = sigmas * Math.sqrt(uBar / s.units);
      const ucl = uBar + half;
      const lcl = Math.max(0, uBar - half);
      return { period: s.period, units: s.units, count: s.count, u, ucl, lcl, outOfControl: u > ucl || u < lcl };
    }),
  };
}
