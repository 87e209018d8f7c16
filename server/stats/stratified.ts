/**
 * Stratified 2×2 tables: the odds ratio within each stratum, the Mantel–Haenszel common odds ratio
 * with the Robins–Breslow–Greenland interval, the Cochran–Mantel–Haenszel test and the Breslow–Day
 * test of homogeneity with Tarone's correction.
 *
 * Each stratum is the table [[a, b], [c, d]]: rows are the two groups compared (a, b for the first,
 * "exposed", group; c, d for the second), columns are affected and not affected. The odds ratio is
 * ad / bc: the odds of being affected in the first group over those in the second. This is the layout
 * of R's mantelhaen.test on a 2 × 2 × K array x with x[1,1,k] = a, x[1,2,k] = b, x[2,1,k] = c,
 * x[2,2,k] = d.
 */
import { chiSquareUpper, normalQuantileOf } from "./distributions";
import { say } from "../lib/words";

export interface Stratum2x2 {
  label: string;
  a: number;
  b: number;
  c: number;
  d: number;
}

export interface StratumOddsRatio {
  label: string;
  n: number;
  oddsRatio: number | null;
  ciLower: number | null;
  ciUpper: number | null;
  /** True when 0.5 was added to every cell because one cell was zero. */
  zeroCellCorrection: boolean;
  reason: string | null;
}

export interface MantelHaenszel {
  strata: StratumOddsRatio[];
  /** Strata that carry information (both groups and both outcomes present). */
  informativeStrata: number;
  oddsRatio: number | null;
  ciLower: number | null;
  ciUpper: number | null;
  /** Robins–Breslow–Greenland standard error of ln(OR_MH). */
  logOddsRatioSe: number | null;
  /** Crude odds ratio of the collapsed table, for the change-in-estimate comparison. */
  crudeOddsRatio: number | null;
  cmh: { statistic: number | null; df: 1; p: number | null; continuityCorrection: boolean; reason: string | null };
  breslowDay: BreslowDay;
  reason: string | null;
  notes: string[];
  method: string;
}

export interface BreslowDay {
  /** Tarone-corrected when `tarone` is true. */
  statistic: number | null;
  df: number | null;
  p: number | null;
  /** The Breslow–Day statistic before Tarone's correction. */
  uncorrected: number | null;
  tarone: boolean;
  /** Strata whose smallest expected cell under the common odds ratio is below 5. */
  smallExpected: number;
  reason: string | null;
}

const zOf = (confidence: number) => normalQuantileOf(1 - (1 - confidence) / 2);

/** Why a stratum carries no information on an odds ratio, or null when it does. */
function uninformative(s: Stratum2x2): string | null {
  if (s.a + s.b === 0) return say("stats.mh.firstEmpty");
  if (s.c + s.d === 0) return say("stats.mh.secondEmpty");
  if (s.a + s.c === 0) return say("stats.mh.noneAffected");
  if (s.b + s.d === 0) return say("stats.mh.allAffected");
  return null;
}

/**
 * Odds ratio of one 2×2 table with Woolf's logit interval, exp(ln OR ± z √(1/a + 1/b + 1/c + 1/d))
 * (Woolf 1955). When a cell is zero, 0.5 is added to every cell first (Haldane 1956; Anscombe
 * 1956), so the estimate and interval stay finite; a table with an empty row or column has no odds
 * ratio at all (null).
 */
export function stratumOddsRatio(s: Stratum2x2, confidence = 0.95): StratumOddsRatio {
  const n = s.a + s.b + s.c + s.d;
  const why = uninformative(s);
  if (why) return { label: s.label, n, oddsRatio: null, ciLower: null, ciUpper: null, zeroCellCorrection: false, reason: say("stats.mh.noOddsRatio", { why }) };
  const zero = s.a === 0 || s.b === 0 || s.c === 0 || s.d === 0;
  const h = zero ? 0.5 : 0;
  const [a, b, c, d] = [s.a + h, s.b + h, s.c + h, s.d + h];
  const lnOr = Math.log((a * d) / (b * c));
  const se = Math.sqrt(1 / a + 1 / b + 1 / c + 1 / d);
  const z = zOf(confidence);
  return {
    label: s.label,
    n,
    oddsRatio: Math.exp(lnOr),
    ciLower: Math.exp(lnOr - z * se),
    ciUpper: Math.exp(lnOr + z * se),
    zeroCellCorrection: zero,
    reason: zero ? say("stats.mh.haldane") : null,
  };
}

/**
 * The expected a of a stratum under a common odds ratio ψ with its margins fixed: the root of
 * A(n₂ − m₁ + A) = ψ(n₁ − A)(m₁ − A) inside [max(0, m₁ − n₂), min(n₁, m₁)] (Breslow & Day 1980).
 */
export function expectedUnderCommonOddsRatio(s: Stratum2x2, psi: number): number {
  const n1 = s.a + s.b;
  const n2 = s.c + s.d;
  const m1 = s.a + s.c;
  const lo = Math.max(0, m1 - n2);
  const hi = Math.min(n1, m1);
  if (psi === 1) return (n1 * m1) / (n1 + n2);
  // (1 − ψ)A² + (n₂ − m₁ + ψ(n₁ + m₁))A − ψ n₁ m₁ = 0; the stable form of the two roots.
  const qa = 1 - psi;
  const qb = n2 - m1 + psi * (n1 + m1);
  const qc = -psi * n1 * m1;
  const disc = Math.sqrt(Math.max(0, qb * qb - 4 * qa * qc));
  const q = -0.5 * (qb + Math.sign(qb || 1) * disc);
  const roots = [q / qa, qc / q].filter((r) => Number.isFinite(r));
  const tol = 1e-9 * Math.max(1, hi);
  const inside = roots.find((r) => r >= lo - tol && r <= hi + tol);
  return Math.min(hi, Math.max(lo, inside ?? roots[0]!));
}

/**
 * Breslow–Day test that the odds ratio is the same in every stratum, evaluated at the
 * Mantel–Haenszel estimate (Breslow & Day 1980), with Tarone's correction (Tarone 1985, Biometrika
 * 72:91) subtracting (Σa − ΣA)² / ΣVar(a). Chi-square with (informative strata − 1) df, asymptotic.
 */
export function breslowDay(strata: Stratum2x2[], commonOddsRatio: number | null, tarone = true): BreslowDay {
  const used = strata.filter((s) => !uninformative(s));
  const none = (reason: string): BreslowDay => ({ statistic: null, df: null, p: null, uncorrected: null, tarone, smallExpected: 0, reason });
  if (used.length < 2) return none(say(used.length === 1 ? "stats.mh.oneStratum" : "stats.mh.noStratum"));
  if (commonOddsRatio === null || !(commonOddsRatio > 0) || !Number.isFinite(commonOddsRatio)) return none(say("stats.mh.noCommon"));
  let x2 = 0;
  let sumA = 0;
  let sumE = 0;
  let sumV = 0;
  let small = 0;
  for (const s of used) {
    const e = expectedUnderCommonOddsRatio(s, commonOddsRatio);
    const n1 = s.a + s.b;
    const m1 = s.a + s.c;
    const cells = [e, n1 - e, m1 - e, s.c + s.d - m1 + e];
    if (Math.min(...cells) < 5) small++;
    const v = 1 / cells.reduce((t, x) => t + 1 / x, 0);
    x2 += (s.a - e) ** 2 / v;
    sumA += s.a;
    sumE += e;
    sumV += v;
  }
  const statistic = tarone ? x2 - (sumA - sumE) ** 2 / sumV : x2;
  const df = used.length - 1;
  return { statistic, df, p: chiSquareUpper(statistic, df), uncorrected: x2, tarone, smallExpected: small, reason: null };
}

/**
 * Mantel–Haenszel analysis of K strata (Mantel & Haenszel 1959, J. Natl Cancer Inst. 22:719):
 * - common odds ratio Σ(aᵢdᵢ/nᵢ) / Σ(bᵢcᵢ/nᵢ);
 * - its interval exp(ln OR ± z·SE) with the Robins–Breslow–Greenland variance (Robins, Breslow &
 *   Greenland 1986, Biometrics 42:311), as R's mantelhaen.test reports;
 * - the Cochran–Mantel–Haenszel test (|Σa − ΣE(a)| − ½)² / ΣVar(a), 1 df, asymptotic; the ½ is the
 *   continuity correction, applied by default as in R's mantelhaen.test (correct = TRUE) and only
 *   while |Σa − ΣE(a)| ≥ ½, as R does;
 * - Breslow–Day with Tarone's correction.
 * Strata without information (an empty group or outcome) are listed but add nothing; a stratum of one
 * slab has no hypergeometric variance and is skipped the same way.
 */
export function mantelHaenszel(strata: Stratum2x2[], options: { confidence?: number; continuityCorrection?: boolean; tarone?: boolean } = {}): MantelHaenszel {
  const confidence = options.confidence ?? 0.95;
  const correct = options.continuityCorrection ?? true;
  const tarone = options.tarone ?? true;
  const per = strata.map((s) => stratumOddsRatio(s, confidence));
  const used = strata.filter((s) => !uninformative(s));
  const notes: string[] = [];
  const skipped = strata.length - used.length;
  if (skipped > 0) notes.push(say("stats.mh.skipped", { count: skipped }));
  let R = 0;
  let S = 0;
  let PR = 0;
  let PSQR = 0;
  let QS = 0;
  let sumA = 0;
  let sumE = 0;
  let sumV = 0;
  for (const s of used) {
    const n = s.a + s.b + s.c + s.d;
    const r = (s.a * s.d) / n;
    const q = (s.b * s.c) / n;
    const P = (s.a + s.d) / n;
    const Q = (s.b + s.c) / n;
    R += r;
    S += q;
    PR += P * r;
    PSQR += P * q + Q * r;
    QS += Q * q;
    const n1 = s.a + s.b;
    const n2 = s.c + s.d;
    const m1 = s.a + s.c;
    const m2 = s.b + s.d;
    sumA += s.a;
    sumE += (n1 * m1) / n;
    sumV += (n1 * n2 * m1 * m2) / (n * n * (n - 1));
  }
  const total = strata.reduce((t, s) => ({ a: t.a + s.a, b: t.b + s.b, c: t.c + s.c, d: t.d + s.d }), { a: 0, b: 0, c: 0, d: 0 });
  const crude = total.b * total.c > 0 && total.a * total.d > 0 ? (total.a * total.d) / (total.b * total.c) : null;
  const method = say(`stats.mh.method_${correct ? "with" : "without"}_${tarone ? "tarone" : "plain"}`, { level: Math.round(confidence * 100) });
  const cmhNone = (reason: string) => ({ statistic: null, df: 1 as const, p: null, continuityCorrection: correct, reason });
  let cmh: MantelHaenszel["cmh"];
  if (used.length === 0) cmh = cmhNone(say("stats.mh.noStratum"));
  else if (!(sumV > 0)) cmh = cmhNone(say("stats.mh.varianceZero"));
  else {
    const delta = sumA - sumE;
    const yates = correct && Math.abs(delta) >= 0.5 ? 0.5 : 0;
    const statistic = (Math.abs(delta) - yates) ** 2 / sumV;
    cmh = { statistic, df: 1, p: chiSquareUpper(statistic, 1), continuityCorrection: correct, reason: null };
  }
  if (used.length === 0 || R === 0 || S === 0) {
    const reason = say(used.length === 0 ? "stats.mh.noneBoth" : R === 0 ? "stats.mh.rZero" : "stats.mh.sZero");
    return {
      strata: per,
      informativeStrata: used.length,
      oddsRatio: null,
      ciLower: null,
      ciUpper: null,
      logOddsRatioSe: null,
      crudeOddsRatio: crude,
      cmh,
      breslowDay: breslowDay(strata, null, tarone),
      reason,
      notes,
      method,
    };
  }
  const or = R / S;
  const variance = PR / (2 * R * R) + PSQR / (2 * R * S) + QS / (2 * S * S);
  const se = Math.sqrt(variance);
  const z = zOf(confidence);
  const bd = breslowDay(strata, or, tarone);
  if (bd.smallExpected > 0) notes.push(say("stats.mh.smallExpected", { count: bd.smallExpected }));
  if (used.length === 1) notes.push(say("stats.mh.onlyOne"));
  return {
    strata: per,
    informativeStrata: used.length,
    oddsRatio: or,
    ciLower: Math.exp(Math.log(or) - z * se),
    ciUpper: Math.exp(Math.log(or) + z * se),
    logOddsRatioSe: se,
    crudeOddsRatio: crude,
    cmh,
    breslowDay: bd,
    reason: null,
    notes,
    method,
  };
}
