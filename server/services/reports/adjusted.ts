/**
 * The adjusted model: the conditions an engineer picks, each with its crude odds ratio (the
 * condition alone) and its odds ratio adjusted for every other term (grade family, strand …), per a
 * readable step, with heat-clustered standard errors by default. Also the model terms the other
 * reports use for their adjusted answers (rate against a variable, screening).
 *
 * Values are grouped to one decimal more than the screens show (as in the rate-against-variable
 * report); slabs with equal values of every term (a heat's slabs share its heat-level values) fit
 * as one binomial row.
 */
import type { z } from "zod";
import { effectiveTerms, type Adjusted, type adjustedQuerySchema } from "@shared/api/reports";
import { CATEGORICAL_KEYS, CATEGORICAL_LABELS, VARIABLES, type CategoricalKey } from "@shared/variables";
import type { Db } from "../../db/client";
import {
  changeInEstimate,
  logisticRegressionColumns,
  oddsRatioForStep,
  type MultiLogisticFit,
  type SlabColumns,
  type TermColumn,
  type TermEstimate,
} from "../../stats/logistic-multi";
import { scratch } from "../../stats/scratch";
import { eachPiece } from "../report-cache";
import { inWords, named, num, say } from "../../lib/words";
import { buildScope, finite, scan, SMALL_AFFECTED, type Scanned } from "./scope";

export type SeMethod = "cluster" | "model";

/** The buckets of the position in the sequence, in the order they are shown (as screening shows them). */
export const SEQUENCE_LEVELS = ["1st heat", "2nd–3rd heat", "4th heat on", "unknown"] as const;
const sequenceCode = (pos: number) => (pos <= 0 ? 3 : pos === 1 ? 0 : pos <= 3 ? 1 : 2);
/** The bucket of a position in the sequence, in the words the screens use. */
export const seqBucket = (pos: number) => SEQUENCE_LEVELS[sequenceCode(pos)]!;

export interface ModelTerm {
  key: string;
  label: string;
  unit: string | null;
  kind: "numeric" | "categorical";
  /** The catalogue's readable step (numeric terms). */
  step: number | null;
  column: TermColumn;
  /** Numeric terms: the values are multiples of 1/scale. */
  scale?: number;
  /** Each slab's place on the term's grid (see gridOf), computed once. */
  grid?: Grid | null;
  /**
   * The values and grid keys are written only at the slabs a fit on the caller's grouping reads (a
   * screening's pass): elsewhere they are another condition's. Fitted only on that grouping
   * (fitTerms refuses it without one, completeRows refuses it).
   */
  sparse?: boolean;
}

/**
 * A term's values as integers on a grid: keys[i] − offset runs 0 … width − 1 (grid steps, or level
 * indexes). Read only at slabs with a value (a screening's own term: only at the slabs its fits read,
 * see ModelTerm.sparse).
 */
export interface Grid {
  keys: Int32Array;
  offset: number;
  width: number;
}

/** The widest joint grid grouped by a lookup; wider ones are hashed (or not grouped). */
export const MAX_PATTERNS = 2_000_000;

/**
 * A term's grid over the scope's slabs, worked out once per term (null where the fit must hash).
 * `shared`: its keys on shared memory, for a screening's helper threads (they take it as theirs):
 * a scratch slot of that name (stats/scratch.ts), valid until the next call with the same name.
 * Only the keys of the slabs in scope are written.
 */
export function gridOf(s: Scanned, t: ModelTerm, shared?: string): Grid | null {
  if (t.grid !== undefined) return t.grid;
  const keys = shared ? scratch(shared, Int32Array, s.facts.size, undefined, true) : new Int32Array(s.facts.size);
  if (t.kind === "numeric") {
    const values = (t.column as { values: ArrayLike<number> }).values;
    const scale = t.scale!;
    let lo = Infinity;
    let hi = -Infinity;
    for (let u = 0; u < s.rows.length; u++) {
      const i = s.rows[u]!;
      const v = values[i]!;
      if (v !== v) continue;
      const k = Math.round(v * scale);
      keys[i] = k;
      if (k < lo) lo = k;
      if (k > hi) hi = k;
    }
    return (t.grid = gridFromKeys(keys, lo, hi));
  }
  const codes = (t.column as { codes: ArrayLike<number> }).codes;
  const index = new Map<number, number>();
  let last = NaN;
  let lastKey = 0;
  for (let u = 0; u < s.rows.length; u++) {
    const i = s.rows[u]!;
    const c = codes[i]!;
    if (c !== last) {
      last = c;
      let k = index.get(c);
      if (k === undefined) index.set(c, (k = index.size));
      lastKey = k;
    }
    keys[i] = lastKey;
  }
  return (t.grid = { keys, offset: 0, width: index.size });
}

/**
 * Pattern ids for the terms' joint grid (equal ids: equal values of every term), so the fit groups
 * slabs by a lookup instead of hashing them; undefined when the grid is too large (several
 * continuous terms), where the fit hashes.
 */
function patternIds(s: Scanned, terms: ModelTerm[], rows: Int32Array): { ids: Int32Array; count: number; offset: number } | undefined {
  let width = 1;
  const grids: Grid[] = [];
  for (const t of terms) {
    const g = gridOf(s, t);
    if (!g) return undefined;
    width *= Math.max(1, g.width);
    if (width > MAX_PATTERNS) return undefined;
    grids.push(g);
  }
  // One term: its grid keys are the ids, less the grid's offset (the fit subtracts it as it reads them).
  if (grids.length === 1) return { ids: grids[0]!.keys, count: width, offset: grids[0]!.offset };
  // Read by the fit only (at these rows), which ends before the next call: a reused array (scratch.ts).
  const ids = scratch("patternIds", Int32Array, s.facts.size);
  if (grids.length === 2) {
    // The common case (a condition and one adjustment), without the inner loop.
    const [a, b] = grids as [Grid, Grid];
    const wb = b.width;
    for (let u = 0; u < rows.length; u++) {
      const i = rows[u]!;
      ids[i] = (a.keys[i]! - a.offset) * wb + (b.keys[i]! - b.offset);
    }
  } else {
    for (let u = 0; u < rows.length; u++) {
      const i = rows[u]!;
      let id = 0;
      for (const g of grids) id = id * g.width + (g.keys[i]! - g.offset);
      ids[i] = id;
    }
  }
  return { ids, count: width, offset: 0 };
}

const isCategorical = (key: string): key is CategoricalKey => (CATEGORICAL_KEYS as readonly string[]).includes(key);

function namesOf(db: Db, sql: string): Map<number, string> {
  return new Map((db.$client.prepare(sql).raw().all() as [number, string][]).map(([id, name]) => [id, name]));
}

/** The slabs' values of a numeric variable, grouped to one decimal more than shown (NaN where unknown). */
export function groupedValues(s: Scanned, key: string): Float64Array {
  const spec = VARIABLES.find((v) => v.key === key)!;
  const scale = 10 ** (spec.digits + 1);
  const out = new Float64Array(s.facts.size);
  // The slabs in scope come in order: each piece of the column is walked once.
  let u = 0;
  eachPiece(s.facts, key, (raw, from, to) => {
    for (; u < s.rows.length; u++) {
      const i = s.rows[u]!;
      if (i >= to) break;
      const v = raw[i - from]!;
      out[i] = v === v ? Math.round(v * scale) / scale : NaN;
    }
  });
  return out;
}

/**
 * A categorical key's codes over the facts and its labels (in the screens' words: strand "CC2
 * strand 1", the sequence buckets …); the reference is the level with the most slabs in `rows`.
 */
export function categoricalColumn(db: Db, s: Scanned, key: CategoricalKey, rows: ArrayLike<number> = s.rows): TermColumn & { kind: "categorical" } {
  const f = s.facts;
  let codes: ArrayLike<number>;
  let label: (code: number) => string;
  let levels: string[] | undefined;
  const byId = (m: Map<number, string>) => (code: number) => m.get(code) ?? "unknown";
  switch (key) {
    case "grade_family":
      codes = f.familyId;
      label = byId(namesOf(db, "select id, code from grade_families"));
      break;
    case "grade":
      codes = f.gradeId;
      label = byId(namesOf(db, "select id, code from grades"));
      break;
    case "strand":
      codes = f.strandId;
      label = byId(namesOf(db, "select s.id, c.code || ' strand ' || s.strand_no from strands s join casters c on c.id = s.caster_id"));
      break;
    case "caster":
      codes = f.casterId;
      label = byId(namesOf(db, "select id, code from casters"));
      break;
    case "transition":
      codes = f.transition;
      label = (code) => (code ? "transition" : "not transition");
      levels = ["not transition", "transition"];
      break;
    case "sequence_position": {
      const c = new Int8Array(f.size);
      for (let u = 0; u < s.rows.length; u++) c[s.rows[u]!] = sequenceCode(f.sequencePosition[s.rows[u]!]!);
      codes = c;
      label = (code) => SEQUENCE_LEVELS[code]!;
      levels = [...SEQUENCE_LEVELS];
      break;
    }
  }
  // The most common level is the reference (ties: the first in the shown order).
  const counts = new Map<number, number>();
  let last = NaN;
  let run = 0;
  const flush = () => {
    if (run > 0) counts.set(last, (counts.get(last) ?? 0) + run);
  };
  for (let u = 0; u < rows.length; u++) {
    const code = codes[rows[u]!]!;
    if (code === last) run++;
    else {
      flush();
      last = code;
      run = 1;
    }
  }
  flush();
  const order = (a: string, b: string) => (levels ? levels.indexOf(a) - levels.indexOf(b) : a.localeCompare(b, "en", { numeric: true }));
  const reference = [...counts.entries()].map(([code, n]) => ({ l: label(code), n })).sort((a, b) => b.n - a.n || order(a.l, b.l))[0]?.l;
  return { name: CATEGORICAL_LABELS[key], kind: "categorical", codes, label, levels, reference };
}

/** A numeric variable's model term over grouped values (groupedValues), with its grid when the caller has it. */
export function numericTerm(key: string, values: Float64Array, grid?: Grid | null): ModelTerm {
  const spec = VARIABLES.find((v) => v.key === key)!;
  return {
    key,
    label: spec.label,
    unit: spec.unit,
    kind: "numeric",
    step: spec.step,
    scale: 10 ** (spec.digits + 1),
    column: { name: spec.label, kind: "numeric", values },
    ...(grid !== undefined ? { grid } : {}),
  };
}

/** The grid of grid keys lo … hi (as gridOf makes it), or null where the fit must hash instead. */
export function gridFromKeys(keys: Int32Array, lo: number, hi: number): Grid | null {
  const width = hi >= lo ? hi - lo + 1 : 0;
  return width > MAX_PATTERNS || !(Math.abs(lo) < 2 ** 31 && Math.abs(hi) < 2 ** 31) ? null : { keys, offset: lo, width };
}

/** The model terms for keys (numeric variables or categorical keys), named by their labels. */
export function modelTerms(db: Db, s: Scanned, keys: string[]): ModelTerm[] {
  return keys.map((key) => {
    if (isCategorical(key)) return { key, label: CATEGORICAL_LABELS[key], unit: null, kind: "categorical", step: null, column: categoricalColumn(db, s, key) };
    return numericTerm(key, groupedValues(s, key));
  });
}

/** The slabs in scope with a value for every numeric term, and how many lack each. */
export function completeRows(s: Scanned, terms: ModelTerm[]) {
  if (terms.some((t) => t.sparse)) throw new Error("completeRows: a term written only at the slabs its grouping's fits read");
  const numeric = terms.filter((t) => t.kind === "numeric").map((t) => ({ t, values: (t.column as { values: ArrayLike<number> }).values, missing: 0 }));
  const out = new Int32Array(s.rows.length);
  let n = 0;
  for (let u = 0; u < s.rows.length; u++) {
    const i = s.rows[u]!;
    let ok = true;
    for (const c of numeric) {
      // As the fit sees it: a value that is not a finite number is no value.
      if (!Number.isFinite(c.values[i])) {
        c.missing++;
        ok = false;
      }
    }
    if (ok) out[n++] = i;
  }
  return { rows: out.subarray(0, n), missing: numeric.filter((c) => c.missing > 0).map((c) => ({ key: c.t.key, label: c.t.label, slabs: c.missing })) };
}

/** Heat numberings this thread made (a screening's helpers take the caller's and report any they made themselves: tests). */
let numberings = 0;
export const heatNumberingsSoFar = () => numberings;

/** The last scope numbered (reports run one at a time in their thread, each from start to end). */
let numbered: { s: Scanned; ids: Int32Array; count: number } | null = null;

/** Lets go of the last scope numbered (and so of its facts: a screening's helper after its share). */
export function forgetHeatNumbering() {
  numbered = null;
}

/**
 * A screening helper takes the caller's numbering of the scope's heats (the same numbers it would
 * make: heatNumbering is a function of the scope) instead of numbering them again: one pass over
 * the slabs and 22 MB fewer per helper at five million slabs.
 */
export function adoptHeatNumbering(s: Scanned, heats: { ids: Int32Array; count: number }) {
  numbered = { s, ids: heats.ids, count: heats.count };
}

/**
 * The scope's heats numbered once per report (in the order they first appear in its rows), for
 * the clusters of every fit the report makes on those rows, instead of once per fit. The arrays
 * are reused (scratch.ts): only the scope's rows are written, and only they are read. `shared`:
 * the numbers on shared memory, for a screening's helper threads (adoptHeatNumbering).
 */
export function heatNumbering(s: Scanned, shared = false): { ids: Int32Array; count: number } {
  if (numbered?.s === s && (!shared || numbered.ids.buffer instanceof SharedArrayBuffer)) return numbered;
  numberings++;
  const heat = s.facts.heatId;
  let max = 0;
  for (let u = 0; u < s.rows.length; u++) max = Math.max(max, heat[s.rows[u]!]!);
  const lookup = scratch("heatNumbering.lookup", Int32Array, max + 1, -1);
  const ids = scratch("heatNumbering.ids", Int32Array, s.facts.size, undefined, shared);
  let count = 0;
  for (let u = 0; u < s.rows.length; u++) {
    const i = s.rows[u]!;
    const h = heat[i]!;
    let id = lookup[h]!;
    if (id < 0) lookup[h] = id = count++;
    ids[i] = id;
  }
  numbered = { s, ids, count };
  return numbered;
}

/**
 * Fits the terms on the rows with the facts' heats as clusters. `complete`: the rows come from
 * completeRows for these terms (or a subset of them), so the fit uses them without checking each.
 */
export function fitTerms(
  s: Scanned,
  terms: ModelTerm[],
  rows: Int32Array,
  se: SeMethod,
  likelihoodRatio = false,
  complete = false,
  grouped?: SlabColumns["grouped"],
): MultiLogisticFit {
  if (!grouped && terms.some((t) => t.sparse))
    throw new Error("fitTerms: a term written only at the slabs its grouping's fits read, fitted without that grouping");
  const pattern = grouped ? undefined : patternIds(s, terms, rows);
  // Refitting the model without each variable (the LR test) only where it is valid: with model-based SEs.
  return logisticRegressionColumns(
    {
      terms: terms.map((t) => t.column),
      affected: s.affected,
      cluster: s.facts.heatId,
      clusterIds: se === "cluster" ? heatNumbering(s) : undefined,
      rows,
      pattern: pattern?.ids,
      patternCount: pattern?.count,
      patternOffset: pattern?.offset,
      rowsComplete: complete,
      grouped,
    },
    { se, likelihoodRatio: likelihoodRatio && se === "model" },
  );
}

/** Distinct heats among the rows. */
export function heatsOf(s: Scanned, rows: ArrayLike<number>): number {
  const heat = s.facts.heatId;
  let max = 0;
  for (let u = 0; u < rows.length; u++) max = Math.max(max, heat[rows[u]!]!);
  const seen = new Uint8Array(max + 1);
  let n = 0;
  for (let u = 0; u < rows.length; u++) {
    const h = heat[rows[u]!]!;
    if (!seen[h]) {
      seen[h] = 1;
      n++;
    }
  }
  return n;
}

export const fmt = (x: number | null) =>
  x === null ? "—" : Math.abs(x) >= 1000 || Math.abs(x) < 0.001 ? x.toPrecision(3) : Number(x.toPrecision(3)).toString();
/** A number said in the current language (fmt's digits; a decimal comma in German). */
export const fmtSaid = (x: number | null) => num(fmt(x));
export const perWordsOf = (step: number, unit: string | null) =>
  unit && unit !== "–" ? say("words.per", { step: num(step), unit }) : say("words.perBare", { step: num(step) });
const lower = inWords;
const listWords = (xs: string[]) => (xs.length <= 1 ? xs.join("") : say("words.list", { first: xs.slice(0, -1).join(", "), last: xs[xs.length - 1]! }));

/** The other terms a term was adjusted for, in words ("the grade family and strand"). */
export function adjustedForWords(labels: string[]): string {
  const words = labels.map((l) => lower(l));
  if (words.length > 3) return say("words.others", { first: words.slice(0, 3).join(", ") });
  return say("words.the", { list: listWords(words) });
}

/** An odds ratio this far from 1 per the readable step is not a finding: (near) separation or far too few slabs. */
const READABLE_LIMIT = Math.log(1e4);

/**
 * Crude against adjusted in words when they differ by more than a tenth (odds ratios per the
 * readable step). The share of the crude log odds ratio that remains after adjustment decides the
 * words: under half "most goes with", a reversal, or a stronger association once adjusted.
 */
export function changeWords(
  what: string,
  crude: { coef: number | null; se: number | null },
  adjusted: { coef: number | null; se: number | null },
  step: number,
  stepWords: string,
  others: string,
) {
  const c = oddsRatioForStep(crude.coef, crude.se, step).oddsRatio;
  const a = oddsRatioForStep(adjusted.coef, adjusted.se, step).oddsRatio;
  const cie = changeInEstimate(c, a);
  let sentence: string | null = null;
  if (cie.differs && c !== null && a !== null) {
    const figures = stepWords
      ? say("change.figuresPer", { per: stepWords, crude: fmtSaid(c), adjusted: fmtSaid(a) })
      : say("change.figures", { crude: fmtSaid(c), adjusted: fmtSaid(a) });
    const kept = Math.log(a) / Math.log(c);
    const words = { what, others, figures };
    if (!Number.isFinite(kept)) sentence = say("change.tenth", words);
    else if (kept < 0) sentence = say("change.reverses", words);
    else if (kept < 0.5) sentence = say("change.most", words);
    else if (kept < 1) sentence = say("change.part", words);
    else sentence = say("change.stronger", words);
  }
  return { relativeChange: cie.relativeChange, differs: cie.differs, sentence };
}

/** Which GVIF^(1/(2·df)) band a variable falls in: √5 and √10, the usual VIF thresholds 5 and 10 on a scale comparable across df. */
export const collinearityOf = (gvifPerDf: number | null) =>
  gvifPerDf === null ? null : gvifPerDf > Math.sqrt(10) ? "serious" : gvifPerDf > Math.sqrt(5) ? "notable" : "low";

/** How collinearity is judged, in the reader's language (methods:adjusted.collinearityMethod). */
export const collinearityMethod = () => say("adjusted.collinearityMethod");

/** How values are grouped for the fits, in the reader's language (methods:grouping). */
export const groupingMethod = () => say("grouping");

export function seWords(se: SeMethod) {
  return say(se === "cluster" ? "se.cluster" : "se.model");
}

type Query = z.output<typeof adjustedQuerySchema>;
type Term = Adjusted["terms"][number];
type Estimate = Term["adjusted"];

const none: Estimate = { coef: null, se: null, oddsRatio: null, ciLower: null, ciUpper: null, p: null };

function estimateOf(t: TermEstimate | undefined, step: number, readableStep: number): { e: Estimate; reason: string | null } {
  if (!t || t.coef === null || t.se === null) return { e: none, reason: null };
  if (!(Math.abs(t.coef * readableStep) <= READABLE_LIMIT)) {
    return { e: none, reason: say("adjusted.beyondReadable") };
  }
  const or = oddsRatioForStep(t.coef, t.se, step);
  return {
    e: {
      coef: t.coef,
      se: t.se,
      oddsRatio: finite(or.oddsRatio ?? NaN),
      ciLower: finite(or.ciLower ?? NaN),
      ciUpper: finite(or.ciUpper ?? NaN),
      p: finite(t.p ?? NaN),
    },
    reason: null,
  };
}

/**
 * A numeric term's slope as the rate-against-variable report gives it: per one unit, the odds ratio
 * per unit and per the readable step; null (with the reason) beyond the readable limit.
 */
export function slopeOf(t: TermEstimate | undefined, step: number) {
  const empty = {
    slope: null,
    se: null,
    oddsRatio: null,
    oddsRatioCiLower: null,
    oddsRatioCiUpper: null,
    p: null,
    perStep: { step, oddsRatio: null, ciLower: null, ciUpper: null },
  };
  if (!t || t.coef === null || t.se === null) return { fit: empty, reason: null as string | null };
  const { e, reason } = estimateOf(t, 1, step);
  if (e.coef === null) return { fit: empty, reason };
  const per = oddsRatioForStep(t.coef, t.se, step);
  return {
    fit: {
      slope: e.coef,
      se: e.se,
      oddsRatio: e.oddsRatio,
      oddsRatioCiLower: e.ciLower,
      oddsRatioCiUpper: e.ciUpper,
      p: e.p,
      perStep: { step, oddsRatio: finite(per.oddsRatio ?? NaN), ciLower: finite(per.ciLower ?? NaN), ciUpper: finite(per.ciUpper ?? NaN) },
    },
    reason: null as string | null,
  };
}

export const lowerLabel = (label: string) => lower(label);

export function adjustedModel(db: Db, q: Query): Adjusted {
  const s = scan(db, buildScope(db, q));
  const adjustFor = effectiveTerms(q.adjustFor, q.variables);
  const keys = [...q.variables, ...adjustFor];
  const roleOf = (key: string) => (q.variables.includes(key) ? ("examined" as const) : ("adjustment" as const));
  const terms = modelTerms(db, s, keys);
  const { rows, missing } = completeRows(s, terms);
  const fit = fitTerms(s, terms, rows, q.se, true, true);
  const crude = new Map(terms.map((t) => [t.key, fitTerms(s, [t], rows, q.se, false, true)]));
  const heats = fit.clusters ?? heatsOf(s, rows);
  const notes: string[] = [];

  const outTerms: Term[] = [];
  for (const t of terms) {
    const role = roleOf(t.key);
    const others = adjustedForWords(terms.filter((o) => o !== t).map((o) => o.label));
    const test = fit.variables.find((v) => v.variable === t.label)!;
    const gvif = test.gvif;
    const base = { variable: t.key, label: t.label, unit: t.kind === "numeric" ? t.unit : null, kind: t.kind, role, vif: finite(gvif ?? NaN) };
    const rowsOf = fit.terms.filter((x) => x.variable === t.label);
    if (rowsOf.length === 0) {
      // No spread, or a single level: nothing to estimate.
      const why = test.reason ?? fit.reason ?? say("adjusted.notEstimable");
      outTerms.push({
        ...base,
        level: null,
        reference: null,
        step: t.step,
        perWords: t.step !== null ? perWordsOf(q.per === "step" ? t.step : 1, t.unit) : "",
        crude: none,
        adjusted: none,
        changeInEstimate: { relativeChange: null, differs: null, sentence: null },
        reason: why,
      });
      continue;
    }
    const crudeFit = crude.get(t.key)!;
    for (const r of rowsOf) {
      const step = t.kind === "numeric" ? (q.per === "step" ? t.step! : 1) : 1;
      const readable = t.kind === "numeric" ? t.step! : 1;
      const c = crudeFit.terms.find((x) => x.column === r.column);
      const ce = estimateOf(c, step, readable);
      const ae = estimateOf(r, step, readable);
      const perWords = t.kind === "numeric" ? perWordsOf(step, t.unit) : say("words.levelAgainst", { level: named(r.level!), reference: named(r.reference!) });
      const what =
        t.kind === "numeric" ? lower(t.label) : say("words.levelOf", { name: lower(t.label), level: named(r.level!), reference: named(r.reference!) });
      const change = changeWords(what, ce.e, ae.e, readable, t.kind === "numeric" ? perWordsOf(readable, t.unit) : "", others);
      let reason: string | null = null;
      if (ae.e.coef === null) reason = ae.reason ?? fit.separation?.description ?? fit.reason;
      else if (ce.e.coef === null) reason = say("adjusted.crudeReason", { why: String(ce.reason ?? crudeFit.separation?.description ?? crudeFit.reason) });
      outTerms.push({
        ...base,
        level: r.level,
        reference: r.reference,
        step: t.kind === "numeric" ? step : null,
        perWords,
        crude: ce.e,
        adjusted: ae.e,
        changeInEstimate: change,
        reason,
      });
    }
  }

  const variables: Adjusted["variables"] = terms.map((t) => {
    const v = fit.variables.find((x) => x.variable === t.label)!;
    const lr = q.se === "model";
    return {
      variable: t.key,
      label: t.label,
      kind: t.kind,
      role: roleOf(t.key),
      df: v.df,
      test: lr ? ("likelihood ratio" as const) : ("Wald, heat-clustered" as const),
      lrChi2: finite(v.lrChi2 ?? NaN),
      waldChi2: finite(v.waldChi2 ?? NaN),
      p: finite((lr ? v.lrP : v.waldP) ?? NaN),
      gvif: finite(v.gvif ?? NaN),
      gvifPerDf: finite(v.gvifPerDf ?? NaN),
      collinearity: collinearityOf(v.gvifPerDf),
      collinearityNote: null as string | null,
      ...(v.levels ? { levels: v.levels } : {}),
      reason: v.reason,
    };
  });

  // Notes, in the order an engineer reads them.
  if (s.rows.length === 0) notes.push(say("adjusted.noSlab"));
  for (const m of missing) notes.push(say("adjusted.leftOut", { count: m.slabs, name: lower(m.label) }));
  if (fit.reason) notes.push(fit.separation ? say("adjusted.separation", { why: fit.separation.description }) : say("adjusted.notFitted", { why: fit.reason }));
  for (const v of variables) {
    if (v.reason && v.df === 0) notes.push(say("adjusted.variableReason", { name: named(v.label), why: v.reason }));
    if (v.collinearity === "notable" || v.collinearity === "serious") {
      v.collinearityNote = say(v.collinearity === "serious" ? "adjusted.gvifSerious" : "adjusted.gvifNotable", {
        name: named(v.label),
        value: fmtSaid(v.gvifPerDf),
      });
      notes.push(v.collinearityNote);
    }
  }
  if (fit.affected > 0 && fit.affected < SMALL_AFFECTED) notes.push(say("adjusted.fewAffected", { count: fit.affected }));
  // The fit's own notes, but for its slabs-left-out note (said above per term).
  const fitLeftOut = fit.slabsMissing > 0 ? say("fit.missing", { count: fit.slabsMissing }) : null;
  for (const n of fit.notes) if (n !== fitLeftOut) notes.push(n);
  for (const t of outTerms) if (t.changeInEstimate.sentence && t.role === "examined") notes.push(t.changeInEstimate.sentence);
  notes.push(say("adjusted.notCause"));

  const examined = terms.filter((t) => roleOf(t.key) === "examined");
  const adjustment = terms.filter((t) => roleOf(t.key) === "adjustment");
  const ref = (t: ModelTerm) => ({ key: t.key, label: t.label, unit: t.kind === "numeric" ? t.unit : null, kind: t.kind });
  return {
    slabs: fit.slabs,
    affected: fit.affected,
    heats,
    slabsInFilters: s.rows.length,
    slabsLeftOut: s.rows.length - rows.length,
    seMethod: q.se,
    per: q.per,
    examined: examined.map(ref),
    adjustFor: adjustment.map(ref),
    terms: outTerms,
    variables,
    model: {
      converged: fit.converged,
      iterations: fit.iterations,
      parameters: fit.terms.length + 1,
      deviance: finite(fit.deviance ?? NaN),
      nullDeviance: finite(fit.nullDeviance ?? NaN),
      aic: finite(fit.aic ?? NaN),
    },
    separation: fit.separation,
    reason: fit.reason,
    methods: {
      adjusted: say(`adjusted.method.adjusted_${q.per === "step" ? "step" : "unit"}`, { fit: fit.methodOnEveryTerm }),
      crude: say(`adjusted.method.crude_${q.se === "cluster" ? "cluster" : "model"}`),
      tests: say(`adjusted.method.tests_${q.se === "model" ? "model" : "cluster"}`),
      changeInEstimate: say("adjusted.method.changeInEstimate"),
      collinearity: collinearityMethod(),
      grouping: groupingMethod(),
    },
    notes,
  };
}
