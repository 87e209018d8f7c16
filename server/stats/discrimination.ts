/**
 * How good a set of predicted risks is, on slabs whose outcome is known: discrimination (ROC AUC with
 * DeLong's variance), accuracy (Brier score), calibration (intercept and slope), the share of
 * defective slabs caught in the riskiest part, and the points of a reliability diagram.
 *
 * - AUC: the Mann–Whitney estimate P(risk of a defective slab > risk of a clean one), ties counted ½.
 * - DeLong, DeLong & Clarke-Pearson (1988, Biometrics 44:837): variance S10/m + S01/n from the
 *   structural components, computed from midranks as Sun & Xu (2014, IEEE Signal Processing Letters
 *   21:1389) show, O(N log N). The interval is AUC ± z·SE on the AUC scale, cut at 0 and 1 (as R's
 *   pROC `ci.auc(method = "delong")` reports it — recalled).
 * - Brier (1950): mean of (risk − outcome)².
 * - Calibration (Cox 1958; Van Calster et al. 2019, J Clin Epidemiol 74:167 — "calibration
 *   hierarchy"): the slope is the coefficient of logit(risk) in a logistic regression of the outcome on
 *   it; the intercept ("calibration-in-the-large") is the intercept of a logistic regression with
 *   logit(risk) as an offset. Ideal: slope 1, intercept 0.
 *
 * Written here: no maintained npm package computes DeLong's variance or the calibration hierarchy.
 */
import { normalQuantileOf } from "./distributions";
import { say } from "../lib/words";

export interface Scored {
  /** Predicted risk in (0, 1). */
  risk: ArrayLike<number>;
  /** 1 where the slab carried the defect. */
  outcome: ArrayLike<number>;
}

/** Midranks (1-based, ties share their mean rank) of the values. */
export function midranks(values: ArrayLike<number>): Float64Array {
  const n = values.length;
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => values[a]! - values[b]!);
  const ranks = new Float64Array(n);
  for (let i = 0; i < n;) {
    let j = i;
    while (j + 1 < n && values[order[j + 1]!]! === values[order[i]!]!) j++;
    const r = (i + j) / 2 + 1;
    for (let t = i; t <= j; t++) ranks[order[t]!] = r;
    i = j + 1;
  }
  return ranks;
}

export interface AucResult {
  auc: number | null;
  se: number | null;
  lower: number | null;
  upper: number | null;
  positives: number;
  negatives: number;
  method: string;
  /** Why a figure is null. */
  reason?: string;
}

export function aucDeLong({ risk, outcome }: Scored, confidence = 0.95): AucResult {
  const pos: number[] = [];
  const neg: number[] = [];
  for (let i = 0; i < risk.length; i++) (outcome[i] ? pos : neg).push(risk[i]!);
  const m = pos.length;
  const n = neg.length;
  const method = say("stats.auc.method", { level: Math.round(confidence * 100) });
  if (m === 0 || n === 0) {
    return {
      auc: null,
      se: null,
      lower: null,
      upper: null,
      positives: m,
      negatives: n,
      method,
      reason: say(m === 0 ? "stats.auc.noneAffected" : "stats.auc.allAffected"),
    };
  }
  const all = midranks([...pos, ...neg]);
  const rPos = midranks(pos);
  const rNeg = midranks(neg);
  const v10 = new Float64Array(m);
  const v01 = new Float64Array(n);
  let sumAllPos = 0;
  for (let i = 0; i < m; i++) {
    v10[i] = (all[i]! - rPos[i]!) / n;
    sumAllPos += all[i]!;
  }
  for (let j = 0; j < n; j++) v01[j] = 1 - (all[m + j]! - rNeg[j]!) / m;
  const auc = (sumAllPos - (m * (m + 1)) / 2) / (m * n);
  if (m < 2 || n < 2) {
    return {
      auc,
      se: null,
      lower: null,
      upper: null,
      positives: m,
      negatives: n,
      method,
      reason: say("stats.auc.tooFew"),
    };
  }
  let s10 = 0;
  for (let i = 0; i < m; i++) s10 += (v10[i]! - auc) ** 2;
  s10 /= m - 1;
  let s01 = 0;
  for (let j = 0; j < n; j++) s01 += (v01[j]! - auc) ** 2;
  s01 /= n - 1;
  const se = Math.sqrt(s10 / m + s01 / n);
  const z = normalQuantileOf(1 - (1 - confidence) / 2);
  return { auc, se, lower: Math.max(0, auc - z * se), upper: Math.min(1, auc + z * se), positives: m, negatives: n, method };
}

export function brierScore({ risk, outcome }: Scored): number | null {
  if (risk.length === 0) return null;
  let s = 0;
  for (let i = 0; i < risk.length; i++) s += (risk[i]! - outcome[i]!) ** 2;
  return s / risk.length;
}

const logit = (p: number) => Math.log(p / (1 - p));
const expit = (e: number) => (e >= 0 ? 1 / (1 + Math.exp(-e)) : Math.exp(e) / (1 + Math.exp(e)));

export interface Calibration {
  intercept: number | null;
  slope: number | null;
  method: string;
  reason?: string;
}

/**
 * Calibration intercept (offset model) and slope (logistic regression on logit(risk)), each by
 * Newton–Raphson to 1e−10. Risks of exactly 0 or 1 are moved in by 1e−12 (their logit is infinite).
 */
export function calibration({ risk, outcome }: Scored): Calibration {
  const method = say("stats.cal.method");
  const n = risk.length;
  let events = 0;
  for (let i = 0; i < n; i++) events += outcome[i]! ? 1 : 0;
  if (n === 0 || events === 0 || events === n) {
    return {
      intercept: null,
      slope: null,
      method,
      reason: say(n === 0 ? "stats.cal.noSlabs" : events === 0 ? "stats.auc.noneAffected" : "stats.auc.allAffected"),
    };
  }
  const lp = new Float64Array(n);
  for (let i = 0; i < n; i++) lp[i] = logit(Math.min(1 - 1e-12, Math.max(1e-12, risk[i]!)));

  // Intercept with offset: one parameter.
  let a = 0;
  let converged = false;
  for (let it = 0; it < 100; it++) {
    let g = 0;
    let h = 0;
    for (let i = 0; i < n; i++) {
      const mu = expit(a + lp[i]!);
      g += (outcome[i]! ? 1 : 0) - mu;
      h += mu * (1 - mu);
    }
    const step = g / h;
    a += step;
    if (Math.abs(step) < 1e-10) {
      converged = true;
      break;
    }
  }
  const intercept = converged ? a : null;

  // Slope: intercept b0 and slope b1 on lp.
  let b0 = 0;
  let b1 = 1;
  converged = false;
  let lpSpread = 0;
  for (let i = 1; i < n; i++) if (lp[i] !== lp[0]) lpSpread = 1;
  if (lpSpread) {
    for (let it = 0; it < 100; it++) {
      let g0 = 0,
        g1 = 0,
        h00 = 0,
        h01 = 0,
        h11 = 0;
      for (let i = 0; i < n; i++) {
        const x = lp[i]!;
        const mu = expit(b0 + b1 * x);
        const r = (outcome[i]! ? 1 : 0) - mu;
        const w = mu * (1 - mu);
        g0 += r;
        g1 += r * x;
        h00 += w;
        h01 += w * x;
        h11 += w * x * x;
      }
      const det = h00 * h11 - h01 * h01;
      if (!(det > 0)) break;
      const s0 = (h11 * g0 - h01 * g1) / det;
      const s1 = (h00 * g1 - h01 * g0) / det;
      b0 += s0;
      b1 += s1;
      if (Math.abs(s0) < 1e-10 && Math.abs(s1) < 1e-10) {
        converged = true;
        break;
      }
    }
  }
  const slope = converged ? b1 : null;
  const reason = intercept === null || slope === null ? (lpSpread ? say("stats.cal.notConverged") : say("stats.cal.sameRisk")) : undefined;
  return { intercept, slope, method, ...(reason ? { reason } : {}) };
}

/**
 * Share of the slabs with the defect found among the riskiest `fraction` of slabs (⌈fraction·N⌉
 * slabs). Slabs tied at the cut count in proportion (the expected share when ties are broken at
 * random).
 */
export function captureAtTop({ risk, outcome }: Scored, fraction: number): number | null {
  const n = risk.length;
  let events = 0;
  for (let i = 0; i < n; i++) events += outcome[i]! ? 1 : 0;
  if (n === 0 || events === 0) return null;
  const take = Math.ceil(fraction * n);
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => risk[b]! - risk[a]!);
  let caught = 0;
  let i = 0;
  while (i < take) {
    let j = i;
    while (j + 1 < n && risk[order[j + 1]!] === risk[order[i]!]) j++;
    const group = j - i + 1;
    let groupEvents = 0;
    for (let t = i; t <= j; t++) groupEvents += outcome[order[t]!]! ? 1 : 0;
    const inside = Math.min(group, take - i);
    caught += (groupEvents * inside) / group;
    i = j + 1;
  }
  return caught / events;
}

export interface ReliabilityPoint {
  predicted: number;
  observed: number;
  slabs: number;
}

/** Groups of equal size by predicted risk (deciles by default): mean predicted against observed rate. */
export function reliability({ risk, outcome }: Scored, groups = 10): ReliabilityPoint[] {
  const n = risk.length;
  if (n === 0) return [];
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => risk[a]! - risk[b]!);
  const g = Math.min(groups, n);
  const out: ReliabilityPoint[] = [];
  for (let k = 0; k < g; k++) {
    const from = Math.floor((k * n) / g);
    const to = Math.floor(((k + 1) * n) / g);
    let sp = 0;
    let so = 0;
    for (let t = from; t < to; t++) {
      sp += risk[order[t]!]!;
      so += outcome[order[t]!]! ? 1 : 0;
    }
    out.push({ predicted: sp / (to - from), observed: so / (to - from), slabs: to - from });
  }
  return out;
}
