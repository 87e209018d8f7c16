/**
 * Multivariable logistic regression on slab rows: numeric terms and categorical terms (dummy columns
 * against a reference level), fitted by IRLS (Newton–Raphson on the binomial log-likelihood, with step
 * halving when the deviance rises). Standard errors are model-based (inverse Fisher information) or
 * cluster-robust by heat (the sandwich of Liang & Zeger 1986, Biometrika 73:13), with a small-sample
 * factor named in the method text. Per term: coefficient, SE, Wald z and two-sided p, odds ratio with
 * its Wald interval. Per variable: a likelihood-ratio test (a categorical variable is one test over its
 * levels), a Wald test with the chosen SEs, and the generalised variance inflation factor.
 *
 * Rows may be single slabs (successes 0/1, trials 1) or slabs grouped by equal values (and equal
 * heat when clustering). Deviance and AIC are on the slab level, as a fit with one row per slab
 * reports them.
 *
 * Speed on a million slabs: rows with equal values of every term are fitted as one binomial row
 * (found by hashing, or from the caller's pattern ids) while each heat's score is summed over the
 * input rows; with more than 100,000 distinct rows the first Newton steps are taken on a fixed
 * sample of them and the last ones on all. Neither changes the answer: the estimates are the
 * maximum of the same likelihood, checked by the same convergence test.
 *
 * Undefined results are null with a reason: no events, a term without spread, collinear columns,
 * separation (a level or a variable that splits affected from sound slabs perfectly, or a fit that
 * does not converge) — never a huge odds ratio.
 */
import { chiSquareUpper, normalQuantileOf, normalTwoSided } from "./distributions";
import { choleskyInverse, congruence, firstDependentColumn, logDeterminant, subMatrix } from "./linear-algebra";
import { scratch } from "./scratch";
import { named, say } from "../lib/words";

/** Under this many heats, cluster-robust SEs are flagged as unreliable (a note on the fit). */
export const FEW_HEATS = 30;

export type TermSpec =
  | { name: string; kind: "numeric" }
  /** `levels` fixes their order; the reference defaults to the first level present (R's default). */
  | { name: string; kind: "categorical"; reference?: string; levels?: string[] };

export interface SlabRow {
  /** One value per term, in the order of the terms: numbers for numeric terms, labels for categorical ones; null when unknown. */
  values: (number | string | null)[];
  /** Affected slabs. */
  successes: number;
  /** Slabs. */
  trials: number;
  /** The heat (cluster); every slab of the row must belong to it. */
  cluster?: string | number;
}

export type SmallSampleFactor = "CR1" | "G/(G-1)";

export interface MultiLogisticOptions {
  /** "cluster" (the default when rows carry a cluster) or "model". */
  se?: "model" | "cluster";
  /**
   * "CR1": G/(G − 1)·(N − 1)/(N − K), as statsmodels applies it (the default); "G/(G-1)": the cluster
   * factor alone, as R's sandwich::vcovCL does by default.
   */
  smallSample?: SmallSampleFactor;
  confidence?: number;
  maxIterations?: number;
  /** Likelihood-ratio test per variable (one refit each); on by default. */
  likelihoodRatio?: boolean;
  /**
   * Fit slabs with equal values of every term as one binomial row (on by default): the same
   * estimates, SEs and deviance, in less time (the heats' scores are still summed over the input rows).
   */
  group?: boolean;
}

export interface TermEstimate {
  variable: string;
  /** The column's name: the variable, or "variable = level". */
  column: string;
  /** The level of a categorical term (null for numeric). */
  level: string | null;
  reference: string | null;
  coef: number | null;
  se: number | null;
  z: number | null;
  p: number | null;
  oddsRatio: number | null;
  ciLower: number | null;
  ciUpper: number | null;
  /** Column VIF from the slab-level correlation of the design columns (for a dummy it depends on the reference; use the variable's GVIF). */
  vif: number | null;
}

export interface VariableTest {
  variable: string;
  kind: "numeric" | "categorical";
  /** Columns (levels − 1 for a categorical variable); 0 when the variable was left out. */
  df: number;
  lrChi2: number | null;
  lrP: number | null;
  waldChi2: number | null;
  waldP: number | null;
  /** Generalised VIF (Fox & Monette 1992, JASA 87:178); equals the VIF for one column. */
  gvif: number | null;
  /** GVIF^(1/(2·df)), comparable across variables with different df. */
  gvifPerDf: number | null;
  /** Per level of a categorical variable: slabs and affected (the reference first). */
  levels?: { level: string; slabs: number; affected: number; reference: boolean }[];
  reason: string | null;
}

export interface MultiLogisticFit {
  converged: boolean;
  iterations: number;
  slabs: number;
  affected: number;
  /** Slabs left out because a term had no value for them. */
  slabsMissing: number;
  /** Heats (clusters) when the SEs are clustered, else null. */
  clusters: number | null;
  seMethod: "model" | "cluster";
  intercept: { coef: number | null; se: number | null; z: number | null; p: number | null };
  terms: TermEstimate[];
  variables: VariableTest[];
  /** Covariance of (intercept, terms…) on the original scale with the chosen SEs. */
  covariance: number[][] | null;
  deviance: number | null;
  nullDeviance: number | null;
  aic: number | null;
  separation: { terms: string[]; description: string } | null;
  reason: string | null;
  notes: string[];
  method: string;
  /** The method said of a model of affected (yes/no) per slab on every term (the adjusted model's wording). */
  methodOnEveryTerm: string;
}

interface Column {
  variable: string;
  name: string;
  level: string | null;
  reference: string | null;
  numeric: boolean;
  /** Index of the term this column belongs to. */
  term: number;
}

const softplus = (x: number) => (x > 0 ? x + Math.log1p(Math.exp(-x)) : Math.log1p(Math.exp(x)));

/**
 * The design: one dense block of numeric columns (centred and scaled) and, per categorical term,
 * the design column of the row's level (−1 for the reference). A row costs the numeric triangle plus
 * a few additions per categorical term, however many levels they have.
 */
interface Design {
  rows: number;
  /** Columns, the intercept (column 0) included. */
  p: number;
  kn: number;
  /** rows × kn. */
  xn: Float64Array;
  /** The design column of each numeric block column. */
  numCol: Int32Array;
  kc: number;
  /** rows × kc. */
  xc: Int32Array;
  /** The design columns of each categorical block term. */
  catCols: Int32Array[];
  s: Float64Array;
  n: Float64Array;
}

/** What a fit uses: the intercept and whole terms (a reduced model drops one variable's columns). */
interface Active {
  /** Design columns, ascending, the intercept first. */
  cols: Int32Array;
  /** Indexes into the numeric block. */
  num: Int32Array;
  /** Indexes into the categorical block. */
  cat: Int32Array;
}

interface IrlsResult {
  beta: Float64Array;
  deviance: number;
  converged: boolean;
  iterations: number;
  info: number[][] | null;
}

/**
 * One pass over the rows at `beta` (full length p; inactive columns ignored): the deviance, gradient
 * and information over every design column (inactive ones stay 0). With `beta` null it gives the
 * slab-weighted cross-products instead (weights n, no residuals), for the collinearity check.
 */
function accumulate(d: Design, act: Active, beta: Float64Array | null) {
  const { rows, p, kn: KN, kc: KC, xn, xc, s: sArr, n: nArr } = d;
  const num = act.num;
  const cat = act.cat;
  const kn = num.length;
  const kc = cat.length;
  const bn = new Float64Array(kn);
  for (let j = 0; j < kn; j++) bn[j] = beta ? beta[d.numCol[num[j]!]!]! : 0;
  const bc = beta ?? new Float64Array(p);
  const b0 = bc[0]!;
  const xs = new Float64Array(kn);
  const cs = new Int32Array(kc);
  const gN = new Float64Array(kn);
  const i0N = new Float64Array(kn);
  const iNN = new Float64Array(kn * kn);
  const gC = new Float64Array(p);
  const iCC = new Float64Array(p * p);
  const iCN = new Float64Array(p * kn);
  let g0 = 0;
  let i00 = 0;
  let dev = 0;
  for (let r = 0; r < rows; r++) {
    const rb = r * KN;
    let eta = b0;
    for (let j = 0; j < kn; j++) {
      const x = xn[rb + num[j]!]!;
      xs[j] = x;
      eta += bn[j]! * x;
    }
    const rc = r * KC;
    for (let t = 0; t < kc; t++) {
      const c = xc[rc + cat[t]!]!;
      cs[t] = c;
      if (c >= 0) eta += bc[c]!;
    }
    const n = nArr[r]!;
    let w = n;
    let resid = 0;
    if (beta) {
      const s = sArr[r]!;
      // −2 log L on the slab level, −2[s log p + (n − s) log(1 − p)], from L = ln(1 + e^(−η)):
      // ln p = −L and ln(1 − p) = −η − L, one exp and one log1p per row that keep their digits.
      const e = Math.exp(-eta);
      const pr = 1 / (1 + e);
      const L = e === Infinity ? softplus(-eta) : Math.log1p(e);
      dev += 2 * (s * L + (n - s) * (eta + L));
      resid = s - n * pr;
      w = n * pr * (1 - pr);
    }
    g0 += resid;
    i00 += w;
    for (let j = 0; j < kn; j++) {
      const x = xs[j]!;
      const wx = w * x;
      gN[j]! += x * resid;
      i0N[j]! += wx;
      const row = j * kn;
      for (let l = 0; l <= j; l++) iNN[row + l]! += wx * xs[l]!;
    }
    for (let t = 0; t < kc; t++) {
      const c = cs[t]!;
      if (c < 0) continue;
      gC[c]! += resid;
      iCC[c * p + c]! += w;
      const row = c * kn;
      for (let j = 0; j < kn; j++) iCN[row + j]! += w * xs[j]!;
      for (let u = 0; u < t; u++) {
        const c2 = cs[u]!;
        if (c2 >= 0) iCC[c * p + c2]! += w;
      }
    }
  }
  // Assemble the full symmetric matrix over the design columns.
  const info = new Float64Array(p * p);
  const grad = new Float64Array(p);
  const add = (a: number, b: number, v: number) => {
    info[a * p + b]! += v;
    if (a !== b) info[b * p + a]! += v;
  };
  grad[0] = g0;
  info[0] = i00;
  for (let j = 0; j < kn; j++) {
    const a = d.numCol[num[j]!]!;
    grad[a] = gN[j]!;
    add(a, 0, i0N[j]!);
    for (let l = 0; l <= j; l++) add(a, d.numCol[num[l]!]!, iNN[j * kn + l]!);
  }
  for (let t = 0; t < kc; t++) {
    for (const c of d.catCols[cat[t]!]!) {
      grad[c] = gC[c]!;
      add(c, 0, iCC[c * p + c]!);
      add(c, c, iCC[c * p + c]!);
      for (let j = 0; j < kn; j++) add(c, d.numCol[num[j]!]!, iCN[c * kn + j]!);
      for (let c2 = 0; c2 < p; c2++) if (c2 !== c && iCC[c * p + c2] !== 0) add(c, c2, iCC[c * p + c2]!);
    }
  }
  return { dev, grad, info };
}

/** Deviance, gradient and information over the active columns (in `act.cols` order) at `beta` (same order). */
function pass(d: Design, act: Active, beta: Float64Array) {
  const { p } = d;
  const k = act.cols.length;
  const full = new Float64Array(p);
  for (let a = 0; a < k; a++) full[act.cols[a]!] = beta[a]!;
  const r = accumulate(d, act, full);
  const grad = Float64Array.from(act.cols, (c) => r.grad[c]!);
  const info = Array.from({ length: k }, (_, a) => Array.from({ length: k }, (_, b) => r.info[act.cols[a]! * p + act.cols[b]!]!));
  return { dev: r.dev, grad, info };
}

function irls(d: Design, act: Active, start: Float64Array, maxIterations: number): IrlsResult {
  const k = act.cols.length;
  let beta = Float64Array.from(start);
  let prevBeta = beta;
  let prevDev = Infinity;
  let halvings = 0;
  for (let it = 0; it < maxIterations; it++) {
    const { dev, grad, info } = pass(d, act, beta);
    if (!Number.isFinite(dev) || (dev > prevDev + 1e-9 * Math.abs(prevDev) && halvings < 30)) {
      // The step overshot: go half way back. R's glm.fit halves only on a non-finite deviance; halving
      // on a rising one as well is the fix of the glm2 package (Marschner 2011, R Journal 3(2):12).
      halvings++;
      beta = prevBeta.map((b, j) => (b + beta[j]!) / 2);
      continue;
    }
    halvings = 0;
    const inv = choleskyInverse(info);
    if (!inv) return { beta, deviance: dev, converged: false, iterations: it + 1, info: null };
    const step = new Float64Array(k);
    let maxStep = 0;
    for (let a = 0; a < k; a++) {
      let v = 0;
      for (let b = 0; b < k; b++) v += inv[a]![b]! * grad[b]!;
      step[a] = v;
      maxStep = Math.max(maxStep, Math.abs(v));
    }
    if (Math.abs(prevDev - dev) < 1e-10 * (Math.abs(dev) + 0.1) && maxStep < 1e-8) {
      return { beta, deviance: dev, converged: true, iterations: it + 1, info };
    }
    prevDev = dev;
    prevBeta = beta;
    beta = beta.map((b, j) => b + step[j]!);
  }
  return { beta, deviance: prevDev, converged: false, iterations: maxIterations, info: null };
}

/**
 * Rows a fit checks of what a caller vouches for (rows complete, a grouping, pattern ids): the first
 * this many. A caller that writes a term's values only where the fit reads them writes these too.
 */
export const ROWS_CHECKED = 1000;

/** The terms' value and code columns, numeric and categorical apart. */
function termArrays(terms: TermColumn[]) {
  return {
    nums: terms.filter((t) => t.kind === "numeric").map((t) => (t as { values: ArrayLike<number> }).values),
    cats: terms.filter((t) => t.kind === "categorical").map((t) => (t as { codes: ArrayLike<number> }).codes),
  };
}

/** Refuses a caller's grouping that puts rows r and i, of different values, in one pattern. */
function checkSamePattern(nums: ArrayLike<number>[], cats: ArrayLike<number>[], r: number, i: number) {
  for (const v of nums) if (v[r] !== v[i]) throw new Error("logisticRegressionColumns: rows of one pattern differ in a numeric term");
  for (const c of cats) if (c[r] !== c[i]) throw new Error("logisticRegressionColumns: rows of one pattern differ in a categorical term");
}

/**
 * Slabs with equal values of every term become one binomial row: the likelihood and its derivatives
 * are sums over slabs, so the fit is the same. Heat-level values make a heat's slabs share their
 * values, so real plants shrink several-fold. Each heat's score for the cluster-robust SEs is then
 * summed over the slabs in one pass (`patternOf` says which row each slab went to), which gives the
 * same sandwich. Gives up (null) when nearly every slab is distinct, where grouping only costs time.
 */
function collapse(
  used: Int32Array,
  terms: TermColumn[],
  affected: ArrayLike<number>,
  slabs: ArrayLike<number> | undefined,
  pattern?: ArrayLike<number>,
  patternCount?: number,
  patternOffset = 0,
) {
  const m = used.length;
  if (m < 2) return null;
  const { nums, cats } = termArrays(terms);
  if (pattern) return collapseByPattern(used, nums, cats, affected, slabs, pattern, patternCount, patternOffset);
  let size = 1;
  while (size < 2 * m) size <<= 1;
  const mask = size - 1;
  const table = new Int32Array(size).fill(-1);
  const rep = new Int32Array(m);
  const patternOf = new Int32Array(m);
  const s = new Float64Array(m);
  const n = new Float64Array(m);
  const f64 = new Float64Array(1);
  const u32 = new Uint32Array(f64.buffer);
  let patterns = 0;
  const same = (a: number, b: number) => {
    for (const v of nums) if (v[a] !== v[b]) return false;
    for (const c of cats) if (c[a] !== c[b]) return false;
    return true;
  };
  for (let u = 0; u < m; u++) {
    const i = used[u]!;
    let h = 0x811c9dc5;
    for (const v of nums) {
      f64[0] = v[i]!;
      h = Math.imul(h ^ u32[0]!, 0x9e3779b1);
      h = Math.imul(h ^ u32[1]!, 0x85ebca77);
    }
    for (const c of cats) h = Math.imul(h ^ c[i]!, 0xc2b2ae35);
    h ^= h >>> 15;
    let slot = h & mask;
    for (;;) {
      const pid = table[slot]!;
      if (pid < 0) {
        table[slot] = patterns;
        rep[patterns] = i;
        s[patterns] = affected[i]!;
        n[patterns] = slabs === undefined ? 1 : slabs[i]!;
        patternOf[u] = patterns++;
        break;
      }
      if (same(rep[pid]!, i)) {
        s[pid]! += affected[i]!;
        n[pid]! += slabs === undefined ? 1 : slabs[i]!;
        patternOf[u] = pid;
        break;
      }
      slot = (slot + 1) & mask;
    }
    if (u === 65_535 && m > 131_072 && patterns > 0.6 * 65_536) return null;
  }
  if (patterns > 0.8 * m) return null;
  return { rep: rep.subarray(0, patterns), s: s.subarray(0, patterns), n: n.subarray(0, patterns), rows: patterns, patternOf };
}

/**
 * The same grouping from the caller's pattern ids: a lookup instead of a hash. The caller vouches
 * that equal ids mean equal values (checked on the first rows, to catch a misuse early).
 */
function collapseByPattern(
  used: Int32Array,
  nums: ArrayLike<number>[],
  cats: ArrayLike<number>[],
  affected: ArrayLike<number>,
  slabs: ArrayLike<number> | undefined,
  pattern: ArrayLike<number>,
  patternCount: number | undefined,
  offset: number,
) {
  const m = used.length;
  let max = 0;
  if (!Number.isInteger(offset)) throw new Error("logisticRegressionColumns: the pattern offset must be an integer");
  if (patternCount !== undefined && Number.isInteger(patternCount) && patternCount > 0) max = patternCount - 1;
  else {
    for (let u = 0; u < m; u++) {
      const id = pattern[used[u]!]! - offset;
      if (!(id >= 0)) throw new Error("logisticRegressionColumns: a negative or missing pattern id");
      if (id > max) max = id;
    }
  }
  if (max > 64_000_000 || !Number.isInteger(max)) throw new Error("logisticRegressionColumns: pattern ids must be integers below 64 million");
  // Working arrays reused from fit to fit (scratch.ts): they do not outlive the fit. One entry per
  // slab for patternOf; per pattern only as many as there can be (the ids run 0 … max), not one per
  // slab (112 MB asked for at five million slabs, of which only the first pages were ever written).
  const room = Math.min(m, max + 1);
  const lookup = scratch("collapse.lookup", Int32Array, max + 1, -1);
  const rep = scratch("collapse.rep", Int32Array, room);
  const patternOf = scratch("collapse.patternOf", Int32Array, m);
  const s = scratch("collapse.s", Float64Array, room);
  const n = scratch("collapse.n", Float64Array, room);
  let patterns = 0;
  const checked = Math.min(m, ROWS_CHECKED);
  for (let u = 0; u < checked; u++) {
    const i = used[u]!;
    const id = pattern[i]! - offset;
    const pid = lookup[id];
    if (pid === undefined) throw new Error("logisticRegressionColumns: a pattern id outside the caller's count");
    if (pid < 0) lookup[id] = u;
    else checkSamePattern(nums, cats, used[pid]!, i);
  }
  if (checked > 0) lookup.fill(-1);
  for (let u = 0; u < m; u++) {
    const i = used[u]!;
    const id = pattern[i]! - offset;
    let pid = lookup[id]!;
    // An id outside 0 … max reads undefined here (a typed array out of range): refused, never grouped.
    if (pid === undefined) throw new Error("logisticRegressionColumns: a pattern id outside the caller's count");
    if (pid < 0) {
      lookup[id] = pid = patterns++;
      rep[pid] = i;
      s[pid] = 0;
      n[pid] = 0;
    }
    s[pid]! += affected[i]!;
    n[pid]! += slabs === undefined ? 1 : slabs[i]!;
    patternOf[u] = pid;
  }
  return { rep: rep.subarray(0, patterns), s: s.subarray(0, patterns), n: n.subarray(0, patterns), rows: patterns, patternOf };
}

/** Fits made on a caller's grouping since the process started (tests: that a report's own grouping is the one used). */
let fitsOnCallersGrouping = 0;
export const fitsOnCallersGroupingSoFar = () => fitsOnCallersGrouping;

/** The caller's grouping (SlabColumns.grouped), checked on the first rows as collapseByPattern checks a pattern. */
function callersGrouping(g: NonNullable<SlabColumns["grouped"]>, used: Int32Array, terms: TermColumn[], vouched: boolean) {
  const rows = g.rep.length;
  if (!vouched) throw new Error("logisticRegressionColumns: a caller's grouping needs rows vouched complete, one slab each");
  if (g.s.length !== rows || g.n.length !== rows || g.patternOf.length !== used.length)
    throw new Error("logisticRegressionColumns: a caller's grouping of another length than its rows");
  const { nums, cats } = termArrays(terms);
  const checked = Math.min(used.length, ROWS_CHECKED);
  for (let u = 0; u < checked; u++) {
    const r = g.rep[g.patternOf[u]!];
    if (r === undefined) throw new Error("logisticRegressionColumns: a caller's pattern outside its patterns");
    checkSamePattern(nums, cats, r, used[u]!);
  }
  let slabs = 0;
  for (let r = 0; r < rows; r++) slabs += g.n[r]!;
  if (slabs !== used.length) throw new Error("logisticRegressionColumns: a caller's grouping that does not hold every row once");
  fitsOnCallersGrouping++;
  return { ...g, rows };
}

/** Cluster-robust fits whose meat was added up heat by heat as each heat ended (tests: that the way is taken). */
let meatsByHeat = 0;
export const meatsByHeatSoFar = () => meatsByHeat;

/** A heat's last slab has passed: its score u into the meat, and u zeroed for the next heat. */
function heatEnds(meat: Float64Array, u: Float64Array, p: number) {
  addHeatToMeat(meat, u, 0, p);
  u.fill(0);
}

/** Heat h's first slab (checked): false when h came before, its slabs not side by side. */
function heatBegins(h: number, heatSlots: number, seen: Uint8Array): boolean {
  if (!(h >= 0 && h < heatSlots)) throw new Error("logisticRegressionColumns: a row without a heat");
  if (seen[h]) return false;
  seen[h] = 1;
  return true;
}

/** One heat's score u[base … base + p) into the meat's lower triangle (meat += u uᵀ). */
function addHeatToMeat(meat: Float64Array, u: Float64Array, base: number, p: number) {
  for (let a = 0; a < p; a++) {
    const ua = u[base + a]!;
    if (ua === 0) continue;
    for (let c = 0; c <= a; c++) meat[a * p + c]! += ua * u[base + c]!;
  }
}

/**
 * The meat of the cluster sandwich, Σ_g u_g u_gᵀ, in the reports' common shape (one condition, alone
 * or beside one categorical term `xc`, heats numbered by the caller, one slab per row), where each
 * heat's slabs sit side by side (the facts' usual order). A heat's score u_g = Σ (y − p), Σ x (y − p)
 * (and its level's Σ (y − p)) is carried in locals while the heat lasts and goes into the meat when
 * its last slab has passed: the same additions in the same order as the general loop's score per
 * heat and the meat over the heats in order of first appearance, with no score per heat kept (heats ×
 * terms numbers: 31 MB per fit adjusted for the grade family at five million slabs). In a function
 * of its own, so the fit's other paths (which the optimiser sees late) never slow it (measured on
 * five million slabs: 31 → 19 ms per fit; through heatMeatRows' loops a screening takes a fifth
 * longer). Returns the heats, or −1 as soon as a heat comes back after another (the meat is then
 * partial: the caller starts again with a score per heat).
 */
function heatMeatOneNumeric(
  used: Int32Array,
  pre: Int32Array,
  heatSlots: number,
  seen: Uint8Array,
  patternOf: Int32Array,
  aff: ArrayLike<number>,
  mu: Float64Array,
  xn: Float64Array,
  xc: Int32Array | null,
  p: number,
  oneNum: number,
  meat: Float64Array,
): number {
  const u = new Float64Array(p);
  let G = 0;
  // No heat yet (NaN equals no id, so the first row's heat is checked, −1 included).
  let hPrev = NaN;
  let s0 = 0;
  let s1 = 0;
  for (let w = 0; w < used.length; w++) {
    const i = used[w]!;
    const h = pre[i]!;
    if (h !== hPrev) {
      if (hPrev >= 0) {
        u[0] = s0;
        u[oneNum] = s1;
        heatEnds(meat, u, p);
      }
      if (!heatBegins(h, heatSlots, seen)) return -1;
      G++;
      hPrev = h;
      s0 = 0;
      s1 = 0;
    }
    const r = patternOf[w]!;
    const resid = aff[i]! - mu[r]!;
    s0 += resid;
    s1 += xn[r]! * resid;
    if (xc !== null) {
      const c = xc[r]!;
      if (c >= 0) u[c]! += resid;
    }
  }
  if (hPrev >= 0) {
    u[0] = s0;
    u[oneNum] = s1;
    heatEnds(meat, u, p);
  }
  return G;
}

/**
 * heatMeatOneNumeric for any terms and slabs per row: the general loop's additions, into one heat's
 * score at a time. The heats, or −1 as soon as a heat comes back after another.
 */
function heatMeatRows(
  used: Int32Array,
  pre: Int32Array,
  heatSlots: number,
  seen: Uint8Array,
  patternOf: Int32Array | undefined,
  aff: ArrayLike<number>,
  sl: ArrayLike<number> | undefined,
  mu: Float64Array,
  d: { xn: Float64Array; xc: Int32Array; numCol: Int32Array; kn: number; kc: number },
  p: number,
  meat: Float64Array,
): number {
  const { xn, xc, numCol, kn, kc } = d;
  const u = new Float64Array(p);
  let G = 0;
  let hPrev = NaN;
  for (let w = 0; w < used.length; w++) {
    const i = used[w]!;
    const h = pre[i]!;
    if (h !== hPrev) {
      if (hPrev >= 0) heatEnds(meat, u, p);
      if (!heatBegins(h, heatSlots, seen)) return -1;
      G++;
      hPrev = h;
    }
    const r = patternOf === undefined ? w : patternOf[w]!;
    const resid = aff[i]! - (sl === undefined ? 1 : sl[i]!) * mu[r]!;
    u[0]! += resid;
    const rb = r * kn;
    for (let j = 0; j < kn; j++) u[numCol[j]!]! += xn[rb + j]! * resid;
    const rc = r * kc;
    for (let t = 0; t < kc; t++) {
      const c = xc[rc + t]!;
      if (c >= 0) u[c]! += resid;
    }
  }
  if (hPrev >= 0) heatEnds(meat, u, p);
  return G;
}

/** Dense ids 0 … G − 1 for the heats of the used rows (a typed lookup for integer ids, a map otherwise). */
function clusterIdsOf(used: Int32Array, cluster: ArrayLike<number>) {
  const m = used.length;
  const ids = scratch("cluster.ids", Int32Array, m);
  let lo = Infinity;
  let hi = -Infinity;
  let integers = true;
  for (let u = 0; u < m; u++) {
    const c = cluster[used[u]!]!;
    if (!Number.isFinite(c)) throw new Error("logisticRegressionColumns: a row without a heat");
    if (c < lo) lo = c;
    if (c > hi) hi = c;
    if (integers && c !== Math.floor(c)) integers = false;
  }
  let G = 0;
  if (integers && hi - lo < 50_000_000) {
    const lookup = scratch("cluster.lookup", Int32Array, hi - lo + 1, -1);
    for (let u = 0; u < m; u++) {
      const k = cluster[used[u]!]! - lo;
      let id = lookup[k]!;
      if (id < 0) lookup[k] = id = G++;
      ids[u] = id;
    }
  } else {
    const map = new Map<number, number>();
    for (let u = 0; u < m; u++) {
      const k = cluster[used[u]!]!;
      let id = map.get(k);
      if (id === undefined) map.set(k, (id = G++));
      ids[u] = id;
    }
  }
  return { ids, G };
}

const WARM_START_ROWS = 50_000;

/**
 * About one row in k, drawn by a fixed-seed generator (the same rows every time), for a warm start.
 * Not every k-th row: a plant's rows repeat with a period (strand 1, strand 2 …) that a stride would
 * hit every time.
 */
function sampleOf(d: Design, k: number): Design {
  const pick: number[] = [];
  let x = 0x2545f491;
  for (let i = 0; i < d.rows; i++) {
    // xorshift32 (Marsaglia 2003, J. Stat. Software 8(14)).
    x ^= x << 13;
    x ^= x >>> 17;
    x ^= x << 5;
    if ((x >>> 0) % k === 0) pick.push(i);
  }
  const rows = pick.length;
  const out: Design = { ...d, rows, xn: new Float64Array(rows * d.kn), xc: new Int32Array(rows * d.kc), s: new Float64Array(rows), n: new Float64Array(rows) };
  pick.forEach((i, r) => {
    out.xn.set(d.xn.subarray(i * d.kn, (i + 1) * d.kn), r * d.kn);
    out.xc.set(d.xc.subarray(i * d.kc, (i + 1) * d.kc), r * d.kc);
    out.s[r] = d.s[i]!;
    out.n[r] = d.n[i]!;
  });
  return out;
}

const naturalOrder = (a: string, b: string) => a.localeCompare(b, "en", { numeric: true });

/** Odds ratio for a step of `step` units of a numeric term (per 0.1 m/min, per 100 A …) with its Wald interval. */
export function oddsRatioForStep(coef: number | null, se: number | null, step: number, confidence = 0.95) {
  if (coef === null || se === null || !Number.isFinite(coef) || !Number.isFinite(se)) return { oddsRatio: null, ciLower: null, ciUpper: null };
  const z = normalQuantileOf(1 - (1 - confidence) / 2);
  return { oddsRatio: Math.exp(step * coef), ciLower: Math.exp(step * (coef - z * se)), ciUpper: Math.exp(step * (coef + z * se)) };
}

/**
 * Change-in-estimate between a crude and an adjusted odds ratio: (crude − adjusted) / adjusted, and
 * whether it exceeds `threshold` (10 %, the usual criterion: Maldonado & Greenland 1993, Am. J.
 * Epidemiol. 138:923).
 */
export function changeInEstimate(crude: number | null, adjusted: number | null, threshold = 0.1) {
  if (crude === null || adjusted === null || !(crude > 0) || !(adjusted > 0) || !Number.isFinite(crude) || !Number.isFinite(adjusted)) {
    return { relativeChange: null, differs: null, reason: say("fit.changeUndefined") };
  }
  const relativeChange = (crude - adjusted) / adjusted;
  return { relativeChange, differs: Math.abs(relativeChange) > threshold, reason: null };
}

/** A term given as a column over the rows (the report's slab facts are held this way). */
export type TermColumn =
  /** NaN where the slab has no value. */
  | { name: string; kind: "numeric"; values: ArrayLike<number> }
  /**
   * Integer codes per row (a negative code or NaN where unknown); `label` names a code (its decimal
   * text by default). `levels` fixes the order of the labels; the reference defaults to the first
   * level present (R's default).
   */
  | { name: string; kind: "categorical"; codes: ArrayLike<number>; label?: (code: number) => string; reference?: string; levels?: string[] };

export interface SlabColumns {
  terms: TermColumn[];
  /** Affected slabs per row (0/1 for one slab per row). */
  affected: ArrayLike<number>;
  /** Slabs per row; 1 each when absent. */
  slabs?: ArrayLike<number>;
  /** Heat per row (any integer id); needed for cluster-robust SEs. */
  cluster?: ArrayLike<number>;
  /** The rows to use (indexes into the columns); all when absent. */
  rows?: ArrayLike<number>;
  /**
   * A grouping the caller already knows (e.g. from values on a grid): per row a small non-negative
   * integer, equal only for rows with equal values of every term. Saves hashing the rows; checked.
   */
  pattern?: ArrayLike<number>;
  /** With `pattern`: the ids run 0 … patternCount − 1 (the caller knows its grid), so no pass looks for the largest. */
  patternCount?: number;
  /**
   * With `pattern`: subtracted from each entry to give the id (default 0), so a caller's grid keys
   * (lo … hi) serve as the ids without a pass that writes them again as 0 … hi − lo.
   */
  patternOffset?: number;
  /**
   * The caller vouches that every row in `rows` has a value of every term (and slabs > 0), as when
   * it picked them for that: the rows are used as given, without a pass to check and compact them
   * (checked on the first rows, to catch a misuse early). Ignored without `rows`.
   */
  rowsComplete?: boolean;
  /**
   * The heats numbered 0 … count − 1 per row index, in the order they first appear in the rows, when
   * the caller numbers them once for many fits (instead of `cluster` being numbered on every fit).
   * Every used row must have its number. The sandwich adds up the same heats in the same order.
   */
  clusterIds?: { ids: Int32Array; count: number };
  /**
   * The grouping itself, made by the caller in a pass of its own over `rows` (vouched complete with
   * `rowsComplete`): per pattern its first row, affected and slabs summed in row order (one slab per
   * row), and per used row its pattern (patterns numbered in order of first appearance). Exactly
   * what `pattern` would give, without a pass to build it (checked on the first rows).
   */
  grouped?: { rep: Int32Array; s: Float64Array; n: Float64Array; patternOf: Int32Array };
}

/**
 * The same model from row objects (one per slab, or per group of equal values within one heat):
 * converted to columns and fitted by `logisticRegressionColumns`.
 */
export function logisticRegressionMulti(terms: TermSpec[], rows: SlabRow[], options: MultiLogisticOptions = {}): MultiLogisticFit {
  const clusterIds = new Map<string | number, number>();
  const hasCluster = rows.some((r) => r.cluster !== undefined);
  const columns: TermColumn[] = terms.map((t, j) => {
    if (t.kind === "numeric")
      return { name: t.name, kind: "numeric", values: Float64Array.from(rows, (r) => (typeof r.values[j] === "number" ? (r.values[j] as number) : NaN)) };
    const codes = new Map<string, number>();
    const labels: string[] = [];
    const c = Int32Array.from(rows, (r) => {
      const v = r.values[j];
      if (v === null || v === undefined || v === "") return -1;
      const key = String(v);
      let code = codes.get(key);
      if (code === undefined) {
        codes.set(key, (code = labels.length));
        labels.push(key);
      }
      return code;
    });
    return { name: t.name, kind: "categorical", codes: c, label: (code: number) => labels[code]!, reference: t.reference, levels: t.levels };
  });
  return logisticRegressionColumns(
    {
      terms: columns,
      affected: Float64Array.from(rows, (r) => r.successes),
      slabs: Float64Array.from(rows, (r) => r.trials),
      cluster: hasCluster
        ? Float64Array.from(rows, (r) => {
            if (r.cluster === undefined) return NaN;
            let id = clusterIds.get(r.cluster);
            if (id === undefined) clusterIds.set(r.cluster, (id = clusterIds.size));
            return id;
          })
        : undefined,
    },
    options,
  );
}

export function logisticRegressionColumns(data: SlabColumns, options: MultiLogisticOptions = {}): MultiLogisticFit {
  const terms = data.terms;
  const confidence = options.confidence ?? 0.95;
  const maxIterations = options.maxIterations ?? 30;
  const seKind = options.se ?? (data.cluster ? "cluster" : "model");
  const factor = options.smallSample ?? "CR1";
  const zq = normalQuantileOf(1 - (1 - confidence) / 2);
  const notes: string[] = [];
  const trialsOf = (i: number) => (data.slabs ? data.slabs[i]! : 1);

  // Complete rows only, so every model (full and reduced) is fitted to the same slabs. Term by term
  // over all rows (each loop reads one typed column), then compacted — unless the caller picked
  // complete rows already (then checked on the first rows only).
  const M = data.rows ? data.rows.length : data.affected.length;
  const vouched = data.rowsComplete === true && data.rows instanceof Int32Array;
  const picked = vouched ? (data.rows as Int32Array) : scratch("fit.picked", Int32Array, M);
  if (!vouched) {
    if (data.rows) for (let u = 0; u < M; u++) picked[u] = data.rows[u]!;
    else for (let u = 0; u < M; u++) picked[u] = u;
  }
  /** 0 complete, 1 a term without a value, 2 no slabs in the row. */
  const checkedRows = vouched ? Math.min(M, ROWS_CHECKED) : M;
  const state = scratch("fit.state", Uint8Array, checkedRows, 0);
  if (data.slabs) for (let u = 0; u < checkedRows; u++) if (!(data.slabs[picked[u]!]! > 0)) state[u] = 2;
  for (const t of terms) {
    if (t.kind === "numeric") {
      const v = t.values;
      for (let u = 0; u < checkedRows; u++) if (state[u] === 0 && !Number.isFinite(v[picked[u]!])) state[u] = 1;
    } else {
      const c = t.codes;
      for (let u = 0; u < checkedRows; u++) if (state[u] === 0 && !(c[picked[u]!]! >= 0)) state[u] = 1;
    }
  }
  let m = 0;
  let slabsMissing = 0;
  if (vouched) {
    for (let u = 0; u < checkedRows; u++) if (state[u] !== 0) throw new Error("logisticRegressionColumns: a row vouched complete lacks a value or its slabs");
    m = M;
  } else {
    for (let u = 0; u < M; u++) {
      if (state[u] === 0) picked[m++] = picked[u]!;
      else if (state[u] === 1) slabsMissing += trialsOf(picked[u]!);
    }
  }
  const used = picked.subarray(0, m);
  // Every used row needs its heat: checked where the heats are numbered (clusterIdsOf).
  if (seKind === "cluster" && !data.cluster && !data.clusterIds) throw new Error("logisticRegressionColumns: cluster-robust SEs need the heat of every row");
  // From here on a row is a pattern of equal values (its slabs summed), or a single input row.
  const grouped = data.grouped
    ? callersGrouping(data.grouped, used, terms, vouched && data.slabs === undefined)
    : options.group === false
      ? null
      : collapse(used, terms, data.affected, data.slabs, data.pattern, data.patternCount, data.patternOffset);
  const rowsN = grouped ? grouped.rows : m;
  const ix = grouped ? grouped.rep : used;
  let S: Float64Array;
  let Nw: Float64Array;
  if (grouped) {
    S = grouped.s;
    Nw = grouped.n;
  } else {
    S = new Float64Array(m);
    Nw = new Float64Array(m).fill(1);
    for (let u = 0; u < m; u++) S[u] = data.affected[used[u]!]!;
    if (data.slabs) for (let u = 0; u < m; u++) Nw[u] = data.slabs[used[u]!]!;
  }
  let slabs = 0;
  let affected = 0;
  for (let r = 0; r < rowsN; r++) {
    slabs += Nw[r]!;
    affected += S[r]!;
  }
  if (slabsMissing > 0) notes.push(say("fit.missing", { count: slabsMissing }));

  // Levels and spread of each term.
  const variables: VariableTest[] = [];
  const columns: Column[] = [];
  /** Per categorical term: code → design column (−1 for the reference). */
  const levelIndex: (Map<number, number> | null)[] = [];
  terms.forEach((t, j) => {
    const test: VariableTest = {
      variable: t.name,
      kind: t.kind,
      df: 0,
      lrChi2: null,
      lrP: null,
      waldChi2: null,
      waldP: null,
      gvif: null,
      gvifPerDf: null,
      reason: null,
    };
    variables.push(test);
    if (t.kind === "numeric") {
      levelIndex.push(null);
      let lo = Infinity;
      let hi = -Infinity;
      for (let r = 0; r < rowsN; r++) {
        const v = t.values[ix[r]!]!;
        if (v < lo) lo = v;
        if (v > hi) hi = v;
      }
      if (rowsN > 0 && lo === hi) {
        test.reason = say("fit.noSpread");
        return;
      }
      test.df = 1;
      columns.push({ variable: t.name, name: t.name, level: null, reference: null, numeric: true, term: j });
      return;
    }
    const byCode = new Map<number, { slabs: number; affected: number }>();
    for (let r = 0; r < rowsN; r++) {
      const code = t.codes[ix[r]!]!;
      let c = byCode.get(code);
      if (!c) byCode.set(code, (c = { slabs: 0, affected: 0 }));
      c.slabs += Nw[r]!;
      c.affected += S[r]!;
    }
    const labelOf = t.label ?? ((code: number) => String(code));
    const codeOf = new Map<string, number>();
    for (const code of byCode.keys()) codeOf.set(labelOf(code), code);
    const present = [...codeOf.keys()];
    const order = t.levels
      ? [...t.levels.filter((l) => codeOf.has(l)), ...present.filter((l) => !t.levels!.includes(l)).sort(naturalOrder)]
      : present.sort(naturalOrder);
    let reference = order[0];
    if (t.reference !== undefined) {
      if (codeOf.has(t.reference)) reference = t.reference;
      else if (order.length > 0) notes.push(say("fit.referenceMissing", { name: named(t.name), reference: named(t.reference), instead: named(order[0]!) }));
    }
    const levels = reference === undefined ? [] : [reference, ...order.filter((l) => l !== reference)];
    test.levels = levels.map((l) => ({ level: l, ...byCode.get(codeOf.get(l)!)!, reference: l === reference }));
    if (levels.length < 2) {
      levelIndex.push(null);
      test.reason = say("fit.oneLevel");
      return;
    }
    test.df = levels.length - 1;
    const map = new Map<number, number>([[codeOf.get(reference!)!, -1]]);
    levels.slice(1).forEach((l) => {
      map.set(codeOf.get(l)!, columns.length);
      columns.push({ variable: t.name, name: `${t.name} = ${l}`, level: l, reference: reference!, numeric: false, term: j });
    });
    levelIndex.push(map);
  });
  const seDescription = say(seKind === "model" ? "fit.se.model" : factor === "CR1" ? "fit.se.CR1" : "fit.se.CR0");
  const methodWords = { se: seDescription, level: Math.round(confidence * 100) };
  const lrWords = options.likelihoodRatio === false ? "nolr" : "lr";
  const method = say(`fit.method_${lrWords}`, methodWords);
  const methodOnEveryTerm = say(`fit.methodOnEveryTerm_${lrWords}`, methodWords);

  const empty = (reason: string, extra: Partial<MultiLogisticFit> = {}): MultiLogisticFit => ({
    converged: false,
    iterations: 0,
    slabs,
    affected,
    slabsMissing,
    clusters: null,
    seMethod: seKind,
    intercept: { coef: null, se: null, z: null, p: null },
    terms: columns.map((c) => ({
      variable: c.variable,
      column: c.name,
      level: c.level,
      reference: c.reference,
      coef: null,
      se: null,
      z: null,
      p: null,
      oddsRatio: null,
      ciLower: null,
      ciUpper: null,
      vif: null,
    })),
    variables,
    covariance: null,
    deviance: null,
    nullDeviance: null,
    aic: null,
    separation: null,
    reason,
    notes,
    method,
    methodOnEveryTerm,
    ...extra,
  });

  if (slabs === 0) return empty(say("fit.noSlabs"));
  if (affected === 0) return empty(say("fit.noneAffected"));
  if (affected === slabs) return empty(say("fit.allAffected"));

  // Exact checks for separation by one term alone (quasi-complete when a level or a range holds
  // only affected or only sound slabs): the likelihood then has no finite maximum.
  const separated: string[] = [];
  const separationWords: string[] = [];
  terms.forEach((t, j) => {
    const test = variables[j]!;
    if (test.df === 0) return;
    if (t.kind === "categorical") {
      for (const l of test.levels ?? []) {
        if (l.affected === 0 || l.affected === l.slabs) {
          separated.push(`${t.name} = ${l.level}`);
          separationWords.push(say(l.affected === 0 ? "fit.levelNone" : "fit.levelAll", { name: named(t.name), level: named(l.level), count: l.slabs }));
        }
      }
      return;
    }
    let minA = Infinity,
      maxA = -Infinity,
      minS = Infinity,
      maxS = -Infinity;
    for (let r = 0; r < rowsN; r++) {
      const v = t.values[ix[r]!]!;
      if (S[r]! > 0) {
        if (v < minA) minA = v;
        if (v > maxA) maxA = v;
      }
      if (S[r]! < Nw[r]!) {
        if (v < minS) minS = v;
        if (v > maxS) maxS = v;
      }
    }
    if (maxA <= minS || minA >= maxS) {
      separated.push(t.name);
      separationWords.push(say(maxA <= minS ? "fit.belowEvery" : "fit.aboveEvery", { name: named(t.name) }));
    }
  });
  if (separated.length > 0) {
    const description = say("fit.separated", { why: separationWords.join("; ") });
    return empty(description, { separation: { terms: separated, description } });
  }
  // The design: numeric columns centred and scaled (slab-weighted) for a well-conditioned fit.
  const p = columns.length + 1;
  const centre = new Float64Array(p);
  const scale = new Float64Array(p).fill(1);
  const numericCols = columns.map((c, ci) => (c.numeric ? ci : -1)).filter((ci) => ci >= 0);
  const catTerms = terms.map((t, j) => (t.kind === "categorical" && levelIndex[j] ? j : -1)).filter((j) => j >= 0);
  const kn = numericCols.length;
  const kc = catTerms.length;
  const d: Design = {
    rows: rowsN,
    p,
    kn,
    xn: new Float64Array(rowsN * kn),
    numCol: Int32Array.from(numericCols, (ci) => ci + 1),
    kc,
    xc: new Int32Array(rowsN * kc),
    catCols: catTerms.map((j) => Int32Array.from(columns.map((c, ci) => (c.term === j ? ci + 1 : -1)).filter((x) => x > 0))),
    s: S,
    n: Nw,
  };
  numericCols.forEach((ci, b) => {
    const values = (terms[columns[ci]!.term] as { values: ArrayLike<number> }).values;
    let mean = 0;
    for (let r = 0; r < rowsN; r++) mean += values[ix[r]!]! * Nw[r]!;
    mean /= slabs;
    // Centred values go into the design first, then are scaled in place.
    const xn = d.xn;
    let ss = 0;
    for (let r = 0; r < rowsN; r++) {
      const c = values[ix[r]!]! - mean;
      xn[r * kn + b] = c;
      ss += Nw[r]! * c * c;
    }
    const sd = Math.sqrt(ss / slabs) || 1;
    centre[ci + 1] = mean;
    scale[ci + 1] = sd;
    for (let r = 0; r < rowsN; r++) xn[r * kn + b]! /= sd;
  });
  catTerms.forEach((j, b) => {
    const map = levelIndex[j]!;
    const codes = (terms[j] as { codes: ArrayLike<number> }).codes;
    // Codes are usually a few small ids: look them up in an array, the map for anything else.
    let last = NaN;
    let lastCol = -1;
    for (let r = 0; r < rowsN; r++) {
      const code = codes[ix[r]!]!;
      if (code !== last) {
        last = code;
        const col = map.get(code)!;
        lastCol = col >= 0 ? col + 1 : -1;
      }
      d.xc[r * kc + b] = lastCol;
    }
  });
  const allAct: Active = {
    cols: Int32Array.from({ length: p }, (_, i) => i),
    num: Int32Array.from({ length: kn }, (_, i) => i),
    cat: Int32Array.from({ length: kc }, (_, i) => i),
  };

  // Slab-weighted correlation of the columns: collinearity check and (G)VIF, from the weighted
  // cross-products (the numeric columns are already centred and scaled).
  const q = columns.length;
  const cross = accumulate(d, allAct, null).info;
  // cov(a, b) = Σw xₐx_b − Σw xₐ · Σw x_b / N, with Σw xₐ = cross(a, intercept).
  const cov = Array.from({ length: q }, (_, a) =>
    Array.from({ length: q }, (_, b) => cross[(a + 1) * p + b + 1]! - (cross[(a + 1) * p]! * cross[(b + 1) * p]!) / slabs),
  );
  const corr = cov.map((row, a) => row.map((v, b) => v / Math.sqrt(cov[a]![a]! * cov[b]![b]!)));
  const dependent = q > 0 ? firstDependentColumn(corr, 1e-10) : -1;
  if (dependent >= 0) {
    const c = columns[dependent]!;
    return empty(say("fit.collinear", { name: named(c.name) }));
  }
  const corrInv = q > 0 ? choleskyInverse(corr) : [];
  const logDetAll = q > 0 ? logDeterminant(corr) : 0;
  // Fit.
  const ybar = affected / slabs;
  let start: Float64Array = new Float64Array(p);
  start[0] = Math.log(ybar / (1 - ybar));
  if (rowsN > 2 * WARM_START_ROWS) {
    // Many distinct rows: take the early Newton steps on a sample of the rows, then finish on all of them.
    // The answer is the maximum of the full likelihood either way (the same convergence test on all
    // rows); only the number of passes over a million rows drops.
    const warm = irls(sampleOf(d, Math.ceil(rowsN / WARM_START_ROWS)), allAct, start, maxIterations);
    if (warm.converged) start = warm.beta;
  }
  const fit = irls(d, allAct, start, maxIterations);
  const nullDeviance = -2 * (affected * Math.log(ybar) + (slabs - affected) * Math.log1p(-ybar));
  if (!fit.converged || !fit.info) {
    // Separation by a combination of terms: the coefficients run away instead of settling.
    const runaway = columns
      .map((c, i) => ({ name: c.name, size: Math.abs(fit.beta[i + 1]!) }))
      .sort((a, b) => b.size - a.size)
      .slice(0, 3)
      .map((x) => x.name);
    const description = say("fit.notConverged", { iterations: fit.iterations, largest: runaway.map(named).join(", ") });
    return empty(description, { iterations: fit.iterations, separation: { terms: runaway, description }, nullDeviance });
  }
  // Covariance on the fitting scale: model-based, or the cluster sandwich A⁻¹ (Σ_g u_g u_gᵀ) A⁻¹.
  const bread = choleskyInverse(fit.info)!;
  let vFit = bread;
  let clusters: number | null = null;
  if (seKind === "cluster") {
    // The fitted probability of each design row, then each heat's score u_g = Σ x (y − n·p) summed
    // over its slabs in one pass (a design row may hold slabs of several heats). With the caller's
    // numbering (clusterIds) the heats with a used row are counted in the same pass (and where a heat's
    // slabs are not side by side, their order of first appearance kept); else they are numbered first
    // (clusterIdsOf).
    const b = fit.beta;
    const mu = new Float64Array(rowsN);
    for (let r = 0; r < rowsN; r++) {
      let eta = b[0]!;
      const rb = r * kn;
      for (let j = 0; j < kn; j++) eta += b[d.numCol[j]!]! * d.xn[rb + j]!;
      const rc = r * kc;
      for (let t = 0; t < kc; t++) {
        const c = d.xc[rc + t]!;
        if (c >= 0) eta += b[c]!;
      }
      mu[r] = 1 / (1 + Math.exp(-eta));
    }
    const pre = data.clusterIds?.ids;
    const perRow = pre ? null : clusterIdsOf(used, data.cluster!);
    const heatSlots = pre ? data.clusterIds!.count : perRow!.G;
    let seen = pre ? scratch("cluster.seen", Uint8Array, heatSlots, 0) : null;
    const order = pre ? scratch("cluster.order", Int32Array, heatSlots) : null;
    let G = perRow ? perRow.G : 0;
    const patternOf = grouped?.patternOf;
    const aff = data.affected;
    const sl = data.slabs;
    const { xn, xc, numCol } = d;
    // The reports' common shape (one condition, alone or beside one categorical term, heats
    // numbered by the caller, one slab per row) in a loop of its own: the same additions in the
    // same order as the general loop below, without its inner loops (this pass took a quarter to a
    // third of a screening's time; the loop of its own cut the screening by 5–7 %).
    const oneNum = kn === 1 && kc <= 1 && pre !== undefined && sl === undefined && patternOf !== undefined ? numCol[0]! : 0;
    const oneCat = kc === 1 ? xc : null;
    let meatFlat = new Float64Array(p * p);
    // With the caller's numbering, and each heat's slabs side by side (the facts' usual order), each
    // heat's score goes into the meat as the heat ends (heatMeatOneNumeric, heatMeatRows); else a
    // score per heat is kept (below) and the meat added up from them.
    const streamed =
      oneNum > 0
        ? heatMeatOneNumeric(used, pre!, heatSlots, seen!, patternOf!, aff, mu, xn, oneCat, p, oneNum, meatFlat)
        : pre
          ? heatMeatRows(used, pre, heatSlots, seen!, patternOf, aff, sl, mu, d, p, meatFlat)
          : -1;
    if (streamed < 0 && pre) {
      meatFlat = new Float64Array(p * p);
      seen = scratch("cluster.seen", Uint8Array, heatSlots, 0);
    }
    const u = streamed < 0 ? scratch("fit.heatScores", Float64Array, heatSlots * p, 0) : new Float64Array(0);
    if (streamed >= 0) {
      G = streamed;
      meatsByHeat++;
    }
    for (let w = streamed >= 0 ? m : 0; w < m; w++) {
      const i = used[w]!;
      let h: number;
      if (pre) {
        h = pre[i]!;
        if (!(h >= 0 && h < heatSlots)) throw new Error("logisticRegressionColumns: a row without a heat");
        if (!seen![h]) {
          seen![h] = 1;
          order![G++] = h;
        }
      } else h = perRow!.ids[w]!;
      const r = patternOf === undefined ? w : patternOf[w]!;
      const resid = aff[i]! - (sl === undefined ? 1 : sl[i]!) * mu[r]!;
      const g = h * p;
      u[g]! += resid;
      const rb = r * kn;
      for (let j = 0; j < kn; j++) u[g + numCol[j]!]! += xn[rb + j]! * resid;
      const rc = r * kc;
      for (let t = 0; t < kc; t++) {
        const c = xc[rc + t]!;
        if (c >= 0) u[g + c]! += resid;
      }
    }
    clusters = G;
    if (G < 2) return empty(say("fit.oneHeat"), { iterations: fit.iterations, deviance: fit.deviance, nullDeviance });
    if (factor === "CR1" && slabs <= p)
      return empty(say("fit.tooFewSlabs"), {
        iterations: fit.iterations,
        deviance: fit.deviance,
        nullDeviance,
      });
    // Each heat with a used row, in the order of first appearance (the caller's numbering may hold more).
    if (streamed < 0) for (let k = 0; k < G; k++) addHeatToMeat(meatFlat, u, (order ? order[k]! : k) * p, p);
    const meat = Array.from({ length: p }, (_, a) => Array.from({ length: p }, (_, c) => (c <= a ? meatFlat[a * p + c]! : meatFlat[c * p + a]!)));
    const cf = factor === "CR1" ? (G / (G - 1)) * ((slabs - 1) / (slabs - p)) : G / (G - 1);
    vFit = congruence(bread, meat).map((row) => row.map((v) => v * cf));
    if (G < FEW_HEATS) notes.push(say("fit.fewHeats", { count: G }));
  }
  // Back to the original scale: β = T β_fit, V = T V_fit Tᵀ.
  const T = Array.from({ length: p }, (_, a) => Array.from({ length: p }, (_, b) => (a === b ? 1 / scale[a]! : 0)));
  for (let b = 1; b < p; b++) T[0]![b] = -centre[b]! / scale[b]!;
  const beta = T.map((row) => row.reduce((t, v, b) => t + v * fit.beta[b]!, 0));
  const V = congruence(T, vFit);
  const se = V.map((row, a) => Math.sqrt(row[a]!));
  const waldOf = (a: number) => {
    const z = beta[a]! / se[a]!;
    return { coef: beta[a]!, se: se[a]!, z, p: normalTwoSided(z) };
  };
  const termsOut: TermEstimate[] = columns.map((c, i) => {
    const w = waldOf(i + 1);
    return {
      variable: c.variable,
      column: c.name,
      level: c.level,
      reference: c.reference,
      ...w,
      oddsRatio: Math.exp(w.coef),
      ciLower: Math.exp(w.coef - zq * w.se),
      ciUpper: Math.exp(w.coef + zq * w.se),
      vif: corrInv ? corrInv[i]![i]! : null,
    };
  });

  // Per variable: Wald test with the chosen SEs, (G)VIF, and the likelihood-ratio test by refitting without it.
  terms.forEach((t, j) => {
    const test = variables[j]!;
    if (test.df === 0) return;
    const idx = columns.map((c, i) => (c.term === j ? i : -1)).filter((i) => i >= 0);
    const vInv = choleskyInverse(
      subMatrix(
        V,
        idx.map((i) => i + 1),
      ),
    );
    if (vInv) {
      const b = idx.map((i) => beta[i + 1]!);
      let w = 0;
      for (let a = 0; a < b.length; a++) for (let c = 0; c < b.length; c++) w += b[a]! * vInv[a]![c]! * b[c]!;
      test.waldChi2 = w;
      test.waldP = chiSquareUpper(w, idx.length);
    }
    if (logDetAll !== null) {
      const others = columns.map((_, i) => i).filter((i) => !idx.includes(i));
      const ldS = logDeterminant(subMatrix(corr, idx));
      const ldO = others.length > 0 ? logDeterminant(subMatrix(corr, others)) : 0;
      if (ldS !== null && ldO !== null) {
        test.gvif = Math.exp(ldS + ldO - logDetAll);
        test.gvifPerDf = test.gvif ** (1 / (2 * idx.length));
      }
    }
    if (options.likelihoodRatio === false) return;
    const keep = Int32Array.from([0, ...columns.map((_, i) => i + 1).filter((i) => !idx.includes(i - 1))]);
    const act: Active = {
      cols: keep,
      num: Int32Array.from(numericCols.map((ci, b) => (columns[ci]!.term === j ? -1 : b)).filter((b) => b >= 0)),
      cat: Int32Array.from(catTerms.map((tj, b) => (tj === j ? -1 : b)).filter((b) => b >= 0)),
    };
    // Start from the maximum of the full model's quadratic approximation with this variable's
    // coefficients set to 0: β_r + I_rr⁻¹ I_rd β_d. Newton then needs two or three passes.
    const drop = idx.map((i) => i + 1);
    const Irr = choleskyInverse(subMatrix(fit.info!, Array.from(keep)));
    const start = Float64Array.from(keep, (i) => fit.beta[i]!);
    if (Irr) {
      const shift = Array.from(keep, (a) => drop.reduce((t, dcol) => t + fit.info![a]![dcol]! * fit.beta[dcol]!, 0));
      for (let a = 0; a < keep.length; a++) for (let b = 0; b < keep.length; b++) start[a]! += Irr[a]![b]! * shift[b]!;
    }
    const reduced = irls(d, act, start, maxIterations);
    if (!reduced.converged) {
      test.reason = say("fit.reducedNotConverged");
      return;
    }
    const lr = Math.max(0, reduced.deviance - fit.deviance);
    test.lrChi2 = lr;
    test.lrP = chiSquareUpper(lr, idx.length);
  });
  if (seKind === "cluster" && options.likelihoodRatio !== false) notes.push(say("fit.lrIndependent"));
  const w0 = waldOf(0);
  return {
    converged: true,
    iterations: fit.iterations,
    slabs,
    affected,
    slabsMissing,
    clusters,
    seMethod: seKind,
    intercept: w0,
    terms: termsOut,
    variables,
    covariance: V,
    deviance: fit.deviance,
    nullDeviance,
    aic: fit.deviance + 2 * p,
    separation: null,
    reason: null,
    notes,
    method,
    methodOnEveryTerm,
  };
}
