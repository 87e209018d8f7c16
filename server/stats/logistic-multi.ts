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
 * Undefined results are null with a reason: no events, a term without spread, collinear columns,
 * separation (a level or a variable that splits affected from sound slabs perfectly, or a fit that
 * does not converge) — never a huge odds ratio.
 */
import { chiSquareUpper, normalQuantileOf, normalTwoSided } from "./distributions";
import { choleskyInverse, congruence, firstDependentColumn, logDeterminant, subMatrix } from "./linear-algebra";

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

interface Design {
  x: Float64Array;
  s: Float64Array;
  n: Float64Array;
  cluster: Int32Array;
  rows: number;
  p: number;
}

interface IrlsResult {
  beta: Float64Array;
  deviance: number;
  converged: boolean;
  iterations: number;
  info: number[][] | null;
}

/**
 * One pass: deviance, gradient and information at beta over the columns `cols`. Only a row's non-zero
 * entries enter the information (a categorical variable has one non-zero dummy per row), which keeps
 * the pass near linear in the number of numeric terms.
 */
function pass(d: Design, cols: Int32Array, beta: Float64Array) {
  const k = cols.length;
  const grad = new Float64Array(k);
  const info = new Float64Array(k * k);
  const xv = new Float64Array(k);
  const xi = new Int32Array(k);
  const { x, s: sArr, n: nArr, p: width, rows } = d;
  let dev = 0;
  for (let r = 0; r < rows; r++) {
    const base = r * width;
    let eta = 0;
    let m = 0;
    for (let a = 0; a < k; a++) {
      const v = x[base + cols[a]!]!;
      if (v === 0) continue;
      xv[m] = v;
      xi[m++] = a;
      eta += beta[a]! * v;
    }
    const n = nArr[r]!;
    const s = sArr[r]!;
    // −2 log L on the slab level, −2[s log p + (n − s) log(1 − p)], from L = ln(1 + e^(−η)):
    // ln p = −L and ln(1 − p) = −η − L, one exp and one log1p per row that keep their digits.
    const e = Math.exp(-eta);
    const p = 1 / (1 + e);
    const L = e === Infinity ? softplus(-eta) : Math.log1p(e);
    dev += 2 * (s * L + (n - s) * (eta + L));
    const resid = s - n * p;
    const w = n * p * (1 - p);
    for (let u = 0; u < m; u++) {
      const xa = xv[u]!;
      const row = xi[u]! * k;
      grad[xi[u]!]! += xa * resid;
      const wa = w * xa;
      for (let v = 0; v <= u; v++) info[row + xi[v]!]! += wa * xv[v]!;
    }
  }
  const infoM = Array.from({ length: k }, (_, a) => Array.from({ length: k }, (_, b) => (b <= a ? info[a * k + b]! : info[b * k + a]!)));
  return { dev, grad, info: infoM };
}

function irls(d: Design, cols: Int32Array, start: Float64Array, maxIterations: number): IrlsResult {
  const k = cols.length;
  let beta = Float64Array.from(start);
  let prevBeta = beta;
  let prevDev = Infinity;
  let halvings = 0;
  for (let it = 0; it < maxIterations; it++) {
    const { dev, grad, info } = pass(d, cols, beta);
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
    return { relativeChange: null, differs: null, reason: "one of the two odds ratios is undefined" };
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
}

/**
 * The same model from row objects (one per slab, or per group of equal values within one heat):
 * converted to columns and fitted by `logisticRegressionColumns`.
 */
export function logisticRegressionMulti(terms: TermSpec[], rows: SlabRow[], options: MultiLogisticOptions = {}): MultiLogisticFit {
  const clusterIds = new Map<string | number, number>();
  const hasCluster = rows.some((r) => r.cluster !== undefined);
  const columns: TermColumn[] = terms.map((t, j) => {
    if (t.kind === "numeric") return { name: t.name, kind: "numeric", values: Float64Array.from(rows, (r) => (typeof r.values[j] === "number" ? (r.values[j] as number) : NaN)) };
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

  // Complete rows only, so every model (full and reduced) is fitted to the same slabs.
  const source = data.rows ?? { length: data.affected.length };
  const picked = new Int32Array(source.length);
  let m = 0;
  let slabsMissing = 0;
  for (let u = 0; u < source.length; u++) {
    const i = data.rows ? data.rows[u]! : u;
    const n = trialsOf(i);
    if (!(n > 0)) continue;
    let complete = true;
    for (let j = 0; j < terms.length && complete; j++) {
      const t = terms[j]!;
      complete = t.kind === "numeric" ? Number.isFinite(t.values[i]) : t.codes[i]! >= 0;
    }
    if (complete) picked[m++] = i;
    else slabsMissing += n;
  }
  const used = picked.subarray(0, m);
  if (seKind === "cluster") {
    if (!data.cluster) throw new Error("logisticRegressionColumns: cluster-robust SEs need the heat of every row");
    for (const i of used) if (!Number.isFinite(data.cluster[i])) throw new Error("logisticRegressionColumns: a row without a heat");
  }
  let slabs = 0;
  let affected = 0;
  for (const i of used) {
    slabs += trialsOf(i);
    affected += data.affected[i]!;
  }
  if (slabsMissing > 0) notes.push(`${slabsMissing} slab${slabsMissing === 1 ? "" : "s"} without a value for every term ${slabsMissing === 1 ? "is" : "are"} left out.`);

  // Levels and spread of each term.
  const variables: VariableTest[] = [];
  const columns: Column[] = [];
  /** Per categorical term: code → design column (−1 for the reference). */
  const levelIndex: (Map<number, number> | null)[] = [];
  terms.forEach((t, j) => {
    const test: VariableTest = { variable: t.name, kind: t.kind, df: 0, lrChi2: null, lrP: null, waldChi2: null, waldP: null, gvif: null, gvifPerDf: null, reason: null };
    variables.push(test);
    if (t.kind === "numeric") {
      levelIndex.push(null);
      let lo = Infinity;
      let hi = -Infinity;
      for (const i of used) {
        const v = t.values[i]!;
        if (v < lo) lo = v;
        if (v > hi) hi = v;
      }
      if (used.length > 0 && lo === hi) {
        test.reason = "not testable: no spread (every slab has the same value); left out of the model";
        return;
      }
      test.df = 1;
      columns.push({ variable: t.name, name: t.name, level: null, reference: null, numeric: true, term: j });
      return;
    }
    const byCode = new Map<number, { slabs: number; affected: number }>();
    for (const i of used) {
      const code = t.codes[i]!;
      let c = byCode.get(code);
      if (!c) byCode.set(code, (c = { slabs: 0, affected: 0 }));
      c.slabs += trialsOf(i);
      c.affected += data.affected[i]!;
    }
    const labelOf = t.label ?? ((code: number) => String(code));
    const codeOf = new Map<string, number>();
    for (const code of byCode.keys()) codeOf.set(labelOf(code), code);
    const present = [...codeOf.keys()];
    const order = t.levels ? [...t.levels.filter((l) => codeOf.has(l)), ...present.filter((l) => !t.levels!.includes(l)).sort(naturalOrder)] : present.sort(naturalOrder);
    let reference = order[0];
    if (t.reference !== undefined) {
      if (codeOf.has(t.reference)) reference = t.reference;
      else if (order.length > 0) notes.push(`${t.name}: the reference level ${t.reference} has no slabs here; ${order[0]} is the reference instead.`);
    }
    const levels = reference === undefined ? [] : [reference, ...order.filter((l) => l !== reference)];
    test.levels = levels.map((l) => ({ level: l, ...byCode.get(codeOf.get(l)!)!, reference: l === reference }));
    if (levels.length < 2) {
      levelIndex.push(null);
      test.reason = "not testable: only one level present; left out of the model";
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

  const seDescription =
    seKind === "model"
      ? "model-based standard errors (inverse Fisher information)"
      : `cluster-robust (sandwich) standard errors clustered by heat (Liang & Zeger 1986) with the small-sample factor ${
          factor === "CR1" ? "G/(G − 1)·(N − 1)/(N − K) (CR1, as statsmodels applies it; N slabs, K parameters)" : "G/(G − 1) alone (as R's sandwich::vcovCL applies it by default)"
        }, normal reference distribution`;
  const method =
    "multivariable logistic regression by maximum likelihood (IRLS); " +
    `${seDescription}; Wald z tests, two-sided, and Wald ${Math.round(confidence * 100)} % intervals for the odds ratios; ` +
    "likelihood-ratio chi-square per variable (model-based, slabs taken as independent); Wald chi-square per variable with the chosen SEs; " +
    "design-based (generalised) variance inflation factors; deviance and AIC on the slab level";

  const empty = (reason: string, extra: Partial<MultiLogisticFit> = {}): MultiLogisticFit => ({
    converged: false, iterations: 0, slabs, affected, slabsMissing, clusters: null, seMethod: seKind,
    intercept: { coef: null, se: null, z: null, p: null },
    terms: columns.map((c) => ({ variable: c.variable, column: c.name, level: c.level, reference: c.reference, coef: null, se: null, z: null, p: null, oddsRatio: null, ciLower: null, ciUpper: null, vif: null })),
    variables, covariance: null, deviance: null, nullDeviance: null, aic: null, separation: null, reason, notes, method, ...extra,
  });

  if (slabs === 0) return empty("no slabs with a value for every term");
  if (affected === 0) return empty("no affected slab: the odds ratios are undefined");
  if (affected === slabs) return empty("every slab is affected: the odds ratios are undefined");

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
          separationWords.push(`${t.name} ${l.level} has ${l.affected === 0 ? "no affected slab" : "only affected slabs"} (${l.slabs} slab${l.slabs === 1 ? "" : "s"})`);
        }
      }
      return;
    }
    let minA = Infinity, maxA = -Infinity, minS = Infinity, maxS = -Infinity;
    for (const i of used) {
      const v = t.values[i]!;
      if (data.affected[i]! > 0) {
        if (v < minA) minA = v;
        if (v > maxA) maxA = v;
      }
      if (data.affected[i]! < trialsOf(i)) {
        if (v < minS) minS = v;
        if (v > maxS) maxS = v;
      }
    }
    if (maxA <= minS || minA >= maxS) {
      separated.push(t.name);
      separationWords.push(`every affected slab has ${t.name} ${maxA <= minS ? "at or below" : "at or above"} every sound slab's`);
    }
  });
  if (separated.length > 0) {
    const description = `${separationWords.join("; ")}: the affected and sound slabs are separated, so the odds ratio has no finite estimate (separation). Merge or leave out that level, or leave out the variable.`;
    return empty(description, { separation: { terms: separated, description } });
  }

  // The design: numeric columns centred and scaled (slab-weighted) for a well-conditioned fit.
  const p = columns.length + 1;
  const centre = new Float64Array(p);
  const scale = new Float64Array(p).fill(1);
  columns.forEach((c, ci) => {
    if (!c.numeric) return;
    const values = (terms[c.term] as { values: ArrayLike<number> }).values;
    let mean = 0;
    for (const i of used) mean += values[i]! * trialsOf(i);
    mean /= slabs;
    let ss = 0;
    for (const i of used) ss += trialsOf(i) * (values[i]! - mean) ** 2;
    centre[ci + 1] = mean;
    scale[ci + 1] = Math.sqrt(ss / slabs) || 1;
  });
  const rowsN = used.length;
  const d: Design = { x: new Float64Array(rowsN * p), s: new Float64Array(rowsN), n: new Float64Array(rowsN), cluster: new Int32Array(rowsN), rows: rowsN, p };
  for (let r = 0; r < rowsN; r++) d.x[r * p] = 1;
  columns.forEach((c, ci) => {
    if (!c.numeric) return;
    const values = (terms[c.term] as { values: ArrayLike<number> }).values;
    const col = ci + 1;
    const mu = centre[col]!;
    const sd = scale[col]!;
    for (let r = 0; r < rowsN; r++) d.x[r * p + col] = (values[used[r]!]! - mu) / sd;
  });
  terms.forEach((t, j) => {
    const map = levelIndex[j];
    if (t.kind !== "categorical" || !map) return;
    for (let r = 0; r < rowsN; r++) {
      const col = map.get(t.codes[used[r]!]!)!;
      if (col >= 0) d.x[r * p + col + 1] = 1;
    }
  });
  const clusterIds = new Map<number, number>();
  for (let r = 0; r < rowsN; r++) {
    const i = used[r]!;
    d.s[r] = data.affected[i]!;
    d.n[r] = trialsOf(i);
    if (seKind === "cluster") {
      const key = data.cluster![i]!;
      let id = clusterIds.get(key);
      if (id === undefined) clusterIds.set(key, (id = clusterIds.size));
      d.cluster[r] = id;
    }
  }

  // Slab-weighted correlation of the columns: collinearity check and (G)VIF. From the weighted
  // cross-products (sparse, as in a pass); the numeric columns are already centred and scaled.
  const q = columns.length;
  const cross = new Float64Array(p * p);
  {
    const xv = new Float64Array(p);
    const xi = new Int32Array(p);
    for (let r = 0; r < d.rows; r++) {
      const base = r * p;
      let m = 0;
      for (let a = 0; a < p; a++) {
        const v = d.x[base + a]!;
        if (v === 0) continue;
        xv[m] = v;
        xi[m++] = a;
      }
      const w = d.n[r]!;
      for (let u = 0; u < m; u++) {
        const wa = w * xv[u]!;
        const row = xi[u]! * p;
        for (let v = 0; v <= u; v++) cross[row + xi[v]!]! += wa * xv[v]!;
      }
    }
  }
  // cov(a, b) = Σw xₐx_b − Σw xₐ · Σw x_b / N, with Σw xₐ = cross(a, intercept).
  const cov = Array.from({ length: q }, (_, a) =>
    Array.from({ length: q }, (_, b) => {
      const [hi, lo] = a >= b ? [a + 1, b + 1] : [b + 1, a + 1];
      return cross[hi * p + lo]! - (cross[(a + 1) * p]! * cross[(b + 1) * p]!) / slabs;
    }),
  );
  const corr = cov.map((row, a) => row.map((v, b) => v / Math.sqrt(cov[a]![a]! * cov[b]![b]!)));
  const dependent = q > 0 ? firstDependentColumn(corr, 1e-10) : -1;
  if (dependent >= 0) {
    const c = columns[dependent]!;
    return empty(`${c.name} is a linear combination of the terms before it (exact collinearity): their effects cannot be told apart. Leave one of them out.`);
  }
  const corrInv = q > 0 ? choleskyInverse(corr) : [];
  const logDetAll = q > 0 ? logDeterminant(corr) : 0;

  // Fit.
  const allCols = Int32Array.from({ length: p }, (_, i) => i);
  const ybar = affected / slabs;
  const start = new Float64Array(p);
  start[0] = Math.log(ybar / (1 - ybar));
  const fit = irls(d, allCols, start, maxIterations);
  const nullDeviance = -2 * (affected * Math.log(ybar) + (slabs - affected) * Math.log1p(-ybar));
  if (!fit.converged || !fit.info) {
    // Separation by a combination of terms: the coefficients run away instead of settling.
    const runaway = columns
      .map((c, i) => ({ name: c.name, size: Math.abs(fit.beta[i + 1]!) }))
      .sort((a, b) => b.size - a.size)
      .slice(0, 3)
      .map((x) => x.name);
    const description = `the fit did not converge in ${fit.iterations} iterations: the affected and sound slabs are (almost) perfectly separated by a combination of terms (largest coefficients: ${runaway.join(", ")}), so there are no finite odds ratios (separation). Leave out or merge terms.`;
    return empty(description, { iterations: fit.iterations, separation: { terms: runaway, description }, nullDeviance });
  }

  // Covariance on the fitting scale: model-based, or the cluster sandwich A⁻¹ (Σ_g u_g u_gᵀ) A⁻¹.
  const bread = choleskyInverse(fit.info)!;
  let vFit = bread;
  let clusters: number | null = null;
  if (seKind === "cluster") {
    const G = clusterIds.size;
    clusters = G;
    if (G < 2) return empty("fewer than two heats: cluster-robust standard errors are undefined", { iterations: fit.iterations, deviance: fit.deviance, nullDeviance });
    if (factor === "CR1" && slabs <= p) return empty("no more slabs than parameters: the small-sample factor (N − 1)/(N − K) is undefined", { iterations: fit.iterations, deviance: fit.deviance, nullDeviance });
    const u = new Float64Array(G * p);
    for (let r = 0; r < d.rows; r++) {
      const base = r * p;
      let eta = 0;
      for (let a = 0; a < p; a++) eta += fit.beta[a]! * d.x[base + a]!;
      const resid = d.s[r]! - d.n[r]! / (1 + Math.exp(-eta));
      const g = d.cluster[r]! * p;
      for (let a = 0; a < p; a++) u[g + a]! += d.x[base + a]! * resid;
    }
    const meat = Array.from({ length: p }, () => new Array<number>(p).fill(0));
    for (let g = 0; g < G; g++) for (let a = 0; a < p; a++) for (let b = 0; b <= a; b++) meat[a]![b]! += u[g * p + a]! * u[g * p + b]!;
    for (let a = 0; a < p; a++) for (let b = a + 1; b < p; b++) meat[a]![b] = meat[b]![a]!;
    const c = factor === "CR1" ? (G / (G - 1)) * ((slabs - 1) / (slabs - p)) : G / (G - 1);
    vFit = congruence(bread, meat).map((row) => row.map((v) => v * c));
    if (G < 30) notes.push(`Only ${G} heats: cluster-robust standard errors are unreliable with few clusters (Cameron & Miller 2015, J. Human Resources 50:317).`);
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
      variable: c.variable, column: c.name, level: c.level, reference: c.reference, ...w,
      oddsRatio: Math.exp(w.coef), ciLower: Math.exp(w.coef - zq * w.se), ciUpper: Math.exp(w.coef + zq * w.se),
      vif: corrInv ? corrInv[i]![i]! : null,
    };
  });

  // Per variable: Wald test with the chosen SEs, (G)VIF, and the likelihood-ratio test by refitting without it.
  terms.forEach((t, j) => {
    const test = variables[j]!;
    if (test.df === 0) return;
    const idx = columns.map((c, i) => (c.term === j ? i : -1)).filter((i) => i >= 0);
    const vInv = choleskyInverse(subMatrix(V, idx.map((i) => i + 1)));
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
    // Start from the maximum of the full model's quadratic approximation with this variable's
    // coefficients set to 0: β_r + I_rr⁻¹ I_rd β_d. Newton then needs two or three passes.
    const drop = idx.map((i) => i + 1);
    const Irr = choleskyInverse(subMatrix(fit.info!, Array.from(keep)));
    const start = Float64Array.from(keep, (i) => fit.beta[i]!);
    if (Irr) {
      const shift = Array.from(keep, (a) => drop.reduce((t, dcol) => t + fit.info![a]![dcol]! * fit.beta[dcol]!, 0));
      for (let a = 0; a < keep.length; a++) for (let b = 0; b < keep.length; b++) start[a]! += Irr[a]![b]! * shift[b]!;
    }
    const reduced = irls(d, keep, start, maxIterations);
    if (!reduced.converged) {
      test.reason = "the model without this variable did not converge: no likelihood-ratio test";
      return;
    }
    const lr = Math.max(0, reduced.deviance - fit.deviance);
    test.lrChi2 = lr;
    test.lrP = chiSquareUpper(lr, idx.length);
  });
  if (seKind === "cluster") notes.push("The likelihood-ratio tests take slabs as independent; with heat-level variables read the cluster-robust Wald tests.");

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
  };
}
