/**
 * A slab risk model, trained and validated on the plant's own history, with no database in sight:
 * the caller hands over the slabs (their cast time, outcome and condition values) as columns.
 *
 * - Terms: each numeric condition enters as itself plus restricted cubic spline terms (knots at
 *   Harrell's quantiles of the training slabs); each categorical one as indicator columns against its
 *   most common level. A missing numeric value takes the training median (a simple imputation, said
 *   in the method), so every slab can be scored.
 * - Honest validation on a time split: the newest `testShare` of the slabs (by cast time) is held
 *   out; the penalty λ is chosen on the older part alone by time-ordered (rolling-origin)
 *   cross-validation — each fold trains on the slabs before a cut and is scored on the next slice —
 *   by the mean out-of-fold deviance; the model is then fitted on the whole older part and judged on
 *   the held-out newest slabs: ROC AUC (DeLong interval), Brier, calibration intercept and slope,
 *   capture in the riskiest 10 % and 20 %, reliability points.
 * - Baseline on the same test slabs: each slab's grade-family rate in the training part.
 * - Explanations: a slab's risk against the plant's typical slab (every numeric condition at its
 *   training median, every category at its reference level), term by term: the contribution of a
 *   condition is the change in log-odds its terms make between the typical slab and this one.
 */
import { LANGUAGES, type Language } from "@shared/i18n/languages";
import { named, num, say, speakingIn } from "../../lib/words";
import { aucDeLong, brierScore, calibration, captureAtTop, reliability, type ReliabilityPoint } from "../../stats/discrimination";
import { logistic, penalisedLogistic, type PenalisedFit } from "../../stats/penalised-logistic";
import { quantileSorted, splineKnots, splineTerms } from "../../stats/splines";

export interface NumericInput {
  key: string;
  label: string;
  unit: string | null;
  /** NaN where the slab has no value. */
  values: ArrayLike<number>;
}

export interface CategoricalInput {
  key: string;
  label: string;
  codes: ArrayLike<number>;
  /** The words for a code ("PER", "strand 2"). */
  name: (code: number) => string;
}

export interface RiskData {
  /** The slabs to use (indexes into the columns). */
  rows: Int32Array;
  castAt: ArrayLike<number>;
  outcome: ArrayLike<number>;
  numeric: NumericInput[];
  categorical: CategoricalInput[];
  /** The grade family code of each slab, for the baseline. */
  family: ArrayLike<number>;
}

/** What a stored model needs to score a slab: enough to rebuild every column. */
export interface ModelTerms {
  numeric: { key: string; label: string; unit: string | null; knots: number[]; median: number }[];
  categorical: { key: string; label: string; reference: number; referenceName: string; levels: { code: number; name: string }[] }[];
  /** Intercept first, then the columns in the order `columnsOf` builds them. */
  coefficients: number[];
  /** Names of the columns, for the record. */
  columns: string[];
}

export interface Validation {
  auc: number | null;
  aucCiLower: number | null;
  aucCiUpper: number | null;
  brier: number | null;
  calibrationIntercept: number | null;
  calibrationSlope: number | null;
  captureTop10: number | null;
  captureTop20: number | null;
  baselineAuc: number | null;
  baselineBrier: number | null;
  testSlabs: number;
  testAffected: number;
  trainSlabs: number;
  trainAffected: number;
  reliability: ReliabilityPoint[];
  /** From when the test part runs (the time split), epoch ms. */
  splitAt: number | null;
  /** Why a figure is null, in words (English). */
  notes: string[];
  /** The method and notes said in the other languages, made when trained (the reader's is shown; risk.service.ts). */
  words?: Partial<Record<Language, ModelWords>>;
}

/** What a trained model says in words: how it was made and validated, and why a figure is missing. */
export interface ModelWords {
  method: string;
  notes: string[];
}

export interface TrainOptions {
  knots?: 3 | 4 | 5;
  /** Share of the newest slabs held out for the test (default 0.25). */
  testShare?: number;
  /** Number of rolling-origin folds for λ (default 3). */
  folds?: number;
  lambdas?: number[];
  /** Called with a fraction 0–1 as training goes. */
  /** `what` in English (for logs), `words` as a key of server:risk.progress with its numbers (for the screen, in the asker's language). */
  progress?: (fraction: number, what: string, words: { key: string; values?: Record<string, number> }) => void;
}

export interface TrainedModel {
  terms: ModelTerms;
  lambda: number;
  effectiveDf: number | null;
  validation: Validation;
  /** Out-of-fold deviance per λ tried, for the record. */
  path: { lambda: number; deviance: number | null }[];
  /** True when the model beats the baseline on the test slabs (its AUC interval lies above the baseline's AUC). */
  beatsBaseline: boolean;
  method: string;
  /** False when the final fit did not converge (the validation's notes say why): such a model is not stored as trained. */
  converged: boolean;
  /** Risk thresholds of the bands, from the test slabs (90th and 70th percentiles); null when not fitted. */
  bands: { high: number; raised: number } | null;
}

export const DEFAULT_LAMBDAS = [0, 0.5, 2, 8, 32, 128, 512];
/** At most this many training slabs choose the penalty (every k-th by time beyond it). */
export const CV_MAX_SLABS = 200_000;

/** Whether a numeric input takes at least two different finite values on the rows. */
function variesIn(values: ArrayLike<number>, rows: Int32Array): boolean {
  let first = NaN;
  for (let u = 0; u < rows.length; u++) {
    const x = values[rows[u]!]!;
    if (!Number.isFinite(x)) continue;
    if (Number.isNaN(first)) first = x;
    else if (x !== first) return true;
  }
  return false;
}

/** The term layout learnt from the training slabs. */
function learnTerms(data: RiskData, train: Int32Array, knotsCount: 3 | 4 | 5): Omit<ModelTerms, "coefficients"> {
  const numeric = data.numeric.map((v) => {
    const vals: number[] = [];
    for (let u = 0; u < train.length; u++) {
      const x = v.values[train[u]!]!;
      if (Number.isFinite(x)) vals.push(x);
    }
    const sorted = Float64Array.from(vals).sort();
    return { key: v.key, label: v.label, unit: v.unit, knots: splineKnots(sorted, knotsCount), median: sorted.length ? quantileSorted(sorted, 0.5) : 0 };
  });
  const categorical = data.categorical.map((c) => {
    const counts = new Map<number, number>();
    for (let u = 0; u < train.length; u++) {
      const code = c.codes[train[u]!]!;
      if (Number.isFinite(code) && code >= 0) counts.set(code, (counts.get(code) ?? 0) + 1);
    }
    const byCount = [...counts.entries()].sort((a, b) => b[1] - a[1] || a[0] - b[0]);
    const reference = byCount[0]?.[0] ?? 0;
    // Levels with at least 1 training slab besides the reference, in code order.
    const levels = byCount
      .slice(1)
      .map(([code]) => ({ code, name: c.name(code) }))
      .sort((a, b) => a.code - b.code);
    return { key: c.key, label: c.label, reference, referenceName: c.name(reference), levels };
  });
  const columns: string[] = [];
  for (const v of numeric) {
    columns.push(v.label);
    for (let j = 0; j < Math.max(0, v.knots.length - 2); j++) columns.push(`${v.label} (spline ${j + 1})`);
  }
  for (const c of categorical) for (const l of c.levels) columns.push(`${c.label}: ${l.name}`);
  return { numeric, categorical, columns };
}

/** Builds the model's columns for the rows (every slab of the data, indexed like the inputs). */
export function columnsOf(
  terms: Omit<ModelTerms, "coefficients">,
  numericValues: ArrayLike<number>[],
  categoricalCodes: ArrayLike<number>[],
  size: number,
): Float64Array[] {
  const cols: Float64Array[] = [];
  const buf: number[] = [];
  terms.numeric.forEach((v, k) => {
    const values = numericValues[k]!;
    const x = new Float64Array(size);
    const s = Array.from({ length: Math.max(0, v.knots.length - 2) }, () => new Float64Array(size));
    for (let i = 0; i < size; i++) {
      const raw = values[i]!;
      const val = Number.isFinite(raw) ? raw : v.median;
      x[i] = val;
      if (s.length) {
        splineTerms(val, v.knots, buf);
        for (let j = 0; j < s.length; j++) s[j]![i] = buf[j]!;
      }
    }
    cols.push(x, ...s);
  });
  terms.categorical.forEach((c, k) => {
    const codes = categoricalCodes[k]!;
    for (const l of c.levels) {
      const d = new Float64Array(size);
      for (let i = 0; i < size; i++) d[i] = codes[i] === l.code ? 1 : 0;
      cols.push(d);
    }
  });
  return cols;
}

function deviance(fit: PenalisedFit, cols: Float64Array[], outcome: ArrayLike<number>, rows: Int32Array): number | null {
  if (!fit.converged) return null;
  let d = 0;
  for (let u = 0; u < rows.length; u++) {
    const i = rows[u]!;
    let eta = fit.coefficients[0]!;
    for (let j = 0; j < cols.length; j++) eta += fit.coefficients[j + 1]! * cols[j]![i]!;
    const p = Math.min(1 - 1e-15, Math.max(1e-15, logistic(eta)));
    d += outcome[i] ? -2 * Math.log(p) : -2 * Math.log(1 - p);
  }
  return d / Math.max(1, rows.length);
}

/** Rows sorted by cast time (then by index, so equal times keep a fixed order). */
function byTime(data: RiskData): Int32Array {
  return Int32Array.from(data.rows).sort((a, b) => data.castAt[a]! - data.castAt[b]! || a - b);
}

export function trainRiskModel(data: RiskData, options: TrainOptions = {}): TrainedModel {
  const knots = options.knots ?? 4;
  const testShare = options.testShare ?? 0.25;
  const folds = options.folds ?? 3;
  const lambdas = options.lambdas ?? DEFAULT_LAMBDAS;
  const progress = options.progress ?? (() => undefined);
  const ordered = byTime(data);
  const cut = Math.floor(ordered.length * (1 - testShare));
  const train = ordered.subarray(0, cut);
  const test = ordered.subarray(cut);
  // A condition without spread in the training slabs (one value, or none recorded) carries nothing a
  // model could learn and would make the fit singular: it is left out, and the answer says so.
  const flat = data.numeric.filter((v) => !variesIn(v.values, train));
  if (flat.length) data = { ...data, numeric: data.numeric.filter((v) => !flat.includes(v)) };
  const outcome = Uint8Array.from({ length: data.outcome.length }, (_, i) => (data.outcome[i] ? 1 : 0));
  const size = outcome.length;

  // λ by rolling origin inside the training part: fold f trains on the first (f + 1)/(folds + 1) and
  // is scored on the next 1/(folds + 1).
  const path: { lambda: number; deviance: number | null }[] = [];
  // On a large history the penalty is chosen on every k-th training slab (still in time order): the
  // choice of λ needs far fewer slabs than the final fit, which uses them all.
  const thin = Math.max(1, Math.ceil(train.length / CV_MAX_SLABS));
  const cvRows = thin === 1 ? train : Int32Array.from({ length: Math.floor(train.length / thin) }, (_, u) => train[u * thin]!);
  const slice = Math.floor(cvRows.length / (folds + 1));
  const foldDeviance = new Map<number, number[]>();
  let step = 0;
  const steps = folds * lambdas.length + 1;
  for (let f = 0; f < folds; f++) {
    const fitRows = cvRows.subarray(0, slice * (f + 1));
    const scoreRows = cvRows.subarray(slice * (f + 1), slice * (f + 2));
    const layout = learnTerms(data, fitRows, knots);
    const cols = columnsOf(
      layout,
      data.numeric.map((v) => v.values),
      data.categorical.map((c) => c.codes),
      size,
    );
    // From the largest penalty down, each fit starting from the last.
    let start: number[] | undefined;
    for (const lambda of [...lambdas].sort((a, b) => b - a)) {
      const fit = penalisedLogistic(cols, outcome, Int32Array.from(fitRows), { lambda, start });
      if (fit.converged) start = fit.coefficients;
      const d = deviance(fit, cols, outcome, scoreRows);
      if (d !== null) foldDeviance.set(lambda, [...(foldDeviance.get(lambda) ?? []), d]);
      progress(++step / steps, `choosing the penalty: fold ${f + 1} of ${folds}`, { key: "fold", values: { fold: f + 1, folds } });
    }
  }
  for (const lambda of lambdas) {
    const ds = foldDeviance.get(lambda) ?? [];
    path.push({ lambda, deviance: ds.length === folds ? ds.reduce((s, v) => s + v, 0) / folds : null });
  }
  const usable = path.filter((p) => p.deviance !== null);
  const lambda = usable.length ? usable.reduce((a, b) => (b.deviance! < a.deviance! ? b : a)).lambda : Math.max(...lambdas);

  const layout = learnTerms(data, train, knots);
  const cols = columnsOf(
    layout,
    data.numeric.map((v) => v.values),
    data.categorical.map((c) => c.codes),
    size,
  );
  const fit = penalisedLogistic(cols, outcome, Int32Array.from(train), { lambda });
  progress(1, "validating on the newest slabs", { key: "validating" });
  const terms: ModelTerms = { ...layout, coefficients: fit.coefficients };

  // Test part: the model and the baseline on the same slabs.
  const risk = new Float64Array(test.length);
  const out = new Uint8Array(test.length);
  for (let u = 0; u < test.length; u++) {
    const i = test[u]!;
    let eta = fit.coefficients[0]!;
    for (let j = 0; j < cols.length; j++) eta += fit.coefficients[j + 1]! * cols[j]![i]!;
    risk[u] = logistic(eta);
    out[u] = outcome[i]!;
  }
  const famRate = new Map<number, [number, number]>();
  let trainAffected = 0;
  for (let u = 0; u < train.length; u++) {
    const i = train[u]!;
    const r = famRate.get(data.family[i]!) ?? [0, 0];
    r[0] += outcome[i]!;
    r[1]++;
    famRate.set(data.family[i]!, r);
    trainAffected += outcome[i]!;
  }
  const overall = trainAffected / Math.max(1, train.length);
  const baseline = Float64Array.from(test, (i) => {
    const r = famRate.get(data.family[i]!);
    return r && r[1] > 0 ? r[0] / r[1] : overall;
  });
  const scored = { risk, outcome: out };
  const auc = fit.converged ? aucDeLong(scored) : null;
  const base = aucDeLong({ risk: baseline, outcome: out });
  const cal = fit.converged ? calibration(scored) : null;
  // The words, said in the current language: the AUC's and calibration's own words are asked for
  // again (a pass over the test slabs), so each language gets them whole. English is the one stored
  // in `method` and `notes`; the others ride in `validation.words`.
  const wordsNow = (): ModelWords => {
    const a = fit.converged ? aucDeLong(scored) : null;
    const c = fit.converged ? calibration(scored) : null;
    const notes = flat.map((v) => say("riskModel.leftOut", { name: named(v.label) }));
    if (!fit.converged) notes.push(say("riskModel.notFitted", { why: fit.method.split(": not fitted — ")[1] ?? say("riskModel.noConvergence") }));
    if (a?.reason) notes.push(say("riskModel.auc", { why: a.reason }));
    if (c?.reason) notes.push(say("riskModel.calibration", { why: c.reason }));
    const method = say(thin > 1 ? "riskModel.methodThin" : "riskModel.method", {
      lambda: num(lambda),
      folds,
      thin,
      knots,
      share: Math.round(testShare * 100),
      auc: a?.method ?? say("riskModel.aucNone"),
      cal: c?.method ?? say("riskModel.calNone"),
    });
    return { method, notes };
  };
  const { method, notes } = speakingIn("en", wordsNow);
  const words = Object.fromEntries(LANGUAGES.filter((l) => l !== "en").map((l) => [l, speakingIn(l, wordsNow)])) as Partial<Record<Language, ModelWords>>;
  const testAffected = out.reduce((s, v) => s + v, 0);
  const validation: Validation = {
    auc: auc?.auc ?? null,
    aucCiLower: auc?.lower ?? null,
    aucCiUpper: auc?.upper ?? null,
    brier: fit.converged ? brierScore(scored) : null,
    calibrationIntercept: cal?.intercept ?? null,
    calibrationSlope: cal?.slope ?? null,
    captureTop10: fit.converged ? captureAtTop(scored, 0.1) : null,
    captureTop20: fit.converged ? captureAtTop(scored, 0.2) : null,
    baselineAuc: base.auc,
    baselineBrier: brierScore({ risk: baseline, outcome: out }),
    testSlabs: test.length,
    testAffected,
    trainSlabs: train.length,
    trainAffected,
    reliability: fit.converged ? reliability(scored) : [],
    splitAt: test.length ? data.castAt[test[0]!]! : null,
    notes,
    words,
  };
  // Bands from the test slabs' risks: "high" from the 90th percentile up, "raised" from the 70th.
  const sortedRisk = Float64Array.from(risk).sort();
  const bands = fit.converged && sortedRisk.length >= 10 ? { high: quantileSorted(sortedRisk, 0.9), raised: quantileSorted(sortedRisk, 0.7) } : null;
  const beatsBaseline = validation.aucCiLower !== null && validation.baselineAuc !== null && validation.aucCiLower > validation.baselineAuc;
  const converged = fit.converged && fit.coefficients.every(Number.isFinite);
  return { terms, lambda, effectiveDf: fit.effectiveDf, validation, path, beatsBaseline: converged && beatsBaseline, method, bands, converged };
}

export interface Reason {
  variable: string;
  label: string;
  value: number | string | null;
  unit: string | null;
  /** Change in log-odds against the typical slab. */
  contribution: number;
}

/** The spline terms of the typical slab (each numeric condition at its training median), once per model. */
const typicalOf = new WeakMap<ModelTerms, number[][]>();
function typicalSplines(terms: ModelTerms): number[][] {
  let t = typicalOf.get(terms);
  if (!t) typicalOf.set(terms, (t = terms.numeric.map((v) => splineTerms(v.median, v.knots, []))));
  return t;
}

/**
 * A slab's risk, writing each condition's contribution against the typical slab (numeric at the
 * training median, category at its reference; change in log-odds) into `contributions` — numeric
 * conditions first, then categories, in the terms' order. No objects made: scoring an import's
 * slabs runs inside its answer.
 */
export function scoreTerms(
  terms: ModelTerms,
  numeric: ArrayLike<number | null>,
  categorical: ArrayLike<number | null>,
  contributions: Float64Array,
  buf: number[] = [],
): number {
  const b = terms.coefficients;
  const typical = typicalSplines(terms);
  let eta = b[0]!;
  let c = 1;
  const nn = terms.numeric.length;
  for (let k = 0; k < nn; k++) {
    const v = terms.numeric[k]!;
    const raw = numeric[k];
    const x = raw !== null && raw !== undefined && Number.isFinite(raw) ? raw : v.median;
    const s = splineTerms(x, v.knots, buf);
    const s0 = typical[k]!;
    let contribution = b[c]! * (x - v.median);
    eta += b[c]! * x;
    c++;
    for (let j = 0; j < s.length; j++) {
      contribution += b[c]! * (s[j]! - s0[j]!);
      eta += b[c]! * s[j]!;
      c++;
    }
    contributions[k] = contribution;
  }
  for (let k = 0; k < terms.categorical.length; k++) {
    const cat = terms.categorical[k]!;
    const code = categorical[k];
    let contribution = 0;
    for (const l of cat.levels) {
      if (code === l.code) {
        contribution += b[c]!;
        eta += b[c]!;
      }
      c++;
    }
    contributions[nn + k] = contribution;
  }
  return logistic(eta);
}

/** The name of a slab's category code under the terms (null when unknown). */
export function categoryName(cat: ModelTerms["categorical"][number], code: number | null | undefined): string | null {
  return code === null || code === undefined ? null : code === cat.reference ? cat.referenceName : (cat.levels.find((l) => l.code === code)?.name ?? null);
}

/**
 * A slab's risk and the contributions of its conditions against the typical slab (numeric at the
 * training median, category at its reference), largest first.
 */
export function explain(terms: ModelTerms, numeric: (number | null)[], categorical: (number | null)[]): { risk: number; reasons: Reason[] } {
  const nn = terms.numeric.length;
  const contributions = new Float64Array(nn + terms.categorical.length);
  const risk = scoreTerms(terms, numeric, categorical, contributions);
  const reasons: Reason[] = [
    ...terms.numeric.map((v, k) => ({ variable: v.key, label: v.label, value: numeric[k] ?? null, unit: v.unit, contribution: contributions[k]! })),
    ...terms.categorical.map((cat, k) => ({
      variable: cat.key,
      label: cat.label,
      value: categoryName(cat, categorical[k]),
      unit: null,
      contribution: contributions[nn + k]!,
    })),
  ];
  // Contributions sum to eta minus the typical slab's eta; the order is by what raises the risk most.
  reasons.sort((a, z) => z.contribution - a.contribution);
  return { risk, reasons };
}
