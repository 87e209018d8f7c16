import { dec, say } from "../lib/words";

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

/** One period of an attributes chart: `n` slabs inspected (or units), `x` affected slabs (or defects). */
export interface ChartSample {
  period: string;
  n: number;
  x: number;
}

export interface PhasedPoint {
  period: string;
  phase: "baseline" | "monitoring";
  /** A baseline period the engineer set aside (assignable cause found): plotted, not used for the limits. */
  excluded: boolean;
  n: number;
  x: number;
  /** The plotted statistic: share affected (p-charts) or count per unit (u-chart); null without slabs. */
  value: number | null;
  centre: number | null;
  ucl: number | null;
  lcl: number | null;
  /** (value − centre) / σ of the chart at this point, for the run rules; null when undefined. */
  z: number | null;
  outOfControl: boolean;
}

export interface PhasedChart {
  centre: number | null;
  /** Laney's σ_z (1 for the plain p- and u-charts). */
  sigmaZ: number | null;
  baselinePeriods: number;
  points: PhasedPoint[];
  reason: string | null;
  notes: string[];
  method: string;
}

interface PhaseOptions {
  sigmas?: number;
  /** Baseline periods to leave out of the limits (Montgomery: revise trial limits after removing points with an assignable cause). */
  exclude?: string[];
}

function phased(
  baseline: ChartSample[],
  monitoring: ChartSample[],
  options: PhaseOptions,
  sigmaOf: (centre: number, n: number) => number,
  bounds: [number, number],
) {
  const sigmas = options.sigmas ?? 3;
  const excluded = new Set(options.exclude ?? []);
  const used = baseline.filter((s) => !excluded.has(s.period) && s.n > 0);
  const N = used.reduce((t, s) => t + s.n, 0);
  const X = used.reduce((t, s) => t + s.x, 0);
  const centre = N > 0 ? X / N : null;
  const all = [...baseline.map((s) => ({ s, phase: "baseline" as const })), ...monitoring.map((s) => ({ s, phase: "monitoring" as const }))];
  const raw = all.map(({ s, phase }) => {
    const value = s.n > 0 ? s.x / s.n : null;
    const sigma = centre !== null && s.n > 0 ? sigmaOf(centre, s.n) : null;
    return { s, phase, value, sigma, excluded: phase === "baseline" && excluded.has(s.period) };
  });
  const point = (r: (typeof raw)[number], widen: number): PhasedPoint => {
    const { s, phase, value, sigma, excluded: ex } = r;
    const half = sigma !== null ? sigmas * sigma * widen : null;
    const ucl = half !== null && centre !== null ? Math.min(bounds[1], centre + half) : null;
    const lcl = half !== null && centre !== null ? Math.max(bounds[0], centre - half) : null;
    const z = value !== null && centre !== null && sigma !== null && sigma * widen > 0 ? (value - centre) / (sigma * widen) : null;
    return {
      period: s.period,
      phase,
      excluded: ex,
      n: s.n,
      x: s.x,
      value,
      centre,
      ucl,
      lcl,
      z,
      outOfControl: value !== null && ucl !== null && lcl !== null && (value > ucl || value < lcl),
    };
  };
  return { centre, used, raw, point, sigmas };
}

/**
 * p-chart whose centre line and limits are estimated on a baseline period (Phase I) and then held
 * fixed for the later periods (Phase II) (Montgomery, Introduction to Statistical Quality Control:
 * trial limits from preliminary samples, revised after removing samples with assignable causes, then
 * used for monitoring). Limits p̄ ± 3√(p̄(1 − p̄)/nᵢ) per period, held within [0, 1].
 */
export function pChartWithBaseline(baseline: ChartSample[], monitoring: ChartSample[] = [], options: PhaseOptions = {}): PhasedChart {
  const c = phased(baseline, monitoring, options, (p, n) => Math.sqrt((p * (1 - p)) / n), [0, 1]);
  const method = say("stats.control.p", { sigmas: c.sigmas, count: c.used.length });
  if (c.centre === null)
    return {
      centre: null,
      sigmaZ: null,
      baselinePeriods: c.used.length,
      points: c.raw.map((r) => c.point(r, 1)),
      reason: say("stats.control.noSlabs"),
      notes: [],
      method,
    };
  const notes: string[] = [];
  if (c.centre === 0 || c.centre === 1) notes.push(say(c.centre === 0 ? "stats.control.collapse0" : "stats.control.collapse1"));
  if (c.used.length < 20) notes.push(say("stats.control.fewPeriods", { count: c.used.length }));
  return { centre: c.centre, sigmaZ: 1, baselinePeriods: c.used.length, points: c.raw.map((r) => c.point(r, 1)), reason: null, notes, method };
}

/**
 * u-chart (defects per unit, e.g. per slab) with baseline (Phase I) limits ū ± 3√(ū/nᵢ), lower limit
 * held at 0, applied to the later periods (Montgomery).
 */
export function uChartWithBaseline(baseline: ChartSample[], monitoring: ChartSample[] = [], options: PhaseOptions = {}): PhasedChart {
  const c = phased(baseline, monitoring, options, (u, n) => Math.sqrt(u / n), [0, Infinity]);
  const method = say("stats.control.u", { sigmas: c.sigmas, count: c.used.length });
  if (c.centre === null)
    return {
      centre: null,
      sigmaZ: null,
      baselinePeriods: c.used.length,
      points: c.raw.map((r) => c.point(r, 1)),
      reason: say("stats.control.noUnits"),
      notes: [],
      method,
    };
  return { centre: c.centre, sigmaZ: 1, baselinePeriods: c.used.length, points: c.raw.map((r) => c.point(r, 1)), reason: null, notes: [], method };
}

/** d₂ for moving ranges of two, as Laney 2002 uses it. */
const D2 = 1.128;

/**
 * Laney p′ chart (Laney 2002, Quality Engineering 14(4):531): for very large or overdispersed
 * samples the binomial σ of the p-chart is too small. Each period's zᵢ = (pᵢ − p̄)/σ_pᵢ with
 * σ_pᵢ = √(p̄(1 − p̄)/nᵢ); σ_z = MR̄/1.128 from the moving ranges |zᵢ − zᵢ₋₁| of the baseline periods
 * in order; limits p̄ ± 3 σ_pᵢ σ_z, held within [0, 1]. σ_z ≈ 1 gives the p-chart back; σ_z > 1 is
 * overdispersion (variation between periods beyond the binomial), where the p-chart raises false
 * alarms; σ_z < 1 underdispersion.
 */
export function laneyPChart(baseline: ChartSample[], monitoring: ChartSample[] = [], options: PhaseOptions = {}): PhasedChart {
  const c = phased(baseline, monitoring, options, (p, n) => Math.sqrt((p * (1 - p)) / n), [0, 1]);
  const method = say("stats.control.laney", { sigmas: c.sigmas });
  const none = (reason: string): PhasedChart => ({
    centre: c.centre,
    sigmaZ: null,
    baselinePeriods: c.used.length,
    points: c.raw.map((r) => ({ ...c.point(r, 1), ucl: null, lcl: null, z: null, outOfControl: false })),
    reason,
    notes: [],
    method,
  });
  if (c.centre === null) return none(say("stats.control.noSlabs"));
  if (c.centre === 0 || c.centre === 1) return none(say(c.centre === 0 ? "stats.control.zNone0" : "stats.control.zNone1"));
  const zs = c.raw.filter((r) => r.phase === "baseline" && !r.excluded && r.value !== null).map((r) => (r.value! - c.centre!) / r.sigma!);
  if (zs.length < 2) return none(say("stats.control.noMovingRange"));
  let mr = 0;
  for (let i = 1; i < zs.length; i++) mr += Math.abs(zs[i]! - zs[i - 1]!);
  const sigmaZ = mr / (zs.length - 1) / D2;
  if (!(sigmaZ > 0)) return { ...none(say("stats.control.zConstant")), sigmaZ: 0 };
  const notes = [
    sigmaZ > 1
      ? say("stats.control.over", { sigmaZ: dec(sigmaZ, 2) })
      : sigmaZ < 1
        ? say("stats.control.under", { sigmaZ: dec(sigmaZ, 2) })
        : say("stats.control.same"),
  ];
  return { centre: c.centre, sigmaZ, baselinePeriods: c.used.length, points: c.raw.map((r) => c.point(r, sigmaZ)), reason: null, notes, method };
}

export type WesternElectricRule = 1 | 2 | 3 | 4;

/** The four rules in words, in the reader's language (methods:stats.control.rule1…4). */
export const westernElectricRuleWords = (): Record<WesternElectricRule, string> => ({
  1: say("stats.control.rule1"),
  2: say("stats.control.rule2"),
  3: say("stats.control.rule3"),
  4: say("stats.control.rule4"),
});

/**
 * The four zone tests for unnatural patterns of the Western Electric Statistical Quality Control
 * Handbook (1956), on each point's distance from the centre line in σ units (z):
 * 1. one point beyond 3σ (beyond zone A);
 * 2. two of three successive points beyond 2σ (zone A or beyond), on the same side;
 * 3. four of five successive points beyond 1σ (zone B or beyond), on the same side;
 * 4. eight successive points on the same side of the centre line (zone C or beyond).
 * "Beyond" is strict; a point exactly on the centre line is on neither side. A rule is reported at the
 * point that completes its pattern, and only when that point is itself one of the points beyond the
 * zone, so one pattern is not reported again at the next point. Periods without a point (z null) are
 * skipped: the successive points are the plotted ones.
 */
export function westernElectricRules(z: (number | null)[]): { rules: WesternElectricRule[][]; method: string } {
  const rules: WesternElectricRule[][] = z.map(() => []);
  const idx: number[] = [];
  z.forEach((v, i) => {
    if (v !== null && Number.isFinite(v)) idx.push(i);
  });
  const val = (k: number) => z[idx[k]!]!;
  for (let k = 0; k < idx.length; k++) {
    const out = rules[idx[k]!]!;
    const v = val(k);
    const side = Math.sign(v);
    if (Math.abs(v) > 3) out.push(1);
    // Points among the last `len` (fewer at the start of the chart) beyond `limit` on this point's
    // side; 0 unless this point is one of them.
    const beyond = (len: number, limit: number) => {
      if (side === 0 || Math.abs(v) <= limit) return 0;
      let c = 0;
      for (let j = Math.max(0, k - len + 1); j <= k; j++) if (val(j) * side > limit) c++;
      return c;
    };
    if (beyond(3, 2) >= 2) out.push(2);
    if (beyond(5, 1) >= 4) out.push(3);
    if (k >= 7 && side !== 0) {
      let same = true;
      for (let j = k - 7; j <= k && same; j++) same = Math.sign(val(j)) === side;
      if (same) out.push(4);
    }
  }
  return {
    rules,
    method: say("stats.control.rulesMethod"),
  };
}
